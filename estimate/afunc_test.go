package estimate

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

// afuncCase is a discrete function and a problem whose diffusion is given
// by the map A; the same problem with AFunc returning A[region] must give
// the same indicators.
type afuncCase struct {
	name string
	u    *fem.Function
	p    *fem.Problem
}

// noisy interpolates a smooth function in the space of degree deg on m and
// adds noise of relative size 1e-2, so that no term vanishes.
func noisy(t *testing.T, m *mesh.Mesh, deg int, r *rand.Rand) *fem.Function {
	t.Helper()
	s, err := fem.NewSpace(m, deg)
	if err != nil {
		t.Fatal(err)
	}
	u, err := fem.Interpolate(s, func(x, y float64) float64 { return math.Sin(2*x+0.5) * math.Cos(3*y-0.2) })
	if err != nil {
		t.Fatal(err)
	}
	for i := range u.U {
		u.U[i] += 1e-2 * (2*r.Float64() - 1)
	}
	return u
}

// asAFunc returns p with its diffusion map given as AFunc instead: a
// constant on each region, so the two problems are the same problem.
func asAFunc(p *fem.Problem) *fem.Problem {
	q := *p
	a := p.A
	q.A = nil
	q.AFunc = func(x, y float64, region int32) fem.Tensor {
		if a == nil {
			return fem.Scalar(1)
		}
		return a[region]
	}
	return &q
}

// A constant AFunc gives the indicators of the same diffusion given by the
// region map A, triangle by triangle, for every estimator that takes AFunc,
// P1 and P2. The AFunc inputs take the general path (quadrature on every
// term, derivatives of a by central differences, which are exactly 0 for a
// constant); the map inputs take the fast paths (closed forms). The two
// differ by rounding only.
func TestAFuncConstantMatchesMap(t *testing.T) {
	t.Parallel()
	const tol = 1e-12 // relative, per indicator: rounding of sums of ~10 terms of similar size
	r := rand.New(rand.NewPCG(13, 1))
	sq, _ := mesh.Rectangle(0, 0, 1, 1, 7, 6)
	jig := jiggled(t, sq, 1.0/7, r)
	quads, _ := mesh.Quadrants(3)
	kquads := refinedAtRandom(t, quads, 2, r)
	_, kellogg := known.Kellogg()
	f := func(x, y float64) float64 { return math.Exp(x-y) + 3*x*y }
	g := func(x, y float64) float64 { return math.Cos(4*x) - y }
	aniso := map[int32]fem.Tensor{
		1: {XX: 3, XY: 1, YY: 2}, 2: {XX: 1e-2, XY: 0, YY: 1}, 3: {XX: 200, XY: -50, YY: 40}, 4: fem.Scalar(0.5),
	}
	for _, deg := range []int{1, 2} {
		cases := []afuncCase{
			{"jiggled, a = 1, f, Dirichlet", noisy(t, jig, deg, r), &fem.Problem{F: f, Dirichlet: map[int32]fem.Func{
				mesh.SideBottom: nil, mesh.SideRight: nil, mesh.SideTop: nil, mesh.SideLeft: nil}}},
			{"jiggled, anisotropic a, c > 0, f, Neumann", noisy(t, jig, deg, r), &fem.Problem{C: 2.5, F: f,
				A:         map[int32]fem.Tensor{0: {XX: 2, XY: 0.5, YY: 1}},
				Dirichlet: map[int32]fem.Func{mesh.SideLeft: nil},
				Neumann:   map[int32]fem.Func{mesh.SideBottom: g, mesh.SideTop: nil}}},
			{"Kellogg regions, no f", noisy(t, kquads, deg, r), kellogg},
			{"anisotropic contrast, c > 0, Neumann", noisy(t, kquads, deg, r), &fem.Problem{A: aniso, C: 1, F: f,
				Neumann: map[int32]fem.Func{mesh.SideRight: g, mesh.SideTop: g}}},
		}
		for _, tc := range estimators {
			for _, c := range cases {
				want := estimateTotal(t, tc.est, c.u, c.p)
				got := estimateTotal(t, tc.est, c.u, asAFunc(c.p))
				if err := agree(got, want, tol); err != nil {
					t.Errorf("P%d %s %s: AFunc against A: %v", deg, tc.name, c.name, err)
				}
			}
		}
	}
}

// Equilibrated needs a piecewise-constant diffusion (its flux is
// equilibrated per region): AFunc, even a constant one, is refused with
// ErrUnsupported and no indicators.
func TestAFuncEquilibratedRefused(t *testing.T) {
	t.Parallel()
	m, _ := mesh.Rectangle(0, 0, 1, 1, 4, 4)
	_, p := sine()
	for _, deg := range []int{1, 2} {
		u := noisy(t, m, deg, rand.New(rand.NewPCG(1, 1)))
		in, err := Equilibrated{}.Estimate(nil, u, asAFunc(p))
		if !errors.Is(err, ErrUnsupported) || in != nil {
			t.Errorf("P%d: got %v, %v; want nil, ErrUnsupported", deg, in, err)
		}
	}
}

// variable is a manufactured problem with a smooth variable diffusion on
// the unit square (closed form, derived here):
//
//	u = sin(πx) sin(πy),  a = 2 + sin(x + y),  u = 0 on the boundary.
//
// With Δu = −2π² u, ∇a = cos(x + y) (1, 1) and
// ∂x u + ∂y u = π (cos(πx) sin(πy) + sin(πx) cos(πy)) = π sin(π(x + y)),
//
//	f = −∇·(a∇u) = −a Δu − ∇a·∇u = 2π² a u − π cos(x + y) sin(π(x + y)).
func variable() (fem.Exact, *fem.Problem) {
	ex, p := sine()
	a := func(x, y float64) float64 { return 2 + math.Sin(x+y) }
	p.F = func(x, y float64) float64 {
		return 2*math.Pi*math.Pi*a(x, y)*ex.U(x, y) - math.Pi*math.Cos(x+y)*math.Sin(math.Pi*(x+y))
	}
	p.AFunc = func(x, y float64, _ int32) fem.Tensor { return fem.Scalar(a(x, y)) }
	return ex, p
}

// On uniform refinement of the smooth manufactured problem with variable
// diffusion, the energy error and every estimate that takes AFunc decay as
// N^(−p/2) in the number N of DOFs: rate 0.5 for P1, 1 for P2 (common
// practice: the a priori rate h^p of smooth solutions, N ~ h⁻²), within
// ±0.05, fitted over the meshes of 16² to 64² cells (N = (pn + 1)² departs
// from n² on coarser ones). The P1 recovery estimates are asymptotically
// exact there, as for a = 1 (Zienkiewicz and Zhu 1992: superconvergence of
// the recovered gradient on meshes of parallel lines): effectivity within
// 5% of 1 on the finest mesh.
func TestAFuncManufacturedRate(t *testing.T) {
	t.Parallel()
	ex, p := variable()
	for _, deg := range []int{1, 2} {
		want := 0.5 * float64(deg) // common practice, no source
		var dofs, errs []float64
		etas := make([][]float64, len(estimators))
		for _, n := range []int{8, 16, 32, 64} {
			m, err := mesh.Rectangle(0, 0, 1, 1, n, n)
			if err != nil {
				t.Fatal(err)
			}
			u, _, e := run(t, m, deg, ex, p)
			if n == 8 {
				continue // fit the asymptotic range
			}
			dofs = append(dofs, float64(u.Space.NumDOF()))
			errs = append(errs, e)
			for i, tc := range estimators {
				etas[i] = append(etas[i], estimateTotal(t, tc.est, u, p).Total())
			}
		}
		check := func(name string, v []float64) {
			rate, _, err := FitRate(dofs, v)
			if err != nil {
				t.Fatal(err)
			}
			t.Logf("P%d %s: rate %.4f, last value %.4g", deg, name, rate, v[len(v)-1])
			if math.Abs(rate-want) > 0.05 {
				t.Errorf("P%d %s: rate %.3f, want %.2g ± 0.05", deg, name, rate, want)
			}
		}
		check("error", errs)
		for i, tc := range estimators {
			check(tc.name, etas[i])
			if eff := etas[i][len(errs)-1] / errs[len(errs)-1]; deg == 1 && tc.name != "residual" && math.Abs(eff-1) > 0.05 {
				t.Errorf("P1 %s: effectivity %.4f on the finest mesh, want within 5%% of 1", tc.name, eff)
			}
		}
	}
}

// f = nil and f ≡ 0 are the same problem and give the same indicators, also
// for a variable diffusion, where the P1 element residual ∇·(a∇u_h) =
// ∇a·∇u_h does not vanish.
func TestAFuncNilSource(t *testing.T) {
	t.Parallel()
	m, _ := mesh.Rectangle(0, 0, 1, 1, 6, 6)
	_, p := variable()
	p.F = nil
	zero := *p
	zero.F = func(x, y float64) float64 { return 0 }
	for _, deg := range []int{1, 2} {
		u := noisy(t, m, deg, rand.New(rand.NewPCG(2, 1)))
		for _, tc := range estimators {
			got := estimateTotal(t, tc.est, u, p)
			want := estimateTotal(t, tc.est, u, &zero)
			if err := agree(got, want, 0); err != nil {
				t.Errorf("P%d %s: f = nil against f ≡ 0: %v", deg, tc.name, err)
			}
		}
	}
}

// A diffusion given by AFunc that is NaN on part of the domain is an error
// wrapping ErrNotFinite, with no indicators, from every estimator that
// takes AFunc.
func TestAFuncNotFinite(t *testing.T) {
	t.Parallel()
	m, _ := mesh.Rectangle(0, 0, 1, 1, 4, 4)
	_, p := sine()
	p.AFunc = func(x, y float64, _ int32) fem.Tensor {
		if x > 0.6 {
			return fem.Tensor{XX: 1, XY: math.NaN(), YY: 1}
		}
		return fem.Scalar(1)
	}
	for _, deg := range []int{1, 2} {
		u := noisy(t, m, deg, rand.New(rand.NewPCG(3, 1)))
		for _, tc := range estimators {
			in, err := tc.est.Estimate(nil, u, p)
			if !errors.Is(err, ErrNotFinite) || in != nil {
				t.Errorf("P%d %s: got %v, %v; want nil, ErrNotFinite", deg, tc.name, in, err)
			}
		}
	}
}

// A source whose values are finite but whose squares are beyond the range
// of float64 (its largest finite value is about 1.8e308, IEEE 754) is an
// error wrapping ErrNotFinite from every estimator, never an estimate of
// +Inf; a source of 1e150, whose squares fit, gives finite estimates.
func TestSourceSquaresOverflow(t *testing.T) {
	t.Parallel()
	m, _ := mesh.Rectangle(0, 0, 1, 1, 4, 4)
	type named struct {
		name string
		est  Estimator
	}
	var ests []named
	for _, tc := range estimators {
		ests = append(ests, named{tc.name, tc.est})
	}
	ests = append(ests, named{"flux", FluxRecovery{}}, named{"equilibrated", Equilibrated{}})
	for _, deg := range []int{1, 2} {
		u := noisy(t, m, deg, rand.New(rand.NewPCG(5, 2)))
		for _, big := range []float64{1e308, 1e150} {
			_, p := sine()
			p.F = func(x, y float64) float64 { return big / 2 * (1 + x*y) } // finite values
			for _, tc := range ests {
				in, err := tc.est.Estimate(nil, u, p)
				switch {
				case big > 1e200 && (!errors.Is(err, ErrNotFinite) || in != nil):
					t.Errorf("P%d %s, f ~ %g: got %v, %v; want nil, ErrNotFinite", deg, tc.name, big, in, err)
				case big < 1e200 && err != nil:
					t.Errorf("P%d %s, f ~ %g: %v", deg, tc.name, big, err)
				case big < 1e200 && !(in.Total() < math.Inf(1)):
					t.Errorf("P%d %s, f ~ %g: total %g", deg, tc.name, big, in.Total())
				}
			}
		}
	}
}
