// Command bench measures the cost of each stage of the adaptive loop in a
// unit that does not depend on the machine: the time of one sparse
// matrix-vector product (SpMV) with the assembled P1 stiffness matrix of
// the same mesh, measured in the same run. SpMV is bound by memory
// bandwidth, so the ratios say how close a stage is to the hardware limit.
//
// For each size n it takes the mesh that the adaptive loop makes for the
// L-shape problem (P1, residual estimator, Dörfler θ = 0.5, solves stopped
// at a tenth of the previous estimate) with at most n DOFs, graded towards
// the re-entrant corner, and times, as the best of several repetitions:
//
//	spmv-p1       one product with the P1 stiffness matrix (the unit)
//	loop          the whole adaptive loop that made the mesh, from the coarse mesh
//	last-step     its last step: solve, estimate, mark, refine
//	assemble-p1   P1 assembly: sparsity pattern and values
//	spmv-p2       one product with the P2 stiffness matrix (unit of assemble-p2)
//	assemble-p2   P2 assembly
//	residual-p1   the residual estimator
//	average-p1    the averaging recovery estimator
//	dorfler       Dörfler marking, θ = 0.5, of the residual indicators
//	refine        newest-vertex bisection of that marking, with the new topology
//	solve-p1      solver setup and a solve from zero to relative residual 1e-8
//
// and prints a table (stage, size, time, cost per element, ratio to the
// unit) and, with -csv FILE, the same as CSV.
//
// Usage:
//
//	go run ./examples/bench [-sizes 10000,100000,1000000] [-reps 3] [-csv FILE]
package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"runtime"
	"strconv"
	"strings"
	"time"

	"github.com/posteriori-fem/posteriori/adapt"
	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/atomicfile"
	"github.com/posteriori-fem/posteriori/internal/problems"
	"github.com/posteriori-fem/posteriori/mesh"
)

func main() { os.Exit(run(os.Args[1:], os.Stdout, os.Stderr)) }

// Row is one measurement.
type Row struct {
	Stage   string
	Size    int     // P1 unknowns of the mesh
	Elems   int     // elements the cost is divided by
	Per     string  // "triangle", "row" or "DOF"
	Seconds float64 // best time
	Unit    float64 // seconds of the stage's SpMV unit
}

func run(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("bench", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	sizes := fs.String("sizes", "10000,100000,1000000", "comma-separated P1 unknowns")
	reps := fs.Int("reps", 3, "repetitions per stage (the best is kept), 1 to 100")
	csvPath := fs.String("csv", "", "also write the table as CSV to this file")
	if err := fs.Parse(args); err != nil {
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
	fmt.Fprintf(stdout, "stage costs in units of one SpMV of the same mesh; %d cores (GOMAXPROCS %d), %s\n", runtime.NumCPU(), runtime.GOMAXPROCS(0), runtime.Version())
	fmt.Fprintf(stdout, "%-12s %9s %11s %14s %9s\n", "stage", "size", "time", "per element", "SpMV")
	var rows []Row
	for _, n := range ns {
		rs, err := measure(n, *reps)
		if err != nil {
			fmt.Fprintln(stderr, "bench:", err)
			return 1
		}
		for _, r := range rs {
			fmt.Fprintf(stdout, "%-12s %9d %11s %10.1f ns/%s %9.2f\n", r.Stage, r.Size, time.Duration(r.Seconds*1e9).Round(time.Microsecond),
				r.Seconds*1e9/float64(r.Elems), shortPer(r.Per), r.Seconds/r.Unit)
		}
		rows = append(rows, rs...)
	}
	if *csvPath != "" {
		err := atomicfile.Write(*csvPath, func(w io.Writer) error {
			fmt.Fprintln(w, "stage,size,elements,per,seconds,ns_per_element,spmv_ratio")
			for _, r := range rows {
				fmt.Fprintf(w, "%s,%d,%d,%s,%g,%g,%g\n", r.Stage, r.Size, r.Elems, r.Per, r.Seconds, r.Seconds*1e9/float64(r.Elems), r.Seconds/r.Unit)
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

// best returns the shortest of reps timings of f.
func best(reps int, f func() error) (float64, error) {
	b := math.Inf(1)
	for range reps {
		t := time.Now()
		if err := f(); err != nil {
			return 0, err
		}
		b = min(b, time.Since(t).Seconds())
	}
	return b, nil
}

// spmvTime returns the time of one product with a, the best of reps
// rounds of 20 products.
func spmvTime(a *fem.Matrix, reps int) float64 {
	x := make([]float64, a.Cols)
	y := make([]float64, a.Rows)
	for i := range x {
		x[i] = 1 + float64(i%7)
	}
	t, _ := best(reps, func() error {
		for range 20 {
			a.MulVec(y, x)
		}
		return nil
	})
	return t / 20
}

func measure(n, reps int) ([]Row, error) {
	// The mesh the adaptive loop makes for the L-shape (P1, residual
	// estimator, Dörfler θ = 0.5) with at most n DOFs: graded towards the
	// corner, as in use.
	m0, err := mesh.LShape(2)
	if err != nil {
		return nil, err
	}
	_, p := problems.LShape()
	start := time.Now()
	res, err := adapt.Run(context.Background(), adapt.Problem{Mesh: m0, Degree: 1, Data: p}, adapt.Settings{MaxDOFs: n, AlgebraicFraction: 0.1}, adapt.Method{})
	if err != nil {
		return nil, err
	}
	loop := time.Since(start).Seconds()
	m := res.Mesh
	s1, _ := fem.NewSpace(m, 1)
	s2, _ := fem.NewSpace(m, 2)
	size, nt := s1.NumDOF(), m.NumTriangles()
	var sys1, sys2 *fem.System
	var rows []Row
	add := func(stage string, elems int, per string, unit float64, f func() error) error {
		t, err := best(reps, f)
		if err != nil {
			return fmt.Errorf("%s at %d: %w", stage, size, err)
		}
		rows = append(rows, Row{Stage: stage, Size: size, Elems: elems, Per: per, Seconds: t, Unit: unit})
		return nil
	}
	sys1, err = fem.Assemble(s1, p)
	if err != nil {
		return nil, err
	}
	u1 := spmvTime(sys1.A, reps)
	if err := add("spmv-p1", size, "row", u1, func() error { sys1.A.MulVec(make([]float64, size), sys1.B); return nil }); err != nil {
		return nil, err
	}
	rows[len(rows)-1].Seconds = u1
	// The whole loop that made the mesh, and its last step (all stages).
	rows = append(rows, Row{Stage: "loop", Size: size, Elems: size, Per: "DOF", Seconds: loop, Unit: u1})
	ls := res.Steps[len(res.Steps)-1]
	step := (ls.SolveTime + ls.EstimateTime + ls.MarkTime + ls.RefineTime).Seconds()
	rows = append(rows, Row{Stage: "last-step", Size: size, Elems: ls.DOFs, Per: "DOF", Seconds: step, Unit: u1})
	if err := add("assemble-p1", nt, "triangle", u1, func() (err error) { sys1, err = fem.Assemble(s1, p); return }); err != nil {
		return nil, err
	}
	sys2, err = fem.Assemble(s2, p)
	if err != nil {
		return nil, err
	}
	u2 := spmvTime(sys2.A, reps)
	rows = append(rows, Row{Stage: "spmv-p2", Size: size, Elems: s2.NumDOF(), Per: "row", Seconds: u2, Unit: u1})
	if err := add("assemble-p2", nt, "triangle", u2, func() (err error) { sys2, err = fem.Assemble(s2, p); return }); err != nil {
		return nil, err
	}
	var u *fem.Function
	var iters int
	solve := func() (err error) {
		var st fem.SolveStats
		u, st, err = sys1.Solve(fem.SolveSettings{Tol: 1e-8, MaxIter: 100000})
		iters = st.Iterations
		return err
	}
	if err := add("solve-p1", size, "DOF", u1, solve); err != nil {
		return nil, err
	}
	_ = iters
	var in *estimate.Indicators
	if err := add("residual-p1", nt, "triangle", u1, func() (err error) { in, err = estimate.Residual{}.Estimate(in, u, p); return }); err != nil {
		return nil, err
	}
	var rec *estimate.Indicators
	if err := add("average-p1", nt, "triangle", u1, func() (err error) { rec, err = estimate.Recovery{}.Estimate(rec, u, p); return }); err != nil {
		return nil, err
	}
	var marks []bool
	if err := add("dorfler", nt, "triangle", u1, func() (err error) { marks, err = adapt.Dorfler{Theta: 0.5}.Mark(marks, in.Eta2); return }); err != nil {
		return nil, err
	}
	if err := add("refine", nt, "triangle", u1, func() error { _, _, err := m.Refine(marks); return err }); err != nil {
		return nil, err
	}
	return rows, nil
}
