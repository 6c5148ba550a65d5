package estimate

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

// The patch test: for u linear (P1) or quadratic (P2) and constant a, the
// flux −a∇u is in RT_{p−1}, so the projection reproduces it, σ = −a∇u, and
// η = 0 (closed form: the minimum of ‖a^{−½}(σ + a∇u_h)‖ is zero and is
// attained only there). Checked with an anisotropic tensor, with Dirichlet
// data on every side and with Neumann data g_N = a∇u·n on two sides (a
// polynomial of degree p − 1, so its projection is exact).
func TestFluxPatch(t *testing.T) {
	t.Parallel()
	a := fem.Tensor{XX: 2, XY: 0.5, YY: 1}
	type poly struct {
		deg  int
		u    fem.Func
		grad func(x, y float64) (float64, float64)
		f    float64
	}
	polys := []poly{
		{1, func(x, y float64) float64 { return 1 + 2*x - 3*y }, func(x, y float64) (float64, float64) { return 2, -3 }, 0},
		// u = x² − xy + 2y² + x: −∇·(a∇u) = −(2·2 + 2·0.5·(−1) + 1·4) = −7.
		{2, func(x, y float64) float64 { return x*x - x*y + 2*y*y + x },
			func(x, y float64) (float64, float64) { return 2*x - y + 1, -x + 4*y }, -7},
	}
	for _, pl := range polys {
		for _, mixed := range []bool{false, true} {
			flux := func(x, y float64) (float64, float64) { return a.Apply(pl.grad(x, y)) }
			p := &fem.Problem{A: map[int32]fem.Tensor{0: a}, F: func(x, y float64) float64 { return pl.f }}
			if mixed {
				p.Dirichlet = map[int32]fem.Func{mesh.SideBottom: pl.u, mesh.SideLeft: pl.u}
				p.Neumann = map[int32]fem.Func{
					mesh.SideRight: func(x, y float64) float64 { fx, _ := flux(x, y); return fx },
					mesh.SideTop:   func(x, y float64) float64 { _, fy := flux(x, y); return fy },
				}
			} else {
				p.Dirichlet = map[int32]fem.Func{mesh.SideBottom: pl.u, mesh.SideRight: pl.u, mesh.SideTop: pl.u, mesh.SideLeft: pl.u}
			}
			m, _ := mesh.Rectangle(0, 0, 1, 1, 5, 4)
			u := solveTol(t, m, pl.deg, p, 1e-14)
			sig, st, err := FluxRecovery{}.Flux(u, p)
			if err != nil {
				t.Fatal(err)
			}
			worst := 0.0
			for k := range m.NumTriangles() {
				for _, l := range [][3]float64{{0.2, 0.3, 0.5}, {1, 0, 0}, {0, 0.5, 0.5}} {
					sx, sy := sig.Local(k, l)
					el := sig.Space.NewElement()
					el.Load(k)
					fx, fy := flux(el.Point(l))
					worst = max(worst, math.Hypot(sx+fx, sy+fy))
				}
			}
			in := estimateTotal(t, FluxRecovery{}, u, p)
			t.Logf("P%d mixed=%v: |σ + a∇u| up to %.3g, η = %.3g, %+v", pl.deg, mixed, worst, in.Total(), st)
			// Tolerance: rounding of the solves, relative to |a∇u| ≈ 5.
			if worst > 1e-11 || in.Total() > 1e-11 {
				t.Errorf("P%d mixed=%v: |σ + a∇u| up to %g, η = %g", pl.deg, mixed, worst, in.Total())
			}
		}
	}
}

// Across an interface the exact flux a∇u is continuous while ∇u jumps. For
// u = x left of x = 0 and x/R right of it, with a = 1 and a = R (R = 161,
// the Kellogg contrast), a∇u = (1, 0) on both sides (closed form), u is its
// own P1 solution on a mesh aligned with x = 0, and −a∇u ∈ RT_0: the
// projection reproduces it and η = 0 (a projection that weighted the two
// sides wrongly, or a recovery of a continuous field, would not).
func TestFluxInterfaceExact(t *testing.T) {
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
	// Tolerance: rounding, relative to |a∇u| = 1 on a domain of area 4.
	if eta := estimateTotal(t, FluxRecovery{}, uh, p).Total(); eta > 1e-12 {
		t.Errorf("η = %g, want 0", eta)
	}
}

// fluxRun runs adaptive refinement (Dörfler θ = 0.5 on the flux recovery
// indicators) from mesh m for steps steps and returns per step the number
// of DOFs, η/‖a^½∇(u − u_h)‖, and the relative change of η between the
// default stopping rule and a solve to the relative residual 1e-10.
func fluxRun(t *testing.T, m *mesh.Mesh, deg int, ex fem.Exact, p *fem.Problem, steps int) (dofs, eff, dev []float64) {
	t.Helper()
	for step := range steps {
		u, _, e := run(t, m, deg, ex, p)
		in := estimateTotal(t, FluxRecovery{}, u, p)
		tight := estimateTotal(t, FluxRecovery{Tol: 1e-9}, u, p)
		dofs = append(dofs, float64(u.Space.NumDOF()))
		eff = append(eff, in.Total()/e)
		dev = append(dev, in.Total()/tight.Total()-1)
		if step == steps-1 {
			break
		}
		var err error
		if m, _, err = m.Refine(dorflerMarks(in.Eta2, 0.5)); err != nil {
			t.Fatal(err)
		}
	}
	return dofs, eff, dev
}

func TestFluxKellogg(t *testing.T) {
	t.Parallel()
	ex, p := known.Kellogg()
	for _, deg := range []int{1, 2} {
		m, _ := mesh.Quadrants(2)
		dofs, eff, dev := fluxRun(t, m, deg, ex, p, 60)
		for i := range dofs {
			t.Logf("P%d N=%6.0f eff %.4f dev %.2g", deg, dofs[i], eff[i], dev[i])
		}
	}
}

// The closed-form P1 element path agrees with the general one (quadrature
// and Cholesky) to rounding, on a jiggled mesh with four regions and an
// anisotropic tensor, and the default stopping rule changes η by less than
// Tol²/2 relative to a solve to the relative residual 1e-10 (the
// algebraic error enters squared: see FluxRecovery).
func TestFluxP1General(t *testing.T) {
	t.Parallel()
	ex, p := known.Kellogg()
	p.A[2] = fem.Tensor{XX: 3, XY: 1, YY: 2}
	r := rand.New(rand.NewPCG(1, 1))
	m, _ := mesh.Quadrants(8)
	m = jiggled(t, m, 1.0/8, r)
	u, _, _ := run(t, m, 1, ex, p)
	fast := estimateTotal(t, FluxRecovery{}, u, p)
	gen := estimateTotal(t, FluxRecovery{general: true}, u, p)
	// Arithmetic tolerance: rounding of the element matrices.
	if err := agree(fast, gen, 1e-12); err != nil {
		t.Error(err)
	}
	tight := estimateTotal(t, FluxRecovery{Tol: 1e-9}, u, p)
	dev := math.Abs(fast.Total()/tight.Total() - 1)
	t.Logf("η = %.6g, with a tight solve %.6g: relative change %.2g", fast.Total(), tight.Total(), dev)
	if dev > defaultFluxTol*defaultFluxTol/2 {
		t.Errorf("the default solve changes η by %.3g relative, more than Tol²/2 = %g", dev, defaultFluxTol*defaultFluxTol/2)
	}
}
