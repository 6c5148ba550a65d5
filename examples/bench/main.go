// Command bench measures the cost of each stage of the adaptive loop in a
// unit that does not depend on the machine: the time of one sparse
// matrix-vector product (SpMV) with the assembled P1 stiffness matrix of
// the same mesh, measured in the same run. SpMV is bound by memory
// bandwidth, so the ratios say how close a stage is to the hardware limit.
//
// For each size n it runs the adaptive loop for the L-shape problem (P1,
// residual estimator, Dörfler θ = 0.5, solves stopped at a tenth of the
// previous estimate) from the coarse mesh until it has solved on a mesh
// with at least n DOFs, and on that mesh, graded towards the re-entrant
// corner, times each stage as the best of several repetitions:
//
//	spmv-p1       one product with the P1 stiffness matrix (the unit)
//	loop          the whole adaptive loop that made the mesh, from the coarse mesh
//	last-step     its last step: solve, estimate, mark, refine
//	peak-rss      the process's peak resident memory after the loop (bytes per triangle)
//	peak-go       the most memory the Go runtime held during the loop (bytes per triangle)
//	loop-p2       the same loop with P2 elements until at least n P2 DOFs (unit: its P2 SpMV)
//	assemble-p1   P1 assembly: sparsity pattern and values
//	spmv-p2       one product with the P2 stiffness matrix (unit of assemble-p2)
//	assemble-p2   P2 assembly
//	residual-p1   the residual estimator
//	average-p1    the averaging recovery estimator
//	equil-p1      the equilibrated-flux estimator (guaranteed bound)
//	flux-p1       the interface-robust flux recovery estimator
//	dorfler       Dörfler marking, θ = 0.5, of the residual indicators
//	refine        newest-vertex bisection of that marking, with the new topology
//	solve-p1      solver setup and a solve from zero to relative residual 1e-8
//
// and prints a table (stage, size, time, cost per element, ratio to the
// unit) and, with -csv FILE, the same as CSV. The unit is timed between
// the repetitions of every stage and its best time is used, so that a
// noisy machine affects both alike. Sizes should be given in ascending
// order, so that the peak memory after each loop is that loop's.
//
// Usage:
//
//	go run ./examples/bench [-sizes 10000,100000,1000000] [-reps 3] [-csv FILE] [-system DIR]
//
// With -system DIR it also writes the P1 system of the largest size's mesh
// (matrix and right-hand side, see writeSystem) into DIR, for the outside
// anchor: a sparse direct solve of the same system by SciPy's SuperLU,
// timed by direct.py beside this file:
//
//	go run ./examples/bench -sizes 1000000 -system /tmp/sys
//	/usr/bin/python3 examples/bench/direct.py /tmp/sys   # Debian python3-scipy
package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"runtime/metrics"
	"strconv"
	"strings"
	"time"

	"github.com/posteriori-fem/posteriori/adapt"
	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/examples/internal/cli"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

func main() { os.Exit(run(os.Args[1:], os.Stdout, os.Stderr)) }

// Row is one measurement: a time, or for the memory rows a byte count.
type Row struct {
	Stage   string
	Size    int     // P1 unknowns of the mesh
	Elems   int     // elements the cost is divided by
	Per     string  // "triangle", "row" or "DOF"
	Seconds float64 // best time
	Unit    float64 // seconds of the stage's SpMV unit
	Bytes   float64 // for peak-rss and peak-go: bytes (Seconds and Unit are 0)
}

func run(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("bench", flag.ContinueOnError)
	sizes := fs.String("sizes", "10000,100000,1000000", "comma-separated P1 unknowns, whole numbers from 100 to 2e7")
	reps := fs.Int("reps", 3, "repetitions per stage (the best is kept), 1 to 100")
	csvPath := fs.String("csv", "", "also write the table as CSV to this file")
	sysDir := fs.String("system", "", "write the P1 system of the largest size's mesh to this folder (for examples/bench/direct.py)")
	about := "Stage costs of the adaptive loop (assembly, solve, estimators, marking, refinement) in units of one\n" +
		"sparse matrix-vector product (SpMV) of the same mesh, and peak memory, by size."
	if err := cli.Parse(fs, args, "bench [flags]", about, stdout); err != nil {
		if errors.Is(err, cli.ErrHelp) {
			return 0
		}
		fmt.Fprintln(stderr, "bench:", err)
		return 2
	}
	var ns []int
	for _, f := range strings.Split(*sizes, ",") {
		v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
		if err != nil || v < 100 || v > 2e7 || v != math.Trunc(v) {
			fmt.Fprintf(stderr, "bench: -sizes: %q: want whole numbers from 100 to 2e7\n", f)
			return 2
		}
		ns = append(ns, int(v))
	}
	if *reps < 1 || *reps > 100 {
		fmt.Fprintf(stderr, "bench: -reps %d: want 1 to 100\n", *reps)
		return 2
	}
	if *csvPath != "" {
		// The file's folder is checked before the measurements.
		if err := cli.CheckOut(filepath.Dir(*csvPath)); err != nil {
			fmt.Fprintln(stderr, "bench: -csv:", err)
			return 2
		}
	}
	if *sysDir != "" {
		if err := cli.CheckOut(*sysDir); err != nil {
			fmt.Fprintln(stderr, "bench: -system:", err)
			return 2
		}
	}
	fmt.Fprintf(stdout, "stage costs in units of one SpMV of the same mesh; %d cores (GOMAXPROCS %d), %s\n", runtime.NumCPU(), runtime.GOMAXPROCS(0), runtime.Version())
	fmt.Fprintf(stdout, "%-12s %9s %11s %14s %9s\n", "stage", "size", "time", "per element", "SpMV")
	var rows []Row
	for i, n := range ns {
		dir := ""
		if i == len(ns)-1 {
			dir = *sysDir
		}
		rs, err := measure(n, *reps, dir)
		if err != nil {
			fmt.Fprintln(stderr, "bench:", err)
			return 1
		}
		for _, r := range rs {
			if r.Bytes > 0 {
				fmt.Fprintf(stdout, "%-12s %9d %10.0fM %10.0f B/%s\n", r.Stage, r.Size, r.Bytes/1e6, r.Bytes/float64(r.Elems), shortPer(r.Per))
				continue
			}
			fmt.Fprintf(stdout, "%-12s %9d %11s %10.1f ns/%s %9.2f\n", r.Stage, r.Size, time.Duration(r.Seconds*1e9).Round(time.Microsecond),
				r.Seconds*1e9/float64(r.Elems), shortPer(r.Per), r.Seconds/r.Unit)
		}
		rows = append(rows, rs...)
	}
	if *csvPath != "" {
		err := mesh.WriteFile(*csvPath, func(w io.Writer) error {
			fmt.Fprintln(w, "stage,size,elements,per,seconds,ns_per_element,spmv_ratio,bytes,bytes_per_element")
			for _, r := range rows {
				if r.Bytes > 0 {
					fmt.Fprintf(w, "%s,%d,%d,%s,,,,%g,%g\n", r.Stage, r.Size, r.Elems, r.Per, r.Bytes, r.Bytes/float64(r.Elems))
					continue
				}
				fmt.Fprintf(w, "%s,%d,%d,%s,%g,%g,%g,,\n", r.Stage, r.Size, r.Elems, r.Per, r.Seconds, r.Seconds*1e9/float64(r.Elems), r.Seconds/r.Unit)
			}
			return nil
		})
		if err != nil {
			fmt.Fprintln(stderr, "bench:", err)
			return 1
		}
	}
	return 0
}

func shortPer(p string) string {
	switch p {
	case "triangle":
		return "tri"
	}
	return p
}

// unit keeps the best time of one product with a matrix, timed whenever
// sample is called (between the repetitions of the stages).
type unit struct {
	a    *fem.Matrix
	x, y []float64
	best float64
}

func newUnit(a *fem.Matrix) *unit {
	u := &unit{a: a, x: make([]float64, a.Cols), y: make([]float64, a.Rows), best: math.Inf(1)}
	for i := range u.x {
		u.x[i] = 1 + float64(i%7)
	}
	for range 20 {
		u.sample()
	}
	return u
}

// sample times three products and keeps the best.
func (u *unit) sample() {
	for range 3 {
		t := time.Now()
		u.a.MulVec(u.y, u.x)
		u.best = min(u.best, time.Since(t).Seconds())
	}
}

// best returns the shortest of reps timings of f, sampling the units
// between the repetitions.
func best(reps int, f func() error, units ...*unit) (float64, error) {
	b := math.Inf(1)
	for range reps {
		t := time.Now()
		if err := f(); err != nil {
			return 0, err
		}
		b = min(b, time.Since(t).Seconds())
		for _, u := range units {
			u.sample()
		}
	}
	return b, nil
}

// errEnough stops a loop once it has solved on a mesh of the wanted size.
var errEnough = errors.New("enough DOFs")

// runLoop runs the L-shape loop of the given degree until it has solved on
// a mesh with at least n DOFs, and returns the result and its time. With
// mem set it also samples the memory the Go runtime holds (mapped and not
// released) and returns the largest value seen.
func runLoop(n, degree int, mem bool) (*adapt.Result, float64, float64, error) {
	m0, err := mesh.LShape(2)
	if err != nil {
		return nil, 0, 0, err
	}
	_, p := known.LShape()
	var peak float64
	done := make(chan struct{})
	stopped := make(chan struct{})
	if mem {
		go func() {
			defer close(stopped)
			ms := []metrics.Sample{{Name: "/memory/classes/total:bytes"}, {Name: "/memory/classes/heap/released:bytes"}}
			tick := time.NewTicker(2 * time.Millisecond)
			defer tick.Stop()
			for {
				metrics.Read(ms)
				peak = max(peak, float64(ms[0].Value.Uint64()-ms[1].Value.Uint64()))
				select {
				case <-done:
					return
				case <-tick.C:
				}
			}
		}()
	} else {
		close(stopped)
	}
	start := time.Now()
	res, err := adapt.Run(context.Background(), adapt.Problem{Mesh: m0, Degree: degree, Data: p},
		adapt.Settings{MaxDOFs: 64 * n, AlgebraicFraction: 0.1, OnStep: func(s adapt.Step) error {
			if s.DOFs >= n {
				return errEnough
			}
			return nil
		}}, adapt.Method{})
	elapsed := time.Since(start).Seconds()
	close(done)
	<-stopped
	if err != nil && !errors.Is(err, errEnough) {
		return nil, 0, 0, err
	}
	return res, elapsed, peak, nil
}

// peakRSS returns the process's peak resident set size in bytes (VmHWM of
// /proc/self/status), or 0 where that is not available.
func peakRSS() float64 {
	b, err := os.ReadFile("/proc/self/status")
	if err != nil {
		return 0
	}
	for _, line := range strings.Split(string(b), "\n") {
		if f := strings.Fields(line); len(f) == 3 && f[0] == "VmHWM:" {
			kb, err := strconv.ParseFloat(f[1], 64)
			if err == nil {
				return kb * 1024
			}
		}
	}
	return 0
}

func measure(n, reps int, sysDir string) ([]Row, error) {
	// The mesh the adaptive loop makes for the L-shape (P1, residual
	// estimator, Dörfler θ = 0.5) with at least n DOFs: graded towards the
	// corner, as in use.
	res, loop, goPeak, err := runLoop(n, 1, true)
	if err != nil {
		return nil, err
	}
	rss := peakRSS()
	_, p := known.LShape()
	m := res.Mesh
	s1, _ := fem.NewSpace(m, 1)
	s2, _ := fem.NewSpace(m, 2)
	size, nt := s1.NumDOF(), m.NumTriangles()
	sys1, err := fem.Assemble(s1, p)
	if err != nil {
		return nil, err
	}
	if sysDir != "" {
		if err := writeSystem(sysDir, sys1); err != nil {
			return nil, err
		}
	}
	u1 := newUnit(sys1.A)
	var rows []Row
	add := func(stage string, elems int, per string, u *unit, f func() error) error {
		t, err := best(reps, f, u1, u)
		if err != nil {
			return fmt.Errorf("%s at %d: %w", stage, size, err)
		}
		rows = append(rows, Row{Stage: stage, Size: size, Elems: elems, Per: per, Seconds: t, Unit: u.best})
		return nil
	}
	var sys2 *fem.System
	var u *fem.Function
	var in, rec, eq, fl *estimate.Indicators
	var marks []bool
	stages := []struct {
		name  string
		elems int
		per   string
		p2    bool
		f     func() error
	}{
		// The assembled systems are dropped at once, as in the loop, where
		// each step's system replaces the previous one.
		{"assemble-p1", nt, "triangle", false, func() (err error) { _, err = fem.Assemble(s1, p); return }},
		{"assemble-p2", nt, "triangle", true, func() (err error) { _, err = fem.Assemble(s2, p); return }},
		{"solve-p1", size, "DOF", false, func() (err error) {
			u, _, err = sys1.Solve(fem.SolveSettings{Tol: 1e-8, MaxIter: 100000})
			return err
		}},
		{"residual-p1", nt, "triangle", false, func() (err error) { in, err = estimate.Residual{}.Estimate(in, u, p); return }},
		{"average-p1", nt, "triangle", false, func() (err error) { rec, err = estimate.Recovery{}.Estimate(rec, u, p); return }},
		{"equil-p1", nt, "triangle", false, func() (err error) { eq, err = estimate.Equilibrated{}.Estimate(eq, u, p); return }},
		{"flux-p1", nt, "triangle", false, func() (err error) { fl, err = estimate.FluxRecovery{}.Estimate(fl, u, p); return }},
		{"dorfler", nt, "triangle", false, func() (err error) { marks, err = adapt.Dorfler{Theta: 0.5}.Mark(marks, in.Eta2); return }},
		{"refine", nt, "triangle", false, func() error { _, _, err := m.Refine(marks); return err }},
	}
	if sys2, err = fem.Assemble(s2, p); err != nil {
		return nil, err
	}
	u2 := newUnit(sys2.A)
	for _, st := range stages {
		unit := u1
		if st.p2 {
			unit = u2
		}
		if err := add(st.name, st.elems, st.per, unit, st.f); err != nil {
			return nil, err
		}
	}
	// The whole loop that made the mesh, its last step (all stages), and
	// its memory, in units taken after all the stages.
	ls := res.Steps[len(res.Steps)-1]
	step := (ls.SolveTime + ls.EstimateTime + ls.MarkTime + ls.RefineTime).Seconds()
	head := []Row{
		{Stage: "spmv-p1", Size: size, Elems: size, Per: "row", Seconds: u1.best, Unit: u1.best},
		{Stage: "loop", Size: size, Elems: size, Per: "DOF", Seconds: loop, Unit: u1.best},
		{Stage: "last-step", Size: size, Elems: ls.DOFs, Per: "DOF", Seconds: step, Unit: u1.best},
		{Stage: "spmv-p2", Size: size, Elems: s2.NumDOF(), Per: "row", Seconds: u2.best, Unit: u1.best},
	}
	if rss > 0 {
		head = append(head, Row{Stage: "peak-rss", Size: size, Elems: nt, Per: "triangle", Bytes: rss})
	}
	head = append(head, Row{Stage: "peak-go", Size: size, Elems: nt, Per: "triangle", Bytes: goPeak})
	// The P2 loop to as many P2 DOFs, in units of its own final P2 SpMV.
	res2, loop2, _, err := runLoop(n, 2, false)
	if err != nil {
		return nil, err
	}
	s22, _ := fem.NewSpace(res2.Mesh, 2)
	sys22, err := fem.Assemble(s22, p)
	if err != nil {
		return nil, err
	}
	u22 := newUnit(sys22.A)
	rows = append(rows, Row{Stage: "loop-p2", Size: s22.NumDOF(), Elems: s22.NumDOF(), Per: "DOF", Seconds: loop2, Unit: u22.best})
	return append(head, rows...), nil
}
