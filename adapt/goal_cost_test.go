package adapt

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

// plainSolver is a caller's Solver: FEMSolver's Solve behind a type the
// loop does not know, so that the dual problem is assembled and solved
// through Solve (the general path of goalState.step).
type plainSolver struct{}

func (plainSolver) Solve(s *fem.Space, p *fem.Problem, guess []float64) ([]float64, int, error) {
	return FEMSolver{}.Solve(s, p, guess)
}

// goalRuns are the runs of TestGoalRates (P1 and P2, the box mean and the
// flux goal on the L-shape) to 3000 DOFs.
func goalRuns(t *testing.T, solver Solver) map[string]*Result {
	t.Helper()
	exL, pL := known.LShape()
	exF, pF := fluxLShape()
	out := map[string]*Result{}
	for _, c := range []struct {
		name string
		ex   fem.Exact
		p    *fem.Problem
		g    fem.Goal
	}{
		{"box", exL, pL, fem.BoxMean{X0: 0.5, Y0: 0.5, X1: 1, Y1: 1}},
		{"flux", exF, pF, fem.Flux{Tag: 5}},
	} {
		for _, deg := range []int{1, 2} {
			m, _ := mesh.LShape(2)
			ex := c.ex
			res, err := Run(context.Background(), Problem{Mesh: m, Degree: deg, Data: c.p, Exact: &ex},
				Settings{MaxDOFs: 3000}, Method{Solver: solver, Goal: c.g, MarkGoal: true})
			if err != nil {
				t.Fatal(err)
			}
			out[fmt.Sprintf("%s P%d", c.name, deg)] = res
		}
	}
	return out
}

// compareGoalRuns reports the first difference between two sets of runs
// beyond tol relative: the step counts, DOFs, marks and iterations exactly,
// the goal values, estimates and errors, η, the last dual solution and the
// last goal indicators to within tol of their size.
func compareGoalRuns(t *testing.T, what string, got, want map[string]*Result, tol float64) {
	t.Helper()
	near := func(a, b, scale float64) bool { return math.Abs(a-b) <= tol*scale }
	maxAbs := func(v []float64) float64 {
		s := 0.0
		for _, x := range v {
			s = max(s, math.Abs(x))
		}
		return s
	}
	for name, w := range want {
		g := got[name]
		if len(g.Steps) != len(w.Steps) {
			t.Fatalf("%s %s: %d steps, want %d", what, name, len(g.Steps), len(w.Steps))
		}
		for i, ws := range w.Steps {
			gs := g.Steps[i]
			if gs.DOFs != ws.DOFs || gs.Marked != ws.Marked || gs.Iterations != ws.Iterations ||
				!near(gs.Goal, ws.Goal, math.Abs(ws.Goal)) || !near(gs.GoalEstimate, ws.GoalEstimate, math.Abs(ws.GoalEstimate)) ||
				!near(gs.GoalError, ws.GoalError, math.Abs(ws.GoalError)) || !near(gs.Estimate, ws.Estimate, ws.Estimate) {
				t.Fatalf("%s %s step %d: DOFs %d, marked %d, iterations %d, J %.17g, estimate %.17g, error %.17g, η %.17g; want %d, %d, %d, %.17g, %.17g, %.17g, %.17g",
					what, name, i, gs.DOFs, gs.Marked, gs.Iterations, gs.Goal, gs.GoalEstimate, gs.GoalError, gs.Estimate,
					ws.DOFs, ws.Marked, ws.Iterations, ws.Goal, ws.GoalEstimate, ws.GoalError, ws.Estimate)
			}
		}
		sz, sr, sm := maxAbs(w.Dual.U), maxAbs(w.Goal.Rho), maxAbs(w.Goal.Mark2)
		for i, v := range w.Dual.U {
			if !near(g.Dual.U[i], v, sz) {
				t.Fatalf("%s %s: dual value %d: %.17g, want %.17g", what, name, i, g.Dual.U[i], v)
			}
		}
		for k := range w.Goal.Rho {
			if !near(g.Goal.Rho[k], w.Goal.Rho[k], sr) || !near(g.Goal.Mark2[k], w.Goal.Mark2[k], sm) {
				t.Fatalf("%s %s: triangle %d: ρ_T, ι_T² = %.17g, %.17g, want %.17g, %.17g", what, name, k, g.Goal.Rho[k], g.Goal.Mark2[k], w.Goal.Rho[k], w.Goal.Mark2[k])
			}
		}
	}
}

// TestGoalSolverReuse checks the fast path of the dual solve (FEMSolver:
// the dual system on the primal matrix and multigrid hierarchy, see
// goalState.step) against the general path (a caller's Solver, through
// which the dual problem is assembled and its hierarchy built again): the
// same matrix, right-hand side and preconditioner, so the same records,
// dual solutions and indicators to within 1e-10 relative (an arithmetic
// identity; common practice, no source). The estimator's own fast path is
// checked against its general path in package estimate
// (TestDualWeightedFastPath).
func TestGoalSolverReuse(t *testing.T) {
	t.Parallel()
	compareGoalRuns(t, "FEMSolver vs plain Solver", goalRuns(t, FEMSolver{}), goalRuns(t, plainSolver{}), 1e-10)
}

// TestGoalDeterminism checks that the goal-oriented runs are bit-identical
// with GOMAXPROCS 1 and 2.
func TestGoalDeterminism(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	runtime.GOMAXPROCS(1)
	ref := goalRuns(t, FEMSolver{})
	runtime.GOMAXPROCS(2)
	compareGoalRuns(t, "GOMAXPROCS 2 vs 1", goalRuns(t, FEMSolver{}), ref, 0)
}
