package adapt

import (
	"context"
	"math"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

func TestReorderLoopProbe(t *testing.T) {
	m0, _ := mesh.LShape(2)
	exact, p := known.LShape()
	for _, c := range []struct {
		name string
		s    Settings
		meth Method
	}{
		{"default", Settings{MaxDOFs: 1e4}, Method{}},
		{"tight", Settings{MaxDOFs: 1e4, AlgebraicFraction: -1}, Method{Solver: FEMSolver{Settings: fem.SolveSettings{Tol: 1e-14}}}},
	} {
		var res [2]*Result
		for i, keep := range []bool{true, false} {
			s := c.s
			s.KeepOrder = keep
			r, err := Run(context.Background(), Problem{Mesh: m0, Degree: 1, Data: p, Exact: &exact}, s, c.meth)
			if err != nil {
				t.Fatal(err)
			}
			res[i] = r
		}
		for k := range res[0].Steps {
			a, b := res[0].Steps[k], res[1].Steps[k]
			t.Logf("%s step %d dofs %d %d marked %d %d it %d %d est %.3g err %.3g", c.name, k, a.DOFs, b.DOFs, a.Marked, b.Marked, a.Iterations, b.Iterations,
				math.Abs(a.Estimate-b.Estimate)/a.Estimate, math.Abs(a.Error-b.Error)/a.Error)
		}
	}
}
