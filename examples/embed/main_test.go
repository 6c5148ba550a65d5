package main

import (
	"bytes"
	"io"
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/posteriori-fem/posteriori/examples/internal/scenario"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

// stepLine is one parsed line of the step table.
type stepLine struct {
	step, dofs int
	eta, err   float64
}

// parseSteps returns the rows of the step table: lines of 7 fields that
// start with an integer.
func parseSteps(t *testing.T, out string) []stepLine {
	t.Helper()
	var rows []stepLine
	for _, line := range strings.Split(out, "\n") {
		f := strings.Fields(line)
		if len(f) != 7 {
			continue
		}
		step, err := strconv.Atoi(f[0])
		if err != nil {
			continue
		}
		dofs, err1 := strconv.Atoi(f[2])
		eta, err2 := strconv.ParseFloat(f[3], 64)
		e, err3 := strconv.ParseFloat(f[4], 64)
		if err1 != nil || err2 != nil || err3 != nil {
			t.Fatalf("malformed step line %q", line)
		}
		rows = append(rows, stepLine{step: step, dofs: dofs, eta: eta, err: e})
	}
	return rows
}

func TestRun(t *testing.T) {
	var out, errOut bytes.Buffer
	if code := run(&out, &errOut, []string{"-max-dofs", "2000"}); code != 0 {
		t.Fatalf("run returned %d, stderr %q", code, errOut.String())
	}
	if errOut.Len() != 0 {
		t.Errorf("stderr: %q", errOut.String())
	}
	rows := parseSteps(t, out.String())
	if len(rows) < 5 {
		t.Fatalf("%d step lines, want at least 5:\n%s", len(rows), out.String())
	}
	for i, r := range rows {
		if r.step != i {
			t.Errorf("line %d is step %d", i, r.step)
		}
		if r.dofs > 2000 {
			t.Errorf("step %d: %d DOFs, over the budget of 2000", i, r.dofs)
		}
		if i > 0 && r.dofs <= rows[i-1].dofs {
			t.Errorf("step %d: %d DOFs, not more than step %d's %d", i, r.dofs, i-1, rows[i-1].dofs)
		}
	}
	if first, last := rows[0].err, rows[len(rows)-1].err; !(last < first) {
		t.Errorf("final true error %g is not below the first %g", last, first)
	}
	if !strings.Contains(out.String(), "lower-level step: ") {
		t.Errorf("no lower-level step line in:\n%s", out.String())
	}
}

// TestAgainstLibrary is the outside check that the example's own
// discretization is right: on the same mesh and data, its solution must
// agree with the library's fem.Solve, which is tested on its own against
// exact solutions. Both solve the same linear system (the load of a linear
// f is integrated exactly by both quadratures) to a relative residual of
// 1e-10, so on these small meshes the nodal values agree to far better
// than the 1e-8 asked for (a margin for the two solvers' rounding and
// stopping points; common practice).
func TestAgainstLibrary(t *testing.T) {
	uniform, err := mesh.LShape(4)
	if err != nil {
		t.Fatal(err)
	}
	// A graded mesh too: on the uniform mesh the loads of a linear f at an
	// interior vertex are symmetric enough that some local index mix-ups in
	// the element load cancel out.
	marks := make([]bool, uniform.NumTriangles())
	for k := range marks {
		marks[k] = k%3 == 0
	}
	graded, _, err := uniform.Refine(marks)
	if err != nil {
		t.Fatal(err)
	}
	_, lshape := known.LShape()
	// A variant with a source and a diffusion ≠ 1, to test the load and the
	// coefficient too (values made up for the test).
	source := *lshape
	source.F = func(x, y float64) float64 { return 1 + x - 2*y }
	source.A = map[int32]fem.Tensor{0: fem.Scalar(2.5)}
	for _, c := range []struct {
		name string
		m    *mesh.Mesh
		p    *fem.Problem
	}{
		{"uniform/lshape", uniform, lshape},
		{"uniform/source", uniform, &source},
		{"graded/source", graded, &source},
	} {
		s, err := fem.NewSpace(c.m, 1)
		if err != nil {
			t.Fatal(err)
		}
		want, _, err := fem.Solve(s, c.p)
		if err != nil {
			t.Fatal(err)
		}
		got, iters, err := inHouse{}.Solve(s, c.p, nil)
		if err != nil {
			t.Fatal(err)
		}
		if len(got) != len(want.U) {
			t.Fatalf("%s: %d values, want %d", c.name, len(got), len(want.U))
		}
		diff := 0.0
		for i := range got {
			diff = max(diff, math.Abs(got[i]-want.U[i]))
		}
		t.Logf("%s: max nodal difference %.3g, %d iterations", c.name, diff, iters)
		if diff > 1e-8 {
			t.Errorf("%s: max nodal difference from fem.Solve is %.3g, want ≤ 1e-8", c.name, diff)
		}
		if iters == 0 {
			t.Errorf("%s: 0 iterations from a zero start", c.name)
		}
		// Warm start from the solution: the solver must stop at once or
		// nearly so (a few iterations at most; common practice).
		_, warm, err := inHouse{}.Solve(s, c.p, got)
		if err != nil {
			t.Fatal(err)
		}
		if warm > 2 {
			t.Errorf("%s: %d iterations from the converged solution", c.name, warm)
		}
	}
}

func TestDegree2Rejected(t *testing.T) {
	m, err := mesh.LShape(2)
	if err != nil {
		t.Fatal(err)
	}
	s, err := fem.NewSpace(m, 2)
	if err != nil {
		t.Fatal(err)
	}
	_, p := known.LShape()
	if u, _, err := (inHouse{}).Solve(s, p, nil); err == nil {
		t.Errorf("degree 2: no error, %d values", len(u))
	}
}

func TestBadFlags(t *testing.T) {
	for _, args := range [][]string{
		{"-theta", "0"},
		{"-theta", "2"},
		{"-theta", "NaN"},
		{"-max-dofs", "5"},
		{"-max-dofs", "49"},
		{"-max-dofs", "4000001"},
		{"-bogus"},
		{"extra"},
	} {
		var out, errOut bytes.Buffer
		if code := run(&out, &errOut, args); code != 2 {
			t.Errorf("%q: exit status %d, want 2", args, code)
		}
		if n := strings.Count(errOut.String(), "\n"); n != 1 || !strings.HasSuffix(errOut.String(), "\n") {
			t.Errorf("%q: stderr %q, want one line", args, errOut.String())
		}
		if out.Len() != 0 {
			t.Errorf("%q: stdout %q, want nothing", args, out.String())
		}
	}
	scenario.CheckHelp(t, func(args []string, o, e io.Writer) int { return run(o, e, args) }, "max-dofs", "theta")
}
