package main

import (
	"bytes"
	"errors"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/posteriori-fem/posteriori/adapt"
	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/examples/internal/scenario"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

func command(args []string, stdout, stderr io.Writer) int { return run(args, stdout, stderr) }

// A small run prints one row per step and writes the files: the CSV files
// read back with one row per step, mesh.vtu reads back to the final mesh
// with its fields, and the pictures decode as PNG images.
func TestCommand(t *testing.T) {
	for _, args := range [][]string{
		{"-max-dofs", "1500"},
		{"-max-dofs", "3000", "-p", "2", "-rel-tol", "0.001"},
	} {
		dir := filepath.Join(t.TempDir(), "out")
		var out, errs bytes.Buffer
		if code := command(append(args, "-out", dir), &out, &errs); code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, errs.String())
		}
		rows := 0
		for _, line := range strings.Split(out.String(), "\n") {
			if f := strings.Fields(line); len(f) == 10 {
				if _, err := strconv.Atoi(f[0]); err == nil {
					rows++
				}
			}
		}
		if !strings.Contains(out.String(), "licensed professional practice") {
			t.Errorf("%v: the caution is not printed", args)
		}
		f, err := os.Open(filepath.Join(dir, historyFile))
		if err != nil {
			t.Fatal(err)
		}
		steps, err := adapt.ReadCSV(f)
		f.Close()
		if err != nil {
			t.Fatalf("%v: %v", args, err)
		}
		if len(steps) < 2 || rows != len(steps) {
			t.Errorf("%v: %d printed rows, %d recorded steps", args, rows, len(steps))
		}
		goals := scenario.ReadCSV(t, filepath.Join(dir, goalsFile))
		if !slices.Equal(goals[0], goalsHeader) || len(goals) != len(steps)+1 {
			t.Errorf("%v: %s: header %v and %d rows for %d steps", args, goalsFile, goals[0], len(goals)-1, len(steps))
		}
		v, err := os.Open(filepath.Join(dir, vtuFile))
		if err != nil {
			t.Fatal(err)
		}
		m, d, err := mesh.ReadVTU(v)
		v.Close()
		if err != nil {
			t.Fatalf("%v: %v", args, err)
		}
		last := steps[len(steps)-1]
		dofs := len(d.Point["T"]) + len(d.Edge["T"])
		if m.NumTriangles() != last.Triangles || dofs != last.DOFs || len(d.Cell["eta"]) != m.NumTriangles() {
			t.Errorf("%v: %s: %d triangles, %d values of T, %d of eta; the last step has %d triangles and %d DOFs",
				args, vtuFile, m.NumTriangles(), dofs, len(d.Cell["eta"]), last.Triangles, last.DOFs)
		}
		eta2 := 0.0
		for _, e := range d.Cell["eta"] {
			eta2 += e * e
		}
		if math.Abs(math.Sqrt(eta2)-last.Estimate) > 1e-12*last.Estimate { // arithmetic: the same sum, reordered
			t.Errorf("%v: (Σ eta²)^½ = %v in %s, the last step's η = %v", args, math.Sqrt(eta2), vtuFile, last.Estimate)
		}
		for _, name := range []string{meshPNGFile, zoomPNGFile, temperatureFile} {
			b, err := os.ReadFile(filepath.Join(dir, name))
			if err != nil {
				t.Fatal(err)
			}
			img, err := png.Decode(bytes.NewReader(b))
			if err != nil {
				t.Errorf("%v: %s: %v", args, name, err)
			} else if w := img.Bounds().Dx(); w != 800 { // the default width: mesh.PictureOptions
				t.Errorf("%v: %s is %d pixels wide", args, name, w)
			}
		}
	}
}

func TestHelp(t *testing.T) { scenario.CheckHelp(t, command, "p", "rel-tol", "max-dofs", "out") }

// Bad flags exit 2 with one line on stderr, before the output folder is
// made; an output folder that cannot be made also exits 2, printing no step.
func TestBadFlags(t *testing.T) {
	for _, args := range [][]string{
		{"-p", "3"}, {"-rel-tol", "0"}, {"-rel-tol", "1"}, {"-rel-tol", "NaN"}, {"-max-dofs", "10"},
		{"-max-dofs", "x"}, {"-bogus"}, {"extra"},
	} {
		dir := filepath.Join(t.TempDir(), "out")
		var out, errs bytes.Buffer
		if code := command(append(slices.Clone(args), "-out", dir), &out, &errs); code != 2 {
			t.Errorf("%v: exit %d, want 2", args, code)
		}
		if n := strings.Count(strings.TrimRight(errs.String(), "\n"), "\n"); n != 0 || errs.Len() == 0 {
			t.Errorf("%v: stderr %q, want one line", args, errs.String())
		}
		if _, err := os.Stat(dir); !os.IsNotExist(err) {
			t.Errorf("%v: the output folder was created", args)
		}
	}
	file := filepath.Join(t.TempDir(), "file")
	if err := os.WriteFile(file, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	var out, errs bytes.Buffer
	if code := command([]string{"-out", filepath.Join(file, "out")}, &out, &errs); code != 2 || out.Len() != 0 ||
		strings.Count(strings.TrimRight(errs.String(), "\n"), "\n") != 0 {
		t.Errorf("-out under a file: exit %d, stdout %q, stderr %q; want 2, nothing, one line", code, out.String(), errs.String())
	}
}

// insertCorners are the insert's corners as main.go lists them, in mm.
var insertCorners = []float64{8, 10, 30, 10, 30, 18, 16, 18, 16, 32, 8, 32}

// shoelace returns the area of the polygon x (x, y pairs, counter-clockwise).
func shoelace(x []float64) float64 {
	n := len(x) / 2
	a := 0.0
	for i := range n {
		j := (i + 1) % n
		a += x[2*i]*x[2*j+1] - x[2*j]*x[2*i+1]
	}
	return a / 2
}

// TestHeatBalance: in steady state the heat that leaves through the
// channel wall and the cold plate is the heat the source makes,
// Q_channel + Q_base = q |insert|, with |insert| from the shoelace formula
// (22 × 8 + 8 × 14 = 288 mm², two rectangles by hand). The fluxes are the
// variationally consistent ones of fem.Flux, whose discrete values obey
// the same balance up to the algebraic error of the solves (their test
// functions, with the constant 1, differ by a function of the space that
// vanishes on the Dirichlet and Robin edges: Galerkin orthogonality), so
// the tolerance is one of arithmetic. The goal estimates of the two
// fluxes must then cancel as well.
func TestHeatBalance(t *testing.T) {
	area := shoelace(insertCorners) * mm * mm
	if want := 288 * mm * mm; math.Abs(area-want) > 1e-12*want { // by hand; arithmetic
		t.Fatalf("shoelace area %v m², want %v", area, want)
	}
	heat := materials[regionInsert].Q * area
	const tol = 1e-8 // relative; the solves stop at a residual of 1e-10 (fem.SolveSettings), arithmetic
	for _, deg := range []int{1, 2} {
		res, err := compute(options{Degree: deg, RelTol: 1e-3, MaxDOFs: 3000}, nil)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(res.Heat-heat) > 1e-12*heat { // arithmetic: the mesh covers the polygon exactly
			t.Errorf("P%d: ∫q over the mesh = %v W/m, q |insert| = %v", deg, res.Heat, heat)
		}
		g := res.Goals[len(res.Goals)-1]
		qc, qb := g[1], res.Base
		t.Logf("P%d, %d DOFs: Q_channel %.6f (est %+.2e), Q_base %.6f (est %+.2e), sum − q|insert| = %.2e",
			deg, res.Res.Steps[len(res.Res.Steps)-1].DOFs, qc.Value, qc.Estimate, qb.Value, qb.Estimate, qc.Value+qb.Value-heat)
		if d := qc.Value + qb.Value - heat; !(math.Abs(d) <= tol*heat) {
			t.Errorf("P%d: Q_channel + Q_base − q|insert| = %v W/m, more than %g of %v", deg, d, tol, heat)
		}
		if !(qc.Value > 0 && qb.Value > 0) {
			t.Errorf("P%d: heat flows out through both: Q_channel = %v, Q_base = %v", deg, qc.Value, qb.Value)
		}
		if s := qc.Estimate + qb.Estimate; !(math.Abs(s) <= 1e-6*(math.Abs(qc.Estimate)+math.Abs(qb.Estimate))) {
			t.Errorf("P%d: the flux estimates %v and %v do not cancel", deg, qc.Estimate, qb.Estimate)
		}
	}
}

// TestBoundAgainstReference: the equilibrated η is a guaranteed upper
// bound of the energy error |||T − T_h||| (Prager and Synge 1947; see
// estimate.Equilibrated). The part has no exact solution, so the error is
// measured against a reference solution: P2 on the step's mesh refined
// uniformly three times (64 times the triangles), with the boundary kept
// as the step's polygon (the curves dropped), so that the reference space
// contains T_h's space and solves the same problem. Then, by Galerkin
// orthogonality (Pythagoras in the energy norm),
//
//	|||T − T_h|||² = |||T − T_ref|||² + |||T_ref − T_h|||²,
//
// so |||T_ref − T_h||| is a lower bound of the true error and η must
// exceed it: the check can fail, though by less than the reference's own
// error it cannot detect.
func TestBoundAgainstReference(t *testing.T) {
	for _, deg := range []int{1, 2} {
		type snap struct {
			step int
			m    *mesh.Mesh
			u    []float64
			eta  float64
		}
		var snaps []snap
		later := map[int]int{1: 4, 2: 2}[deg] // a step some refinements on, within the budget
		_, err := compute(options{Degree: deg, RelTol: 1e-3, MaxDOFs: 1600}, func(sd adapt.StepData, _ []goalValue) error {
			if s := sd.Step.Step; s == 0 || s == later {
				// The mesh is read-only and dropped by the loop; the values are copied.
				snaps = append(snaps, snap{s, sd.Mesh, slices.Clone(sd.Solution.U), sd.Step.Estimate})
			}
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		if len(snaps) != 2 {
			t.Fatalf("P%d: %d steps recorded, want steps 0 and %d", deg, len(snaps), later)
		}
		p := problem()
		for _, sn := range snaps {
			flat, err := sn.m.WithCurves(nil)
			if err != nil {
				t.Fatal(err)
			}
			sh, err := fem.NewSpace(flat, deg)
			if err != nil {
				t.Fatal(err)
			}
			uh := &fem.Function{Space: sh, U: sn.u}
			// The bound of the straight mesh is the loop's: the estimator
			// sees straight triangles either way.
			in, err := estimate.Equilibrated{}.Estimate(nil, uh, p)
			if err != nil {
				t.Fatal(err)
			}
			if eta := in.Total(); math.Abs(eta-sn.eta) > 1e-9*sn.eta { // arithmetic
				t.Errorf("P%d step %d: η = %v on the straight mesh, %v in the loop", deg, sn.step, eta, sn.eta)
			}
			m, u := flat, uh
			for range 3 {
				fine, par, err := m.RefineUniform()
				if err != nil {
					t.Fatal(err)
				}
				sf, err := fem.NewSpace(fine, deg)
				if err != nil {
					t.Fatal(err)
				}
				if u, err = u.Prolong(sf, par); err != nil {
					t.Fatal(err)
				}
				m = fine
			}
			if deg == 1 { // T_h in the P2 space of the same mesh: the midpoint values of a linear function
				s2, err := fem.NewSpace(m, 2)
				if err != nil {
					t.Fatal(err)
				}
				nv := m.NumVertices()
				u2 := append(slices.Clone(u.U), make([]float64, m.NumEdges())...)
				for e := range m.NumEdges() {
					u2[nv+e] = (u.U[m.Edge[2*e]] + u.U[m.Edge[2*e+1]]) / 2
				}
				u = &fem.Function{Space: s2, U: u2}
			}
			ref, _, err := fem.Solve(u.Space, p)
			if err != nil {
				t.Fatal(err)
			}
			diff := make([]float64, len(ref.U))
			for i := range diff {
				diff[i] = ref.U[i] - u.U[i]
			}
			e, err := (&fem.Function{Space: u.Space, U: diff}).EnergyNorm(p)
			if err != nil {
				t.Fatal(err)
			}
			t.Logf("P%d step %d: %d DOFs, η = %.4g, |||T_ref − T_h||| = %.4g (reference %d DOFs), ratio %.3f",
				deg, sn.step, sh.NumDOF(), sn.eta, e, ref.Space.NumDOF(), sn.eta/e)
			if !(sn.eta >= e) {
				t.Errorf("P%d step %d: η = %v below the error against the reference, %v", deg, sn.step, sn.eta, e)
			}
		}
	}
}

// A channel placed outside the body is an error naming the channel (the
// mesher's ErrDetached), not a body meshed without it. Not parallel: it
// changes the channel data.
func TestChannelOutside(t *testing.T) {
	old := channels[0]
	defer func() { channels[0] = old }()
	channels[0].X = 100
	_, err := initialMesh()
	if !errors.Is(err, mesh.ErrDetached) || !strings.Contains(err.Error(), "channel 0 at (100, 12) mm") {
		t.Fatalf("err = %v, want the channel named and mesh.ErrDetached", err)
	}
}
