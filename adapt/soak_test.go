package adapt

import (
	"context"
	"os"
	"runtime"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

// soakEnv names the environment variable that opts in to the long tests
// (TestSoak): they run only when it is "1".
const soakEnv = "POSTERIORI_SOAK"

// meshBytes returns the memory held by the arrays of m.
func meshBytes(m *mesh.Mesh) uint64 {
	return uint64(8*len(m.X) + 4*(len(m.Tri)+len(m.Region)+len(m.Edge)+len(m.TriEdge)+len(m.EdgeTri)+len(m.EdgeTag)))
}

// soakHeapFactor bounds the live heap after each step, as a multiple of the
// current mesh's arrays: the loop holds the mesh, the solution, the
// indicators and the records, and must not keep earlier meshes alive. The
// value is ours, set from the figures this test logs.
const soakHeapFactor = 4 // observed: at most 3.22 after 1e5 triangles (go test -run ^TestSoak$ -v with POSTERIORI_SOAK=1)

// observer is a Solver that remembers the mesh of the current step.
type observer struct {
	FEMSolver
	cur **mesh.Mesh
}

func (o observer) Solve(s *fem.Space, p *fem.Problem, guess []float64) ([]float64, int, error) {
	*o.cur = s.Mesh
	return o.FEMSolver.Solve(s, p, guess)
}

// SolveTo is the method the loop calls (observer is a TargetSolver through
// the embedded FEMSolver).
func (o observer) SolveTo(s *fem.Space, p *fem.Problem, guess []float64, energyTol float64) ([]float64, fem.SolveStats, error) {
	*o.cur = s.Mesh
	return o.FEMSolver.SolveTo(s, p, guess, energyTol)
}

// A long run: the L-shape loop to about 2e6 DOFs (40 steps or more),
// checking after each step, with runtime.ReadMemStats after a GC, that the
// live heap stays within soakHeapFactor times the current mesh's size.
//
// It takes minutes, so it runs only when the environment variable
// POSTERIORI_SOAK is 1 (as .ci/run sets it), and never under -short.
func TestSoak(t *testing.T) {
	if testing.Short() || os.Getenv(soakEnv) != "1" {
		t.Skip("soak test: set " + soakEnv + "=1 to run it (see DEVELOPERS.md)")
	}
	_, p := known.LShape()
	m, _ := mesh.LShape(2)
	var cur *mesh.Mesh
	worst := 0.0
	var ms runtime.MemStats
	res, err := Run(context.Background(), Problem{Mesh: m, Degree: 1, Data: p},
		Settings{MaxDOFs: 2000000, OnStep: func(s Step) error {
			runtime.GC()
			runtime.ReadMemStats(&ms)
			ratio := float64(ms.HeapAlloc) / float64(meshBytes(cur))
			if s.Triangles > 100000 { // small meshes are dwarfed by fixed costs
				worst = max(worst, ratio)
				if ratio > soakHeapFactor {
					t.Errorf("step %d (%d triangles): live heap %d MB is %.1f times the mesh", s.Step, s.Triangles, ms.HeapAlloc>>20, ratio)
				}
			}
			if s.Step%5 == 0 {
				t.Logf("step %d: %d DOFs, %d iterations, live heap %d MB = %.2f × mesh", s.Step, s.DOFs, s.Iterations, ms.HeapAlloc>>20, ratio)
			}
			return nil
		}}, Method{Solver: observer{FEMSolver{}, &cur}})
	if err != nil {
		t.Fatal(err)
	}
	last := res.Steps[len(res.Steps)-1]
	t.Logf("%d steps to %d DOFs; largest live heap / mesh after 1e5 triangles: %.2f", len(res.Steps), last.DOFs, worst)
	if len(res.Steps) < 40 {
		t.Errorf("%d steps, want at least 40", len(res.Steps))
	}
}
