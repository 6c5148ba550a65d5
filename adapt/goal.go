package adapt

import (
	"fmt"
	"time"

	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/fem"
)

// goalState is the loop's goal-oriented part across steps: the dual
// problem, the last dual solution (carried to the next mesh as the dual
// solve's start) and the goal indicators.
type goalState struct {
	goal fem.Goal
	dual *fem.Problem
	// primal is the step's primal system with its preconditioner when the
	// method's solver is a FEMSolver, else nil.
	primal *fem.Prepared
	z      *fem.Function
	in     *estimate.GoalIndicators
}

// checkGoal verifies the method's goal settings and the goal on the initial
// mesh, before any solve.
func checkGoal(p Problem, meth Method) error {
	if meth.MarkGoal && meth.Goal == nil {
		return fmt.Errorf("adapt: Run: %w: MarkGoal needs a Goal", ErrSettings)
	}
	if meth.Goal == nil {
		return nil
	}
	s, err := fem.NewSpace(p.Mesh, p.Degree)
	if err != nil {
		return fmt.Errorf("adapt: Run: %w", err)
	}
	if _, err := meth.Goal.Load(nil, s, p.Data); err != nil {
		return fmt.Errorf("adapt: Run: goal: %w", err)
	}
	return nil
}

// step solves the dual problem on sp with the method's solver (from the
// previous dual solution carried to sp, guess), estimates the goal error
// of u, and measures the true goal error when ex is set and the goal is an
// ExactGoal. It fills the goal fields and adds to the times of rec; the
// stage of a failure is returned with the error.
func (g *goalState) step(rec *Step, meth Method, sp *fem.Space, u *fem.Function, p *fem.Problem, ex *fem.Exact, guess []float64) (string, error) {
	t := time.Now()
	var zv []float64
	var err error
	switch ts, ok := meth.Solver.(TargetSolver); {
	case g.primal != nil:
		// Fast path: the library's own solver; the dual system shares the
		// primal matrix and multigrid hierarchy (fem.Prepared.Dual) and is
		// solved with the settings of FEMSolver.SolveTo, giving the same
		// values as the general path below.
		zv, err = g.dualSolve(meth.Solver.(FEMSolver), guess)
		g.primal = nil
	case ok:
		zv, _, err = ts.SolveTo(sp, g.dual, guess, 0)
	default:
		zv, _, err = meth.Solver.Solve(sp, g.dual, guess)
	}
	rec.SolveTime += time.Since(t)
	if err != nil {
		return StageSolve, fmt.Errorf("dual: %w", err)
	}
	if len(zv) != sp.NumDOF() {
		return StageSolve, fmt.Errorf("%w: solver returned %d values for %d DOFs of the dual problem", ErrMethod, len(zv), sp.NumDOF())
	}
	g.z = &fem.Function{Space: sp, U: zv}
	t = time.Now()
	if g.in, err = (estimate.DualWeighted{Goal: g.goal}).Estimate(g.in, u, g.z, p); err != nil {
		return StageEstimate, err
	}
	if rec.Goal, err = g.goal.Value(u, p); err != nil {
		return StageEstimate, err
	}
	rec.HasGoal, rec.GoalEstimate = true, g.in.Total()
	rec.EstimateTime += time.Since(t)
	eg, ok := g.goal.(fem.ExactGoal)
	if ex == nil || !ok {
		return "", nil
	}
	t = time.Now()
	j, err := eg.ExactValue(sp, *ex, p)
	if err != nil {
		return StageError, err
	}
	rec.HasGoalError, rec.GoalError = true, j-rec.Goal
	if rec.GoalError != 0 {
		rec.GoalEffectivity = rec.GoalEstimate / rec.GoalError
	}
	rec.ErrorTime += time.Since(t)
	return "", nil
}

// dualSolve solves the dual problem on the matrix and preconditioner of
// the primal system g.primal, from guess.
func (g *goalState) dualSolve(f FEMSolver, guess []float64) ([]float64, error) {
	ds, err := g.primal.Dual(g.goal)
	if err != nil {
		return nil, err
	}
	st := f.Settings
	st.X0 = guess
	z, _, err := ds.Solve(st)
	if err != nil {
		return nil, err
	}
	return z.U, nil
}
