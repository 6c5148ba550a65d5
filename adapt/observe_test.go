package adapt

import (
	"context"
	"errors"
	"math"
	"testing"

	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

// OnStepData sees each step's own mesh, solution and indicators, after
// OnStep: the counts agree with the Step record, the indicators' total is
// the record's estimate, the energy norm recomputed from the solution is
// the record's (bit for bit: the same computation), and the last call sees
// what Result holds.
func TestOnStepData(t *testing.T) {
	t.Parallel()
	ex, p := known.LShape()
	m, _ := mesh.LShape(2)
	var seen []StepData
	onStep := 0
	res, err := Run(context.Background(), Problem{Mesh: m, Degree: 2, Data: p, Exact: &ex},
		Settings{MaxSteps: 4, OnStep: func(Step) error { onStep++; return nil },
			OnStepData: func(sd StepData) error {
				if onStep != len(seen)+1 {
					t.Errorf("step %d: OnStep called %d times before OnStepData", sd.Step.Step, onStep)
				}
				seen = append(seen, sd)
				s := sd.Step
				switch {
				case sd.Mesh.NumTriangles() != s.Triangles:
					t.Errorf("step %d: mesh of %d triangles, record %d", s.Step, sd.Mesh.NumTriangles(), s.Triangles)
				case sd.Solution.Space.Mesh != sd.Mesh || sd.Solution.Space.NumDOF() != s.DOFs:
					t.Errorf("step %d: solution on another mesh or of %d DOFs, record %d", s.Step, sd.Solution.Space.NumDOF(), s.DOFs)
				case len(sd.Indicators.Eta2) != s.Triangles || sd.Indicators.Total() != s.Estimate:
					t.Errorf("step %d: %d indicators of total %g, record %d triangles, η = %g", s.Step, len(sd.Indicators.Eta2), sd.Indicators.Total(), s.Triangles, s.Estimate)
				case sd.Dual != nil || sd.Goal != nil:
					t.Errorf("step %d: dual data without a goal", s.Step)
				}
				if n, err := sd.Solution.EnergyNorm(p); err != nil || n != s.EnergyNorm || !(n > 0) {
					t.Errorf("step %d: energy norm %g (%v), record %g", s.Step, n, err, s.EnergyNorm)
				}
				return nil
			}}, Method{})
	if err != nil {
		t.Fatal(err)
	}
	if len(seen) != len(res.Steps) || len(seen) != 4 {
		t.Fatalf("OnStepData saw %d steps, the loop made %d", len(seen), len(res.Steps))
	}
	last := seen[len(seen)-1]
	if last.Mesh != res.Mesh || last.Solution != res.Solution || last.Indicators != res.Indicators {
		t.Error("the last step's data are not those of the result")
	}
	// An error from OnStepData stops the loop at the record stage, matchable.
	stop := errors.New("enough")
	_, err = Run(context.Background(), Problem{Mesh: m, Degree: 1, Data: p},
		Settings{MaxSteps: 4, OnStepData: func(sd StepData) error {
			if sd.Step.Step == 1 {
				return stop
			}
			return nil
		}}, Method{})
	var se *StepError
	if !errors.Is(err, stop) || !errors.As(err, &se) || se.Step != 1 || se.Stage != StageRecord {
		t.Errorf("error %v, want step 1, stage record, wrapping the observer's error", err)
	}
}

// RelTol stops the loop at the first step with η ≤ RelTol |||u_h|||. The
// ratios η/|||u_h||| of a run without it give the boundary: RelTol equal to
// step k's ratio (raised to the next float64 if rounding puts η just
// above RelTol |||u_h|||) stops at k when k is the first step of that
// ratio or less; the next float64 below it does not.
func TestRelTol(t *testing.T) {
	t.Parallel()
	_, p := known.LShape()
	m, _ := mesh.LShape(2)
	pr := Problem{Mesh: m, Degree: 1, Data: p}
	ref, err := Run(context.Background(), pr, Settings{MaxSteps: 8}, Method{})
	if err != nil {
		t.Fatal(err)
	}
	ratio := func(s Step) float64 { return s.Estimate / s.EnergyNorm }
	k := len(ref.Steps) - 2
	for j := range k {
		if ratio(ref.Steps[j]) <= ratio(ref.Steps[k]) {
			t.Fatalf("step %d has ratio %g ≤ step %d's %g: pick another step", j, ratio(ref.Steps[j]), k, ratio(ref.Steps[k]))
		}
	}
	rel := ratio(ref.Steps[k])
	if ref.Steps[k].Estimate > rel*ref.Steps[k].EnergyNorm {
		rel = math.Nextafter(rel, 1)
	}
	res, err := Run(context.Background(), pr, Settings{RelTol: rel, MaxSteps: 8}, Method{})
	if err != nil {
		t.Fatal(err)
	}
	if res.Status != Converged || len(res.Steps) != k+1 {
		t.Errorf("RelTol = %.17g: status %v after %d steps, want converged after %d", rel, res.Status, len(res.Steps), k+1)
	}
	below := math.Nextafter(ratio(ref.Steps[k]), 0)
	if ref.Steps[k].Estimate <= below*ref.Steps[k].EnergyNorm {
		below = math.Nextafter(below, 0)
	}
	res, err = Run(context.Background(), pr, Settings{RelTol: below, MaxSteps: 8}, Method{})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Steps) == k+1 && res.Status == Converged {
		t.Errorf("RelTol = %.17g just below step %d's ratio stopped there", below, k)
	}
	for _, bad := range []float64{-0.1, 1, math.NaN(), math.Inf(1)} {
		if _, err := Run(context.Background(), pr, Settings{RelTol: bad, MaxSteps: 2}, Method{}); !errors.Is(err, ErrSettings) {
			t.Errorf("RelTol = %g: %v, want ErrSettings", bad, err)
		}
	}
	// RelTol alone is a stop rule.
	if _, err := Run(context.Background(), pr, Settings{RelTol: 0.5}, Method{}); err != nil {
		t.Errorf("RelTol alone: %v", err)
	}
}

// The adaptive loop on a Robin problem with the equilibrated estimator:
// u = sin(πx) eʸ (a = 1, f = (π² − 1) u; manufactured, common practice),
// Dirichlet on the left, Robin a∇u·n + α u = g_R on the other sides, P1 and
// P2; the bound η ≥ |||u − u_h||| (with the Robin term) holds on every step
// (the theorem of estimate.Equilibrated), and the loop stops by RelTol.
func TestRobinLoopEquilibrated(t *testing.T) {
	t.Parallel()
	u := func(x, y float64) float64 { return math.Sin(math.Pi*x) * math.Exp(y) }
	grad := func(x, y float64) (float64, float64) { return math.Pi * math.Cos(math.Pi*x) * math.Exp(y), u(x, y) }
	ex := fem.Exact{U: u, Grad: grad}
	robin := func(nx, ny, alpha float64) fem.RobinData {
		return fem.RobinData{Alpha: alpha, G: func(x, y float64) float64 {
			gx, gy := grad(x, y)
			return gx*nx + gy*ny + alpha*u(x, y)
		}}
	}
	p := &fem.Problem{F: func(x, y float64) float64 { return (math.Pi*math.Pi - 1) * u(x, y) },
		Dirichlet: map[int32]fem.Func{mesh.SideLeft: u},
		Robin: map[int32]fem.RobinData{mesh.SideRight: robin(1, 0, 2), mesh.SideTop: robin(0, 1, 0.5),
			mesh.SideBottom: robin(0, -1, 5)}}
	for _, deg := range []int{1, 2} {
		m, _ := mesh.Rectangle(0, 0, 1, 1, 2, 2)
		res, err := Run(context.Background(), Problem{Mesh: m, Degree: deg, Data: p, Exact: &ex},
			Settings{RelTol: 0.02, MaxDOFs: 20000}, Method{Estimator: estimate.Equilibrated{}})
		if err != nil {
			t.Fatal(err)
		}
		for _, s := range res.Steps {
			if s.Estimate < s.Error {
				t.Errorf("P%d step %d: η = %.6g < error %.6g", deg, s.Step, s.Estimate, s.Error)
			}
		}
		last := res.Steps[len(res.Steps)-1]
		if res.Status != Converged || last.Estimate > 0.02*last.EnergyNorm {
			t.Errorf("P%d: status %v, η = %g, |||u_h||| = %g", deg, res.Status, last.Estimate, last.EnergyNorm)
		}
		t.Logf("P%d: %d steps to %d DOFs, η/|||u_h||| = %.4f, effectivity %.3f", deg, len(res.Steps), last.DOFs, last.Estimate/last.EnergyNorm, last.Effectivity)
	}
}
