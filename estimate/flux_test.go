package estimate

import (
	"math"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
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
