package estimate

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// robinProblem returns the problem −∇·(a∇u) + c u = f on the unit square
// with a = A·I (a constant), whose solution is u (gradient grad, f the
// caller's closed form), with the Robin condition a∇u·n + α u = g_R on the
// sides in robin (α per side) and u on the Dirichlet sides dir; g_R is
// a∇u·n + α u from the closed forms (manufactured data, common practice).
func robinProblem(u fem.Func, grad func(x, y float64) (float64, float64), f fem.Func, a, c float64, robin map[int32]float64, dir ...int32) (fem.Exact, *fem.Problem) {
	ex := fem.Exact{U: u, Grad: grad}
	p := &fem.Problem{A: map[int32]fem.Tensor{0: fem.Scalar(a)}, C: c, F: f, Robin: map[int32]fem.RobinData{}}
	normal := map[int32][2]float64{mesh.SideBottom: {0, -1}, mesh.SideRight: {1, 0}, mesh.SideTop: {0, 1}, mesh.SideLeft: {-1, 0}}
	for side, alpha := range robin {
		n := normal[side]
		p.Robin[side] = fem.RobinData{Alpha: alpha, G: func(x, y float64) float64 {
			gx, gy := grad(x, y)
			return a*(gx*n[0]+gy*n[1]) + alpha*u(x, y)
		}}
	}
	if len(dir) > 0 {
		p.Dirichlet = map[int32]fem.Func{}
		for _, side := range dir {
			p.Dirichlet[side] = u
		}
	}
	return ex, p
}

// sinExp is u = sin(πx) eʸ with a = 2, c = 0: f = −2Δu = 2(π² − 1) u.
func sinExp(robin map[int32]float64, dir ...int32) (fem.Exact, *fem.Problem) {
	u := func(x, y float64) float64 { return math.Sin(math.Pi*x) * math.Exp(y) }
	grad := func(x, y float64) (float64, float64) { return math.Pi * math.Cos(math.Pi*x) * math.Exp(y), u(x, y) }
	f := func(x, y float64) float64 { return 2 * (math.Pi*math.Pi - 1) * u(x, y) }
	return robinProblem(u, grad, f, 2, 0, robin, dir...)
}

// The patch test with Robin edges: for u linear (P1) or quadratic (P2) and
// constant a, u_h = u, so g_R − α u_h = a∇u·n on the Robin edges, a
// polynomial of degree p − 1 that the flux's normal trace −Π_p(g_R − α u_h)
// reproduces: σ_h = −a∇u and η = 0 (as without Robin edges: Braess and
// Schöberl 2008; Ern and Vohralík 2015). With Dirichlet sides and with Robin
// sides alone (the algebraic part then sent out through Robin edges).
// Residual's edge terms vanish likewise.
func TestRobinPatch(t *testing.T) {
	t.Parallel()
	// u = 1 + 2x − 3y (f = 0) and u = x² − xy + 2y² + x (−∇·(2∇u) = −2·6 = −12).
	polys := []struct {
		deg  int
		u    fem.Func
		grad func(x, y float64) (float64, float64)
		f    float64
	}{
		{1, func(x, y float64) float64 { return 1 + 2*x - 3*y }, func(x, y float64) (float64, float64) { return 2, -3 }, 0},
		{2, func(x, y float64) float64 { return x*x - x*y + 2*y*y + x }, func(x, y float64) (float64, float64) { return 2*x - y + 1, -x + 4*y }, -12},
	}
	for _, pl := range polys {
		f := func(x, y float64) float64 { return pl.f }
		for _, dir := range [][]int32{{mesh.SideLeft, mesh.SideBottom}, nil} {
			robin := map[int32]float64{mesh.SideRight: 3, mesh.SideTop: 0.5}
			if dir == nil {
				robin[mesh.SideLeft], robin[mesh.SideBottom] = 1, 2
			}
			_, p := robinProblem(pl.u, pl.grad, f, 2, 0, robin, dir...)
			m, _ := mesh.Rectangle(0, 0, 1, 1, 5, 4)
			u := solveTol(t, m, pl.deg, p, 1e-14)
			for _, est := range []Estimator{Equilibrated{}, Residual{}, FluxRecovery{}} {
				in, err := est.Estimate(nil, u, p)
				if err != nil {
					t.Fatalf("P%d Dirichlet %v %T: %v", pl.deg, dir, est, err)
				}
				// Rounding of the solve and the patch solves, against |a∇u| ≈ 7.
				if in.Total() > 1e-9 {
					t.Errorf("P%d Dirichlet %v %T: η = %g, want 0", pl.deg, dir, est, in.Total())
				}
			}
		}
	}
}

// Uniform refinement of a smooth Robin problem: the true energy error,
// with its boundary term, decays at the a priori rate h^p (common
// practice), every estimator's η decays at the error's rate (within 0.15
// of it, the estimators being equivalent to the error: Verfürth 2013 for
// the residual, Cai and Zhang 2009 for flux recovery), and the
// equilibrated η is at least the true error on every mesh (the theorem of
// Equilibrated with the Robin term). Robin sides with constant α and with
// AlphaFunc; a source per region (FRegion) in the second case.
func TestRobinEstimatorRates(t *testing.T) {
	t.Parallel()
	alphaFunc := func(x, y float64) float64 { return 1 + y }
	cases := []struct {
		name string
		prob func() (fem.Exact, *fem.Problem)
	}{
		{"Dirichlet left and bottom, Robin right and top", func() (fem.Exact, *fem.Problem) {
			ex, p := sinExp(map[int32]float64{mesh.SideRight: 3, mesh.SideTop: 0.5}, mesh.SideLeft, mesh.SideBottom)
			// α = 1 + y on the right: g_R = a u_x + α u.
			p.Robin[mesh.SideRight] = fem.RobinData{AlphaFunc: alphaFunc, G: func(x, y float64) float64 {
				gx, _ := ex.Grad(x, y)
				return 2*gx + alphaFunc(x, y)*ex.U(x, y)
			}}
			return ex, p
		}},
		{"Robin on every side, source per region", func() (fem.Exact, *fem.Problem) {
			ex, p := sinExp(map[int32]float64{mesh.SideRight: 3, mesh.SideTop: 0.5, mesh.SideLeft: 1, mesh.SideBottom: 2})
			f := p.F
			p.F, p.FRegion = nil, func(x, y float64, r int32) float64 { return f(x, y) }
			return ex, p
		}},
	}
	for _, c := range cases {
		for _, deg := range []int{1, 2} {
			ex, p := c.prob()
			m, err := mesh.Rectangle(0, 0, 1, 1, 2, 2)
			if err != nil {
				t.Fatal(err)
			}
			ests := []Estimator{Residual{}, Recovery{Method: Averaging}, FluxRecovery{}, Equilibrated{}}
			errs := []float64{}
			etas := make([][]float64, len(ests))
			for level := range 5 {
				if level > 0 {
					if m, _, err = m.RefineUniform(); err != nil {
						t.Fatal(err)
					}
				}
				u := solveTol(t, m, deg, p, 1e-13)
				_, e, err := TrueError(nil, u, ex, p)
				if err != nil {
					t.Fatal(err)
				}
				errs = append(errs, e)
				for i, est := range ests {
					in, err := est.Estimate(nil, u, p)
					if err != nil {
						t.Fatalf("%s P%d %T: %v", c.name, deg, est, err)
					}
					etas[i] = append(etas[i], in.Total())
				}
				if eq := etas[3][level]; eq < e {
					t.Errorf("%s P%d level %d: equilibrated η = %.6g < true error %.6g", c.name, deg, level, eq, e)
				}
			}
			n := len(errs)
			re := math.Log2(errs[n-2] / errs[n-1])
			if math.Abs(re-float64(deg)) > 0.1 {
				t.Errorf("%s P%d: error rate %.3f, want %d", c.name, deg, re, deg)
			}
			for i, est := range ests {
				r := math.Log2(etas[i][n-2] / etas[i][n-1])
				if math.Abs(r-re) > 0.15 {
					t.Errorf("%s P%d %T: rate %.3f, error's %.3f (η %.4g)", c.name, deg, est, r, re, etas[i])
				}
			}
			t.Logf("%s P%d: error %.4g; effectivities on the finest mesh: residual %.3f, averaging %.3f, flux %.3f, equilibrated %.3f",
				c.name, deg, errs, etas[0][n-1]/errs[n-1], etas[1][n-1]/errs[n-1], etas[2][n-1]/errs[n-1], etas[3][n-1]/errs[n-1])
		}
	}
}

// The equilibrated bound holds for an inexact solve on a Robin-only
// problem without reaction: ρ ≠ 0, no Dirichlet edge and no Friedrichs
// constant, so the algebraic part comes from the tree sent out through the
// Robin edges. Checked against the true error (the theorem), P1 and P2.
func TestRobinEquilibratedInexact(t *testing.T) {
	t.Parallel()
	for _, deg := range []int{1, 2} {
		ex, p := sinExp(map[int32]float64{mesh.SideRight: 3, mesh.SideTop: 0.5, mesh.SideLeft: 1, mesh.SideBottom: 2})
		m, _ := mesh.Rectangle(0, 0, 1, 1, 8, 8)
		u := solveTol(t, m, deg, p, 1e-3) // a loose solve: ρ well above rounding
		_, e, err := TrueError(nil, u, ex, p)
		if err != nil {
			t.Fatal(err)
		}
		in, parts, err := Equilibrated{}.EstimateParts(nil, u, p)
		if err != nil {
			t.Fatal(err)
		}
		if !(parts.Algebraic > 0) || in.Total() < e {
			t.Errorf("P%d: η = %.6g (%+v), true error %.6g: want η ≥ error and η_alg > 0", deg, in.Total(), parts, e)
		}
		t.Logf("P%d: η = %.4g, η_alg = %.3g, error %.4g", deg, in.Total(), parts.Algebraic, e)
	}
}

// Robin data that are NaN reach every estimator as ErrNotFinite.
func TestRobinEstimatorErrors(t *testing.T) {
	t.Parallel()
	m, _ := mesh.Rectangle(0, 0, 1, 1, 3, 3)
	s, _ := fem.NewSpace(m, 1)
	u := fem.NewFunction(s)
	p := &fem.Problem{Dirichlet: map[int32]fem.Func{mesh.SideLeft: nil},
		Robin: map[int32]fem.RobinData{mesh.SideRight: {Alpha: 1, G: func(x, y float64) float64 { return math.NaN() }}}}
	for _, est := range []Estimator{Residual{}, Recovery{}, FluxRecovery{}, Equilibrated{}} {
		_, err := est.Estimate(nil, u, p)
		if _, ok := est.(Recovery); ok {
			if err != nil { // Recovery does not read boundary data
				t.Errorf("%T: %v", est, err)
			}
			continue
		}
		if !errors.Is(err, ErrNotFinite) {
			t.Errorf("%T: %v, want ErrNotFinite", est, err)
		}
	}
}

// The P2 fast path of Residual gives the indicators of the general path on
// Robin edges too (to rounding, 1e-12 relative as TestFastPathsMatchGeneral).
func TestRobinResidualP2MatchesGeneral(t *testing.T) {
	t.Parallel()
	_, p := sinExp(map[int32]float64{mesh.SideRight: 3, mesh.SideTop: 0.5}, mesh.SideLeft)
	p.Robin[mesh.SideBottom] = fem.RobinData{AlphaFunc: func(x, y float64) float64 { return 2 + x }}
	m, _ := mesh.Rectangle(0, 0, 1, 1, 6, 5)
	r := rand.New(rand.NewPCG(7, 1))
	u := noisy(t, jiggled(t, m, 1.0/6, r), 2, r)
	if err := agree(estimateTotal(t, Residual{}, u, p), general(t, Residual{}, u, p), 1e-12); err != nil {
		t.Error(err)
	}
}

// The dual weighted residual with Robin edges: the dual problem carries α
// (fem.Dual) and the residual the Robin term, so the goal effectivity on
// uniform meshes of a smooth problem lies in the band of
// TestDualWeightedUniform, [0.8, 1.25] (asymptotic exactness: Becker and
// Rannacher 2001, §3; band common practice), for a box mean and for the
// mean over the domain.
func TestRobinDualWeighted(t *testing.T) {
	t.Parallel()
	ex, p := sinExp(map[int32]float64{mesh.SideRight: 3, mesh.SideTop: 0.5}, mesh.SideLeft, mesh.SideBottom)
	goals := []fem.ExactGoal{fem.BoxMean{X0: 0.3, Y0: 0.1, X1: 0.8, Y1: 0.45}, fem.Mean{}}
	for _, g := range goals {
		for _, deg := range []int{1, 2} {
			m, _ := mesh.Rectangle(0, 0, 1, 1, 16, 16)
			s, _ := fem.NewSpace(m, deg)
			u := solveTol(t, m, deg, p, 1e-13)
			z := solveTol(t, m, deg, fem.Dual(p, g), 1e-13)
			gi, err := DualWeighted{Goal: g}.Estimate(nil, u, z, p)
			if err != nil {
				t.Fatal(err)
			}
			ju, err := g.ExactValue(s, ex, p)
			if err != nil {
				t.Fatal(err)
			}
			jh, err := g.Value(u, p)
			if err != nil {
				t.Fatal(err)
			}
			eff := gi.Total() / (ju - jh)
			t.Logf("%T P%d: J(u) − J(u_h) = %.4g, estimate %.4g, effectivity %.3f", g, deg, ju-jh, gi.Total(), eff)
			if !(eff >= 0.8 && eff <= 1.25) {
				t.Errorf("%T P%d: goal effectivity %.3f outside [0.8, 1.25]", g, deg, eff)
			}
		}
	}
}
