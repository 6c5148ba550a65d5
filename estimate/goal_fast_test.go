package estimate

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

// goalFastCase is a problem and a goal for the comparison of the paths of
// DualWeighted.
type goalFastCase struct {
	name string
	p    *fem.Problem
	g    fem.Goal
}

// goalFastCases are the L-shape with the mean over [0.5, 1]² and with the
// flux through the top side (the runs of adapt's TestGoalRates), and a
// problem with a source, a reaction term and Neumann data, which exercise
// every term of ρ_T.
func goalFastCases() []goalFastCase {
	ex, pL := known.LShape()
	pF := &fem.Problem{
		Dirichlet: map[int32]fem.Func{1: ex.U, 2: nil, 3: nil, 5: ex.U},
		Neumann: map[int32]fem.Func{
			4: func(x, y float64) float64 { gx, _ := ex.Grad(x, y); return gx },
			6: func(x, y float64) float64 { gx, _ := ex.Grad(x, y); return -gx },
		},
	}
	pR := &fem.Problem{ // invented data
		A: map[int32]fem.Tensor{0: {XX: 2, XY: 0.5, YY: 1}},
		C: 3, F: func(x, y float64) float64 { return math.Sin(3*x) + y*y },
		Dirichlet: map[int32]fem.Func{1: ex.U, 2: nil, 3: nil},
		Neumann:   map[int32]fem.Func{4: func(x, y float64) float64 { return 1 + x*y }},
	}
	return []goalFastCase{
		{"box", pL, fem.BoxMean{X0: 0.5, Y0: 0.5, X1: 1, Y1: 1}},
		{"flux", pF, fem.Flux{Tag: 5}},
		{"reaction", pR, fem.Mean{W: func(x, y float64) float64 { return 1 + x }}},
	}
}

// solvePair returns the primal and the dual solution of c on s.
func solvePair(t *testing.T, s *fem.Space, c goalFastCase) (u, z *fem.Function) {
	t.Helper()
	u, _, err := fem.Solve(s, c.p)
	if err != nil {
		t.Fatal(err)
	}
	z, _, err = fem.Solve(s, fem.Dual(c.p, c.g))
	if err != nil {
		t.Fatal(err)
	}
	return u, z
}

// TestDualWeightedFastPath checks the fast path of DualWeighted (goalFast)
// against the general path (goalElement), which evaluates every term at
// its quadrature points from each side of each edge: the same sums in
// another order, so each ρ_T and ι_T² agrees to within 1e-10 of the
// largest |ρ_T| and ι_T² of the mesh, and Σ ρ_T to within 1e-10 of Σ |ρ_T|
// (arithmetic tolerance: sums of a few dozen terms per triangle, common
// practice, no source). The meshes are those of six steps of goal marking
// (the largest tenth of ι_T² marked) from the L-shape, P1 and P2.
func TestDualWeightedFastPath(t *testing.T) {
	t.Parallel()
	const tol = 1e-10
	for _, c := range goalFastCases() {
		for _, deg := range []int{1, 2} {
			m, _ := mesh.LShape(2)
			for step := range 6 {
				s, _ := fem.NewSpace(m, deg)
				u, z := solvePair(t, s, c)
				gen, err := DualWeighted{Goal: c.g, general: true}.Estimate(nil, u, z, c.p)
				if err != nil {
					t.Fatal(err)
				}
				fast, err := DualWeighted{Goal: c.g}.Estimate(nil, u, z, c.p)
				if err != nil {
					t.Fatal(err)
				}
				name := fmt.Sprintf("%s P%d step %d (%d triangles)", c.name, deg, step, m.NumTriangles())
				var maxRho, maxMark, absSum float64
				for k := range gen.Rho {
					maxRho = max(maxRho, math.Abs(gen.Rho[k]))
					maxMark = max(maxMark, gen.Mark2[k])
					absSum += math.Abs(gen.Rho[k])
				}
				if maxRho == 0 || maxMark == 0 {
					t.Fatalf("%s: the general path gives zero indicators", name)
				}
				for k := range gen.Rho {
					if d := math.Abs(fast.Rho[k] - gen.Rho[k]); d > tol*maxRho {
						t.Fatalf("%s: triangle %d: ρ_T = %.17g, general path %.17g", name, k, fast.Rho[k], gen.Rho[k])
					}
					if d := math.Abs(fast.Mark2[k] - gen.Mark2[k]); d > tol*maxMark {
						t.Fatalf("%s: triangle %d: ι_T² = %.17g, general path %.17g", name, k, fast.Mark2[k], gen.Mark2[k])
					}
				}
				if d := math.Abs(fast.Total() - gen.Total()); d > tol*absSum {
					t.Fatalf("%s: Σ ρ_T = %.17g, general path %.17g", name, fast.Total(), gen.Total())
				}
				marks := make([]bool, m.NumTriangles())
				for k, v := range gen.Mark2 {
					marks[k] = v >= 0.1*maxMark
				}
				if m, _, err = m.Refine(marks); err != nil {
					t.Fatal(err)
				}
			}
		}
	}
}

// TestDualWeightedFastProcs checks that the fast path gives bit-identical
// indicators with GOMAXPROCS 1 and 2, on a mesh large enough to be split.
func TestDualWeightedFastProcs(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	for _, c := range goalFastCases() {
		for _, deg := range []int{1, 2} {
			m, _ := mesh.LShape(24) // 6912 triangles: chunks of 512 over two goroutines
			s, _ := fem.NewSpace(m, deg)
			u, z := solvePair(t, s, c)
			var ref *GoalIndicators
			for i, procs := range []int{1, 2, 1} {
				runtime.GOMAXPROCS(procs)
				in, err := DualWeighted{Goal: c.g}.Estimate(nil, u, z, c.p)
				if err != nil {
					t.Fatal(err)
				}
				if i == 0 {
					ref = in
					continue
				}
				for k := range in.Rho {
					if in.Rho[k] != ref.Rho[k] || in.Mark2[k] != ref.Mark2[k] {
						t.Fatalf("%s P%d GOMAXPROCS=%d: triangle %d: (%g, %g), GOMAXPROCS=1 (%g, %g)", c.name, deg, procs, k, in.Rho[k], in.Mark2[k], ref.Rho[k], ref.Mark2[k])
					}
				}
			}
		}
	}
}

// A source whose values are finite but whose squares are beyond the range
// of float64 (IEEE 754: about 1.8e308) is an error wrapping ErrNotFinite
// from both paths of DualWeighted, with no indicators; a source of 1e150
// gives finite ones.
func TestDualWeightedSquaresOverflow(t *testing.T) {
	t.Parallel()
	m, _ := mesh.Rectangle(0, 0, 1, 1, 4, 4)
	g := fem.BoxMean{X0: 0.3, Y0: 0.1, X1: 0.8, Y1: 0.45}
	for _, deg := range []int{1, 2} {
		s, _ := fem.NewSpace(m, deg)
		for _, big := range []float64{1e308, 1e150} {
			_, p := known.Sine()
			p.F = func(x, y float64) float64 { return big / 2 * (1 + x*y) }
			u, _, err := fem.Solve(s, fem.Dual(p, g)) // any finite u_h will do
			if err != nil {
				t.Fatal(err)
			}
			z, _ := fem.Interpolate(s, func(x, y float64) float64 { return x * (1 - x) * y * (1 - y) })
			for _, general := range []bool{false, true} {
				gi, err := DualWeighted{Goal: g, general: general}.Estimate(nil, u, z, p)
				switch {
				case big > 1e200 && (!errors.Is(err, ErrNotFinite) || gi != nil):
					t.Errorf("P%d general=%v f ~ %g: got %v; want ErrNotFinite", deg, general, big, err)
				case big < 1e200 && err != nil:
					t.Errorf("P%d general=%v f ~ %g: %v", deg, general, big, err)
				case big < 1e200 && !(math.Abs(gi.Total()) < math.Inf(1)):
					t.Errorf("P%d general=%v f ~ %g: total %g", deg, general, big, gi.Total())
				}
			}
		}
	}
}
