package estimate

import (
	"math"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

// touchesOrigin reports whether triangle k has the origin as a vertex.
func touchesOrigin(m *mesh.Mesh, k int) bool {
	for _, v := range m.Tri[3*k : 3*k+3] {
		if x, y := m.Vertex(int(v)); x == 0 && y == 0 {
			return true
		}
	}
	return false
}

// The Kellogg checkerboard (Kellogg 1975, γ = 0.1, constants in
// internal/problems): the solution is singular at the origin, so the
// largest indicators sit on the triangles that touch it.
func TestKelloggLargestAtOrigin(t *testing.T) {
	t.Parallel()
	ex, p := known.Kellogg()
	m, _ := mesh.Quadrants(8)
	for _, deg := range []int{1, 2} {
		u, _, _ := run(t, m, deg, ex, p)
		for _, tc := range estimators {
			in := estimateTotal(t, tc.est, u, p)
			best := 0
			for k, v := range in.Eta2 {
				if v > in.Eta2[best] {
					best = k
				}
			}
			if !touchesOrigin(m, best) {
				t.Errorf("P%d %s: largest indicator on triangle %d, which does not touch the origin", deg, tc.name, best)
			}
		}
	}
}

// The exact flux a∇u·n is continuous across an interface while ∇u·n jumps
// by the contrast. Take u = x for x < 0 and u = x/R for x > 0 with a = 1 and
// a = R (R = 161, the Kellogg contrast): a∇u = (1, 0) on both sides, so u
// solves the interface problem with f = 0 (closed form), and it is
// piecewise linear on a mesh aligned with x = 0, hence its own P1 solution.
// The residual estimator with a in the jump gives η = 0; the version that
// leaves a out sees the jump 1 − 1/R on every interface edge.
func TestCoefficientInJump(t *testing.T) {
	t.Parallel()
	const r = known.KelloggR
	ex := interfaceLinear(r)
	u := ex.U
	p := &fem.Problem{
		A:         map[int32]fem.Tensor{1: fem.Scalar(r), 2: fem.Scalar(1), 3: fem.Scalar(1), 4: fem.Scalar(r)},
		Dirichlet: map[int32]fem.Func{mesh.SideBottom: u, mesh.SideRight: u, mesh.SideTop: u, mesh.SideLeft: u},
	}
	m, _ := mesh.Quadrants(4)
	uh, _, e := run(t, m, 1, ex, p)
	if e > 1e-9 {
		t.Fatalf("the piecewise linear solution is not reproduced: error %g", e)
	}
	good := estimateTotal(t, Residual{}, uh, p).Total()
	plain := estimateTotal(t, Residual{plainJumps: true}, uh, p).Total()
	// Without a: the 2n interface edges (length h = 1/n, n = 4) each give
	// h_E ‖J‖²_E = h² (1 − 1/R)², half to each side, so
	// η² = 2n h² (1 − 1/R)² = (2/n)(1 − 1/R)² (arithmetic from the formula).
	want := math.Sqrt(2.0/4) * (1 - 1/r)
	t.Logf("η with a in the jump %.3g, without %.6g (formula %.6g)", good, plain, want)
	if good > 1e-9 {
		t.Errorf("η = %g with a in the jump, want 0", good)
	}
	if math.Abs(plain-want) > 1e-9 {
		t.Errorf("η = %g without a in the jump, want %g", plain, want)
	}
}

// On the Kellogg problem itself the weights matter as much: leaving a out
// of the jumps and the weights makes the estimate several times smaller
// than the error (it is no longer reliable), while the residual estimator
// stays in its band.
func TestKelloggCoefficientInJump(t *testing.T) {
	t.Parallel()
	ex, p := known.Kellogg()
	m, _ := mesh.Quadrants(16)
	u, e2, e := run(t, m, 1, ex, p)
	in := estimateTotal(t, Residual{}, u, p)
	bad := estimateTotal(t, Residual{plainJumps: true}, u, p)
	ag, err := Assess(in, e2, 0.5)
	if err != nil {
		t.Fatal(err)
	}
	ap, err := Assess(bad, e2, 0.5)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("N=%d: effectivity %.3f with a, %.3f without; Dörfler(0.5) finds %.3f (ideal %.3f) with a, %.3f (ideal %.3f) without",
		u.Space.NumDOF(), in.Total()/e, bad.Total()/e, ag.Found, ag.Ideal, ap.Found, ap.Ideal)
	if eff := in.Total() / e; eff < residualLow || eff > residualHigh {
		t.Errorf("residual effectivity %.3f outside [%g, %g]", eff, residualLow, residualHigh)
	}
	if eff := bad.Total() / e; eff >= residualLow {
		t.Errorf("without a the effectivity is %.3f: the comparison shows no loss of reliability", eff)
	}
}

// A globally linear function is in the P1 space: with f = 0 and a = 1 it is
// its own finite element solution, and every indicator vanishes to
// rounding (common practice).
func TestLinearIndicatorsZero(t *testing.T) {
	t.Parallel()
	lin := func(x, y float64) float64 { return 0.5 + 2*x - 3*y }
	ex := fem.Exact{U: lin, Grad: func(x, y float64) (float64, float64) { return 2, -3 }}
	all := map[int32]fem.Func{1: lin, 2: lin, 3: lin, 4: lin, 5: lin, 6: lin}
	for _, gen := range []func() (*mesh.Mesh, error){
		func() (*mesh.Mesh, error) { return mesh.LShape(3) },
		func() (*mesh.Mesh, error) { return mesh.Quadrants(3) },
	} {
		m, _ := gen()
		p := &fem.Problem{Dirichlet: map[int32]fem.Func{}}
		for _, e := range m.EdgeTag {
			if e >= 0 {
				p.Dirichlet[e] = all[e]
			}
		}
		for _, deg := range []int{1, 2} {
			u, _, e := run(t, m, deg, ex, p)
			if e > 1e-10 {
				t.Fatalf("P%d: the linear function is not reproduced: error %g", deg, e)
			}
			for _, tc := range estimators {
				in := estimateTotal(t, tc.est, u, p)
				// |∇u| ≈ 3.6 on a domain of size 2: rounding of the solve
				// (tolerance 1e-12) and of the gradients.
				if eta := in.Total(); eta > 1e-9 {
					t.Errorf("P%d %s: η = %g, want 0", deg, tc.name, eta)
				}
			}
		}
	}
}

// interfaceLinear returns u = x for x ≤ 0 and x/R for x > 0, the solution
// of −∇·(a∇u) = 0 with a = 1 left of x = 0 and a = R right of it: a∇u =
// (1, 0) on both sides, so the flux is continuous (closed form).
func interfaceLinear(contrast float64) fem.Exact {
	return fem.Exact{U: func(x, y float64) float64 {
		if x > 0 {
			return x / contrast
		}
		return x
	}, Grad: func(x, y float64) (float64, float64) {
		if x > 0 {
			return 1 / contrast, 0
		}
		return 1, 0
	}}
}
