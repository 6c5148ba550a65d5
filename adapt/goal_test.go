package adapt

import (
	"context"
	"errors"
	"math"
	"os"
	"testing"

	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

// fluxLShape is the L-shape problem with the exact Neumann data a∇u·n on
// the sides x = ±1 (tags 4 and 6), so that the flux goal through the top
// side (tag 5) is the flux itself (see fem.Flux).
func fluxLShape() (fem.Exact, *fem.Problem) {
	ex, _ := known.LShape()
	return ex, &fem.Problem{
		Dirichlet: map[int32]fem.Func{1: ex.U, 2: nil, 3: nil, 5: ex.U},
		Neumann: map[int32]fem.Func{
			4: func(x, y float64) float64 { gx, _ := ex.Grad(x, y); return gx },
			6: func(x, y float64) float64 { gx, _ := ex.Grad(x, y); return -gx },
		},
	}
}

// runGoal runs the loop with a goal, marking by the goal or by η.
func runGoal(t *testing.T, m *mesh.Mesh, deg int, ex fem.Exact, p *fem.Problem, g fem.Goal, markGoal bool, maxDOFs int) []Step {
	t.Helper()
	res, err := Run(context.Background(), Problem{Mesh: m, Degree: deg, Data: p, Exact: &ex},
		Settings{MaxDOFs: maxDOFs}, Method{Goal: g, MarkGoal: markGoal})
	if err != nil {
		t.Fatal(err)
	}
	return res.Steps
}

// goalRate fits |J(u) − J(u_h)| ≈ C N^{−r} over the second half of the
// steps and returns r and C.
func goalRate(t *testing.T, steps []Step) (rate, c float64) {
	t.Helper()
	var n, e []float64
	for _, s := range steps[len(steps)/2:] {
		n = append(n, float64(s.DOFs))
		e = append(e, math.Abs(s.GoalError))
	}
	rate, c, err := estimate.FitRate(n, e)
	if err != nil {
		t.Fatal(err)
	}
	return rate, c
}

// TestGoalRates runs the goal-oriented loop on the L-shape with the mean
// over the box [0.5, 1]² and with the flux through the top side as goals,
// and checks, against J(u) from the exact solution:
//
//   - the goal effectivity lies in [0.5, 2] on every step of the second
//     half (the band of issue 15; common practice for dual weighted
//     residuals);
//   - under goal marking |J(u) − J(u_h)| decays like N^{−p}: the doubled
//     rate of the energy error, N^{−p/2} (Mommer and Stevenson 2009,
//     Theorem 5.4 for p = 1, from memory), fitted rate at least 0.85 p
//     (band: common practice, no source).
//
// It logs the same runs under energy marking (η_T² of estimate.Residual),
// whose fitted constants and errors at the last step compare with goal
// marking's at equal DOFs.
func TestGoalRates(t *testing.T) {
	t.Parallel()
	// The full budget runs with POSTERIORI_SOAK=1 (.ci/run sets it).
	budget := map[int]int{1: 8000, 2: 8000}
	switch {
	case testing.Short():
		budget = map[int]int{1: 6000, 2: 6000}
	case os.Getenv(soakEnv) == "1":
		budget = map[int]int{1: 40000, 2: 40000}
	}
	exL, pL := known.LShape()
	exF, pF := fluxLShape()
	cases := []struct {
		name string
		ex   fem.Exact
		p    *fem.Problem
		g    fem.Goal
	}{
		{"box", exL, pL, fem.BoxMean{X0: 0.5, Y0: 0.5, X1: 1, Y1: 1}},
		{"flux", exF, pF, fem.Flux{Tag: 5}},
	}
	for _, c := range cases {
		for _, deg := range []int{1, 2} {
			m, _ := mesh.LShape(2)
			steps := runGoal(t, m, deg, c.ex, c.p, c.g, true, budget[deg])
			energy := runGoal(t, m, deg, c.ex, c.p, c.g, false, budget[deg])
			rate, cg := goalRate(t, steps)
			erate, ce := goalRate(t, energy)
			last, elast := steps[len(steps)-1], energy[len(energy)-1]
			t.Logf("%s P%d goal marking: %d steps, rate %.3f, C %.3g, last %d DOFs |J(e)| %.3g; energy marking: rate %.3f, C %.3g, last %d DOFs |J(e)| %.3g",
				c.name, deg, len(steps), rate, cg, last.DOFs, math.Abs(last.GoalError), erate, ce, elast.DOFs, math.Abs(elast.GoalError))
			for _, s := range steps[len(steps)/2:] {
				if !(s.GoalEffectivity >= 0.5 && s.GoalEffectivity <= 2) {
					t.Errorf("%s P%d step %d (%d DOFs): goal effectivity %.3f outside [0.5, 2] (J(e) = %.3g, estimate %.3g)",
						c.name, deg, s.Step, s.DOFs, s.GoalEffectivity, s.GoalError, s.GoalEstimate)
				}
			}
			if rate < 0.85*float64(deg) {
				t.Errorf("%s P%d: goal error rate %.3f, want ≥ %.2f (N^-%d: Mommer and Stevenson 2009)", c.name, deg, rate, 0.85*float64(deg), deg)
			}
		}
	}
}

// TestGoalSavesDOFs is the case where the primal and dual singularities
// differ: on the unit square with the data of u = r^{2/3} sin(2θ/3) about
// the corner (0, 0) (harmonic, singular at that corner), the dual of the
// mean over [0.5, 1]² is smooth at (0, 0) (a right-angled corner with
// homogeneous Dirichlet data), so the goal does not see the singularity
// that draws energy marking's refinement. Goal marking must reach the goal
// error that energy marking reaches at its last step with fewer DOFs.
func TestGoalSavesDOFs(t *testing.T) {
	t.Parallel()
	ex := known.Corner(2.0 / 3)
	p := &fem.Problem{Dirichlet: map[int32]fem.Func{mesh.SideBottom: ex.U, mesh.SideRight: ex.U, mesh.SideTop: ex.U, mesh.SideLeft: ex.U}}
	g := fem.BoxMean{X0: 0.5, Y0: 0.5, X1: 1, Y1: 1}
	// The full budget runs with POSTERIORI_SOAK=1 (.ci/run sets it).
	budget := 8000
	switch {
	case testing.Short():
		budget = 6000
	case os.Getenv(soakEnv) == "1":
		budget = 20000
	}
	m, _ := mesh.Rectangle(0, 0, 1, 1, 2, 2)
	for _, deg := range []int{1, 2} {
		goal := runGoal(t, m, deg, ex, p, g, true, budget)
		energy := runGoal(t, m, deg, ex, p, g, false, budget)
		target := math.Abs(energy[len(energy)-1].GoalError)
		need := -1
		for _, s := range goal {
			if math.Abs(s.GoalError) <= target {
				need = s.DOFs
				break
			}
		}
		t.Logf("P%d: energy marking reaches |J(e)| = %.3g at %d DOFs; goal marking reaches it at %d DOFs", deg, target, energy[len(energy)-1].DOFs, need)
		if need < 0 || need >= energy[len(energy)-1].DOFs {
			t.Errorf("P%d: goal marking needs %d DOFs for |J(e)| ≤ %.3g, energy marking %d: no saving", deg, need, target, energy[len(energy)-1].DOFs)
		}
	}
}

// TestGoalBadInput checks that unusable goals stop Run before any solve.
func TestGoalBadInput(t *testing.T) {
	t.Parallel()
	ex, p := known.LShape()
	m, _ := mesh.LShape(2)
	solved := 0
	counting := countingSolver{n: &solved}
	for _, c := range []struct {
		name string
		meth Method
		want error
	}{
		{"box outside", Method{Goal: fem.BoxMean{X0: 0.2, Y0: -0.8, X1: 0.8, Y1: -0.2}}, ErrGoal},
		{"empty region", Method{Goal: fem.RegionMean{Region: 3}}, ErrGoal},
		{"flux tag", Method{Goal: fem.Flux{Tag: 42}}, ErrGoal},
		{"zero weight", Method{Goal: fem.Mean{W: func(x, y float64) float64 { return y + x }}}, ErrGoal},
		{"mark without goal", Method{MarkGoal: true}, ErrSettings},
	} {
		c.meth.Solver = counting
		_, err := Run(context.Background(), Problem{Mesh: m, Degree: 1, Data: p, Exact: &ex}, Settings{MaxSteps: 2}, c.meth)
		if !errors.Is(err, c.want) {
			t.Errorf("%s: %v, want %v", c.name, err, c.want)
		}
	}
	if solved != 0 {
		t.Errorf("%d solves before the goal was rejected", solved)
	}
}

// countingSolver counts its solves.
type countingSolver struct{ n *int }

func (c countingSolver) Solve(s *fem.Space, p *fem.Problem, guess []float64) ([]float64, int, error) {
	*c.n++
	return FEMSolver{}.Solve(s, p, guess)
}
