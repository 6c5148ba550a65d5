package estimate

import (
	"math"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Numerical edge cases: thin triangles (angles down to 1e-3 rad), a
// coefficient contrast of 1e8, and a domain of size 1e-9. The solver and
// every estimator must either give the right answer or a clear error —
// never NaN. The exact solutions are in the discrete space (patch test,
// common practice), so the true error is zero to rounding.
func TestEdgeCases(t *testing.T) {
	t.Parallel()
	lin := func(x, y float64) float64 { return 1 + 2*x - 3*y }
	linEx := fem.Exact{U: lin, Grad: func(x, y float64) (float64, float64) { return 2, -3 }}
	all := func(g fem.Func) map[int32]fem.Func {
		return map[int32]fem.Func{mesh.SideBottom: g, mesh.SideRight: g, mesh.SideTop: g, mesh.SideLeft: g}
	}
	// Piecewise linear across x = 0 with a = R for x > 0: a∇u = (1, 0).
	const contrast = 1e8
	pwEx := interfaceLinear(contrast)
	pw := pwEx.U
	thin, _ := mesh.Rectangle(0, 0, 2, 2e-3, 2, 2)  // cells 1 × 1e-3: angles ≈ 1e-3 rad, one free vertex
	thin4, _ := mesh.Rectangle(0, 0, 8, 4e-3, 8, 4) // the same with 21 free vertices
	tiny, _ := mesh.Rectangle(0, 0, 1e-9, 1e-9, 8, 8)
	quads, _ := mesh.Quadrants(4)
	// Graded to h ≈ 1e-9 at the corner (0, 0) by 60 bisections there.
	graded, _ := mesh.Rectangle(0, 0, 1, 1, 2, 2)
	for range 60 {
		marked := make([]bool, graded.NumTriangles())
		for k := range marked {
			for _, v := range graded.Tri[3*k : 3*k+3] {
				if x, y := graded.Vertex(int(v)); x == 0 && y == 0 {
					marked[k] = true
				}
			}
		}
		graded, _, _ = graded.Refine(marked)
	}
	hom := func(x, y float64) float64 { return 2*x - 3*y } // no constant: on a domain of size 1e-9 a constant would swamp the variation
	tests := []struct {
		name string
		m    *mesh.Mesh
		p    *fem.Problem
		ex   fem.Exact
	}{
		{"angle 1e-3", thin, &fem.Problem{Dirichlet: all(lin)}, linEx},
		{"angles 1e-3, 32 cells", thin4, &fem.Problem{Dirichlet: all(lin)}, linEx},
		{"domain of size 1e-9", tiny, &fem.Problem{Dirichlet: all(hom)}, fem.Exact{U: hom, Grad: linEx.Grad}},
		{"graded to h = 1e-9", graded, &fem.Problem{Dirichlet: all(lin)}, linEx},
		{"contrast 1e8", quads, &fem.Problem{
			A:         map[int32]fem.Tensor{1: fem.Scalar(contrast), 2: fem.Scalar(1), 3: fem.Scalar(1), 4: fem.Scalar(contrast)},
			Dirichlet: all(pw),
		}, pwEx},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			q, err := tc.m.Quality()
			if err != nil {
				t.Fatal(err)
			}
			s, _ := fem.NewSpace(tc.m, 1)
			sys, err := fem.Assemble(s, tc.p)
			if err != nil {
				t.Fatal(err)
			}
			// Jacobi shows the conditioning; multigrid solves these small
			// systems on its coarsest level, directly.
			u, stats, err := sys.Solve(fem.SolveSettings{Tol: 1e-12, Preconditioner: fem.Diagonal})
			if err != nil {
				t.Fatalf("solve: %v", err) // a clear error is allowed, but these are solvable
			}
			um, mstats, err := sys.Solve(fem.SolveSettings{Tol: 1e-12})
			if err != nil {
				t.Fatalf("multigrid solve: %v", err)
			}
			for i := range u.U {
				if d := math.Abs(u.U[i] - um.U[i]); d > 1e-9*max(1, math.Abs(u.U[i])) {
					t.Fatalf("Jacobi and multigrid solutions differ by %g at DOF %d", d, i)
				}
			}
			_, e, err := u.Error(nil, tc.ex, tc.p)
			if err != nil {
				t.Fatal(err)
			}
			// Relative to the size of the solution's gradient.
			_, g := tc.ex.Grad(0.5, 0.5)
			scale := math.Hypot(2, 3) * math.Sqrt(areaOf(tc.m))
			if math.IsNaN(e.Energy) || e.Energy > 1e-6*scale*max(1, math.Abs(g)) {
				t.Errorf("energy error %g (scale %g) after %d iterations", e.Energy, scale, stats.Iterations)
			}
			for _, est := range estimators {
				in := estimateTotal(t, est.est, u, tc.p)
				for k, v := range in.Eta2 {
					if math.IsNaN(v) || math.IsInf(v, 0) {
						t.Fatalf("%s: η² of triangle %d is %g", est.name, k, v)
					}
				}
				if eta := in.Total(); eta > 1e-6*scale {
					t.Errorf("%s: η = %g for an exact solution (scale %g)", est.name, eta, scale)
				}
			}
			t.Logf("min angle %.3g rad, h from %.3g to %.3g: %d Jacobi-CG iterations (multigrid %d), residual %.2g, energy error %.3g",
				q.MinAngle, q.HMin, q.HMax, stats.Iterations, mstats.Iterations, stats.Residual, e.Energy)
		})
	}
}

func areaOf(m *mesh.Mesh) float64 {
	a := 0.0
	for k := range m.NumTriangles() {
		a += m.Area(k)
	}
	return a
}
