package fem

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/posteriori-fem/posteriori/mesh"
)

// distorted returns a Rectangle mesh of [0,2]×[0,1] whose interior vertices
// are moved randomly by up to 0.3 of a cell.
func distorted(t *testing.T, n int) *mesh.Mesh {
	t.Helper()
	m, err := mesh.Rectangle(0, 0, 2, 1, 2*n, n)
	if err != nil {
		t.Fatal(err)
	}
	r := rand.New(rand.NewPCG(1, 1))
	x := append([]float64(nil), m.X...)
	h := 1 / float64(n)
	for i := range m.NumVertices() {
		if x[2*i] > 0 && x[2*i] < 2 && x[2*i+1] > 0 && x[2*i+1] < 1 {
			x[2*i] += 0.3 * h * (2*r.Float64() - 1)
			x[2*i+1] += 0.3 * h * (2*r.Float64() - 1)
		}
	}
	ab, tag := m.BoundaryEdges()
	d, _, err := mesh.New(mesh.Arrays{X: x, Tri: m.Tri, Region: m.Region, Bnd: ab, BndTag: tag})
	if err != nil {
		t.Fatal(err)
	}
	return d
}

// The patch test: a solution in the discrete space is reproduced to
// rounding (Galerkin orthogonality; common practice).
func TestPatch(t *testing.T) {
	t.Parallel()
	a := Tensor{XX: 2, XY: 0.5, YY: 1}
	tests := []struct {
		name   string
		degree int
		u      Func
		grad   func(x, y float64) (float64, float64)
		f      float64 // −∇·(a∇u), constant
	}{
		{"P1 linear", 1, func(x, y float64) float64 { return 1 + 2*x - 3*y },
			func(x, y float64) (float64, float64) { return 2, -3 }, 0},
		// u = x² − xy + 2y² + x: u_xx = 2, u_xy = −1, u_yy = 4, so
		// −∇·(a∇u) = −(2·2 + 2·0.5·(−1) + 1·4) = −7.
		{"P2 quadratic", 2, func(x, y float64) float64 { return x*x - x*y + 2*y*y + x },
			func(x, y float64) (float64, float64) { return 2*x - y + 1, -x + 4*y }, -7},
	}
	for _, tc := range tests {
		for _, neumann := range []bool{false, true} {
			name := tc.name
			if neumann {
				name += " Neumann"
			}
			t.Run(name, func(t *testing.T) {
				t.Parallel()
				m := distorted(t, 4)
				s, _ := NewSpace(m, tc.degree)
				f := tc.f
				p := &Problem{
					A:         map[int32]Tensor{0: a},
					F:         func(x, y float64) float64 { return f },
					Dirichlet: map[int32]Func{mesh.SideBottom: tc.u, mesh.SideLeft: tc.u, mesh.SideRight: tc.u, mesh.SideTop: tc.u},
				}
				if neumann {
					// g_N = a∇u·n on the top (n = (0, 1)) and right (n = (1, 0)).
					flux := func(nx, ny float64) Func {
						return func(x, y float64) float64 {
							gx, gy := tc.grad(x, y)
							fx, fy := a.Apply(gx, gy)
							return fx*nx + fy*ny
						}
					}
					delete(p.Dirichlet, mesh.SideTop)
					delete(p.Dirichlet, mesh.SideRight)
					p.Neumann = map[int32]Func{mesh.SideTop: flux(0, 1), mesh.SideRight: flux(1, 0)}
				}
				u, stats, err := Solve(s, p)
				if err != nil {
					t.Fatal(err)
				}
				worst := 0.0
				for i, v := range u.U {
					x, y := s.DOFPoint(i)
					worst = max(worst, math.Abs(v-tc.u(x, y)))
				}
				// Solver tolerance 1e-10 relative on a well-conditioned
				// 100-DOF system: the error is near rounding.
				if worst > 1e-9 {
					t.Errorf("max nodal error %g after %d iterations", worst, stats.Iterations)
				}
			})
		}
	}
}
