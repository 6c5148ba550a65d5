package adapt

import (
	"bytes"
	"context"
	"errors"
	"strings"
	"testing"
	"time"

	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

func TestCSVRoundTrip(t *testing.T) {
	t.Parallel()
	steps := []Step{
		{Step: 0, Triangles: 24, DOFs: 21, FreeDOFs: 5, Estimate: 0.1234567890123, Oscillation: 0, HasError: true,
			Error: 0.05, Effectivity: 2.469135780246, Marked: 3, Iterations: 7, SolveTime: 1500 * time.Microsecond},
		{Step: 1, Triangles: 30, DOFs: 25, FreeDOFs: 9, Estimate: 1e-300, Oscillation: 3.5e-7, Marked: 0, Iterations: 0,
			EstimateTime: time.Second, ErrorTime: 0, MarkTime: 3 * time.Nanosecond, RefineTime: time.Hour},
		{Step: 2, Triangles: 44, DOFs: 31, FreeDOFs: 15, Estimate: 0.01, Iterations: 27, AtFloor: true, Algebraic: 1.25e-3,
			EnergyNorm: 2.718281828459045},
	}
	var b bytes.Buffer
	if err := WriteCSV(&b, steps); err != nil {
		t.Fatal(err)
	}
	if first := strings.SplitN(b.String(), "\n", 2)[0]; first != strings.Join(CSVHeader, ",") {
		t.Fatalf("header %q", first)
	}
	got, err := ReadCSV(&b)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != len(steps) {
		t.Fatalf("%d records, want %d", len(got), len(steps))
	}
	for i := range steps {
		if got[i] != steps[i] {
			t.Errorf("record %d: %+v, want %+v", i, got[i], steps[i])
		}
	}
	head := strings.Join(CSVHeader, ",") + "\n"
	for _, bad := range []string{
		"",
		"step,dofs\n",
		head + "0,1,2,3,0.1,0,,,0,0,0,0,0,0,0,false\n",        // too few fields (the former 16 columns under the new header)
		head + "0,1,2,3,x,0,,,0,0,0,0,0,0,0,false,0\n",        // not a number
		head + "0,-1,2,3,0.1,0,,,0,0,0,0,0,0,0,false,0\n",     // negative count
		head + "0,1,2,3,NaN,0,,,0,0,0,0,0,0,0,false,0\n",      // NaN
		head + "0,1,2,3,0.1,0,0.5,,0,0,0,0,0,0,0,false,0\n",   // effectivity missing
		head + "0,1,2,3,0.1,0,,,0,0,0,0,0,0,+Inf,false,0\n",   // infinite time
		head + "0,1,2,3,0.1,0,,,0,0,0,0,0,0,0,,0\n",           // at_floor empty
		head + "0,1,2,3,0.1,0,,,0,0,0,0,0,0,0,1,0\n",          // at_floor not true or false
		head + "0,1,2,3,0.1,0,,,0,0,0,0,0,0,0,false,NaN\n",    // algebraic NaN
		head + "0,1,2,3,0.1,0,,,0,0,0,0,0,0,0,false,0,true\n", // too many fields
		strings.Join(CSVHeader[:15], ",") + "\n",              // header shorter than the first version
		strings.Join(CSVHeader, ",") + ",goal\n",              // a column this version does not know
	} {
		if _, err := ReadCSV(strings.NewReader(bad)); !errors.Is(err, ErrCSV) {
			t.Errorf("%q: %v, want ErrCSV", bad, err)
		}
	}
}

// A file of the first version (16 columns, up to at_floor) reads with the
// later fields zero.
func TestCSVEarlierVersion(t *testing.T) {
	t.Parallel()
	old := strings.Join(CSVHeader[:16], ",") + "\n0,24,21,5,0.5,0,0.25,2,3,7,0.0015,0,0,0,0,true\n"
	got, err := ReadCSV(strings.NewReader(old))
	if err != nil {
		t.Fatal(err)
	}
	want := Step{Triangles: 24, DOFs: 21, FreeDOFs: 5, Estimate: 0.5, HasError: true, Error: 0.25, Effectivity: 2,
		Marked: 3, Iterations: 7, SolveTime: 1500 * time.Microsecond, AtFloor: true}
	if len(got) != 1 || got[0] != want {
		t.Fatalf("got %+v, want %+v", got, want)
	}
}

// A file of the version before energy_norm (up to goal_error) reads with
// EnergyNorm zero.
func TestCSVBeforeEnergyNorm(t *testing.T) {
	t.Parallel()
	old := strings.Join(CSVHeader[:20], ",") + "\n0,24,21,5,0.5,0,,,3,7,0,0,0,0,0,false,0,1.5,0.25,\n"
	got, err := ReadCSV(strings.NewReader(old))
	if err != nil {
		t.Fatal(err)
	}
	want := Step{Triangles: 24, DOFs: 21, FreeDOFs: 5, Estimate: 0.5, Marked: 3, Iterations: 7,
		HasGoal: true, Goal: 1.5, GoalEstimate: 0.25}
	if len(got) != 1 || got[0] != want {
		t.Fatalf("got %+v, want %+v", got, want)
	}
	if CSVHeader[len(CSVHeader)-1] != "energy_norm" {
		t.Errorf("last column %q, want energy_norm", CSVHeader[len(CSVHeader)-1])
	}
}

// solverFunc adapts a function to the Solver interface.
type solverFunc func(s *fem.Space, p *fem.Problem, guess []float64) ([]float64, int, error)

func (f solverFunc) Solve(s *fem.Space, p *fem.Problem, guess []float64) ([]float64, int, error) {
	return f(s, p, guess)
}

// A caller's solver sees the previous solution carried to its mesh as the
// guess; a solver error stops the loop with the step and stage.
func TestSolverHook(t *testing.T) {
	t.Parallel()
	ex, p := known.LShape()
	m, _ := mesh.LShape(2)
	calls := 0
	solver := solverFunc(func(s *fem.Space, p *fem.Problem, guess []float64) ([]float64, int, error) {
		if (calls == 0) != (guess == nil) {
			t.Errorf("call %d: guess %v", calls, guess != nil)
		}
		if guess != nil && len(guess) != s.NumDOF() {
			t.Errorf("call %d: guess of length %d for %d DOFs", calls, len(guess), s.NumDOF())
		}
		calls++
		if calls == 4 {
			return nil, 0, errors.New("no convergence in the caller's solver")
		}
		return FEMSolver{}.Solve(s, p, guess)
	})
	res, err := Run(context.Background(), Problem{Mesh: m, Degree: 1, Data: p, Exact: &ex}, Settings{MaxSteps: 10}, Method{Solver: solver})
	var se *StepError
	if !errors.As(err, &se) || se.Step != 3 || se.Stage != StageSolve {
		t.Fatalf("error %v, want step 3 solve", err)
	}
	if len(res.Steps) != 3 || res.Mesh == nil {
		t.Fatalf("%d steps kept, want 3", len(res.Steps))
	}
}

// estimatorFunc adapts a function to the estimate.Estimator interface.
type estimatorFunc func(dst *estimate.Indicators, u *fem.Function, p *fem.Problem) (*estimate.Indicators, error)

func (f estimatorFunc) Estimate(dst *estimate.Indicators, u *fem.Function, p *fem.Problem) (*estimate.Indicators, error) {
	return f(dst, u, p)
}

// An estimator error and a solver that does not converge stop the loop
// with the step and stage; the completed steps and the last good mesh stay
// available.
func TestLoopStageErrors(t *testing.T) {
	t.Parallel()
	_, p := known.LShape()
	m, _ := mesh.LShape(2)
	calls := 0
	failing := estimatorFunc(func(dst *estimate.Indicators, u *fem.Function, p *fem.Problem) (*estimate.Indicators, error) {
		calls++
		if calls == 3 {
			return nil, errors.New("indicator table full")
		}
		return estimate.Residual{}.Estimate(dst, u, p)
	})
	res, err := Run(context.Background(), Problem{Mesh: m, Degree: 1, Data: p}, Settings{MaxSteps: 10}, Method{Estimator: failing})
	var se *StepError
	if !errors.As(err, &se) || se.Step != 2 || se.Stage != StageEstimate || !strings.Contains(err.Error(), "step 2: estimate") {
		t.Fatalf("error %v, want step 2 estimate", err)
	}
	if len(res.Steps) != 2 || res.Mesh.NumTriangles() != res.Steps[1].Triangles {
		t.Fatalf("kept %d steps, mesh of %d triangles", len(res.Steps), res.Mesh.NumTriangles())
	}
	// The library's solver limited to 2 iterations fails at the first step
	// with interior unknowns.
	res, err = Run(context.Background(), Problem{Mesh: m, Degree: 1, Data: p}, Settings{MaxSteps: 10},
		Method{Solver: FEMSolver{Settings: fem.SolveSettings{MaxIter: 2, Preconditioner: fem.Diagonal}}})
	if !errors.As(err, &se) || se.Stage != StageSolve || !errors.Is(err, fem.ErrNotConverged) {
		t.Fatalf("error %v, want a solve-stage ErrNotConverged", err)
	}
	if len(res.Steps) != se.Step {
		t.Fatalf("%d steps kept, failure at step %d", len(res.Steps), se.Step)
	}
}
