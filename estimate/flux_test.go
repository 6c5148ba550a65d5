package estimate

import (
	"errors"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
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

// fluxKelloggLow and fluxKelloggHigh bound the effectivity of the flux
// recovery on adaptive Kellogg runs, P1 and P2. Ours, from the runs of this
// test (P1 0.57–0.65, P2 0.43–0.53 over 60 steps to 8,500 and 1,100 DOFs):
// the papers prove the effectivity bounded independently of the contrast
// (Cai and Zhang 2009; Cai, He and Zhang 2017) without giving its value on
// this problem that we could confirm. The lower end excludes the gradient
// recovery, which stays at 0.29–0.43 here (Recovery's doc).
const fluxKelloggLow, fluxKelloggHigh = 0.4, 1.0

// On the Kellogg checkerboard (contrast 161, u ∈ H^{1.1}) the effectivity
// η/‖a^½∇(u − u_h)‖ stays within [fluxKelloggLow, fluxKelloggHigh] on
// every step of adaptive runs (Dörfler θ = 0.5 on the flux indicators),
// and varies by less than a factor 1.3 over a run: it is bounded, as the
// theory says, not drifting with the refinement at the singular point.
func TestFluxKellogg(t *testing.T) {
	t.Parallel()
	if testing.Short() {
		t.Skip("runs 60 adaptive steps")
	}
	ex, p := known.Kellogg()
	for _, deg := range []int{1, 2} {
		m, _ := mesh.Quadrants(2)
		dofs, eff, dev := fluxRun(t, m, deg, ex, p, 30)
		for i := range dofs {
			if i%5 == 4 || i == len(dofs)-1 {
				t.Logf("P%d N=%5.0f effectivity %.4f, change of η by the default stopping rule %.2g", deg, dofs[i], eff[i], dev[i])
			}
			if eff[i] < fluxKelloggLow || eff[i] > fluxKelloggHigh {
				t.Errorf("P%d step %d (N=%.0f): effectivity %.4f outside [%g, %g]", deg, i, dofs[i], eff[i], fluxKelloggLow, fluxKelloggHigh)
			}
			// The algebraic error enters squared (see FluxRecovery).
			if math.Abs(dev[i]) > defaultFluxTol*defaultFluxTol/2 {
				t.Errorf("P%d step %d: the default solve changes η by %.3g relative", deg, i, dev[i])
			}
		}
		if lo, hi := slices.Min(eff), slices.Max(eff); hi > 1.3*lo {
			t.Errorf("P%d: effectivity from %.4f to %.4f over the run (more than a factor 1.3)", deg, lo, hi)
		}
	}
}

// On the smooth problem (known.Sine) under uniform refinement the estimate
// converges at the rate of the energy error: N^{−1/2} for P1 and N^{−1} for
// P2 (a priori rates h^p in 2D, N ~ h^{−2}; Ciarlet 1978, from memory), and
// its effectivity settles.
func TestFluxRates(t *testing.T) {
	t.Parallel()
	ex, p := sine()
	for _, deg := range []int{1, 2} {
		var dofs, errs, etas []float64
		for _, n := range []int{8, 16, 32, 64} {
			m, _ := mesh.Rectangle(0, 0, 1, 1, n, n)
			u, _, e := run(t, m, deg, ex, p)
			dofs = append(dofs, float64(u.Space.NumDOF()))
			errs = append(errs, e)
			etas = append(etas, estimateTotal(t, FluxRecovery{}, u, p).Total())
		}
		re, _, err := FitRate(dofs, errs)
		if err != nil {
			t.Fatal(err)
		}
		r, _, _ := FitRate(dofs, etas)
		t.Logf("P%d: η rate %.4f, error rate %.4f, effectivity %.4f", deg, r, re, []float64{etas[0] / errs[0], etas[1] / errs[1], etas[2] / errs[2], etas[3] / errs[3]})
		want := float64(deg) / 2
		if math.Abs(re-want) > 0.05 || math.Abs(r-want) > 0.05 {
			t.Errorf("P%d: η rate %.3f, error rate %.3f, want %.1f ± 0.05 for both", deg, r, re, want)
		}
	}
}

// Bad input is an error matched by errors.Is, and no indicators.
func TestFluxBadInput(t *testing.T) {
	t.Parallel()
	m, _ := mesh.Rectangle(0, 0, 1, 1, 4, 4)
	_, sp := sine()
	u := solveTol(t, m, 1, sp, 1e-12)
	bad := fem.NewFunction(u.Space)
	bad.U[3] = math.NaN()
	all := map[int32]fem.Func{mesh.SideBottom: nil, mesh.SideRight: nil, mesh.SideTop: nil, mesh.SideLeft: nil}
	mixed := map[int32]fem.Func{mesh.SideLeft: nil}
	tests := []struct {
		name string
		fr   FluxRecovery
		u    *fem.Function
		p    *fem.Problem
		want error
	}{
		{"AFunc", FluxRecovery{}, u, &fem.Problem{AFunc: func(x, y float64, r int32) fem.Tensor { return fem.Scalar(1) }, Dirichlet: all}, ErrUnsupported},
		{"negative Tol", FluxRecovery{Tol: -1}, u, &fem.Problem{Dirichlet: all}, ErrArgument},
		{"NaN Tol", FluxRecovery{Tol: math.NaN()}, u, &fem.Problem{Dirichlet: all}, ErrArgument},
		{"Tol 1", FluxRecovery{Tol: 1}, u, &fem.Problem{Dirichlet: all}, ErrArgument},
		{"NaN source", FluxRecovery{}, u, &fem.Problem{F: func(x, y float64) float64 { return math.NaN() }, Dirichlet: all}, ErrNotFinite},
		{"NaN Neumann", FluxRecovery{}, u, &fem.Problem{Dirichlet: mixed, Neumann: map[int32]fem.Func{mesh.SideRight: func(x, y float64) float64 { return math.Inf(1) }}}, ErrNotFinite},
		{"NaN solution", FluxRecovery{}, bad, &fem.Problem{Dirichlet: all}, ErrNotFinite},
		{"missing region", FluxRecovery{}, u, &fem.Problem{A: map[int32]fem.Tensor{7: fem.Scalar(1)}, Dirichlet: all}, fem.ErrRegion},
		{"nil solution", FluxRecovery{}, nil, &fem.Problem{Dirichlet: all}, ErrArgument},
		{"nil problem", FluxRecovery{}, u, nil, ErrArgument},
	}
	for _, tc := range tests {
		in, err := tc.fr.Estimate(nil, tc.u, tc.p)
		if !errors.Is(err, tc.want) || in != nil {
			t.Errorf("%s: got %v, want %v", tc.name, err, tc.want)
		}
		if tc.u == nil || tc.p == nil {
			continue
		}
		if sig, _, err := tc.fr.Flux(tc.u, tc.p); !errors.Is(err, tc.want) || sig != nil {
			t.Errorf("Flux, %s: got %v, want %v", tc.name, err, tc.want)
		}
	}
}

// The indicators do not depend on GOMAXPROCS, bit for bit, on meshes large
// enough that every pass (and CG's vector operations, above 65,536
// unknowns) is split; and an estimate into a dst that holds another
// problem's indicators gives the same bits as one into a nil dst.
func TestFluxGOMAXPROCS(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	r := rand.New(rand.NewPCG(6, 3))
	_, kellogg := known.Kellogg()
	quads, _ := mesh.Quadrants(120)
	sq, _ := mesh.Rectangle(0, 0, 1, 1, 60, 60)
	f := func(x, y float64) float64 { return math.Exp(x - y) }
	cases := []struct {
		name string
		u    *fem.Function
		p    *fem.Problem
	}{
		{"Kellogg P1", noisy(t, quads, 1, r), kellogg},
		{"square P2", noisy(t, sq, 2, r), &fem.Problem{F: f, C: 1, Neumann: map[int32]fem.Func{mesh.SideTop: f}}},
	}
	for _, c := range cases {
		var ref *Indicators
		for _, procs := range []int{1, 2} {
			runtime.GOMAXPROCS(procs)
			in := estimateTotal(t, FluxRecovery{}, c.u, c.p)
			if ref == nil {
				ref = in
				continue
			}
			for k := range ref.Eta2 {
				if math.Float64bits(in.Eta2[k]) != math.Float64bits(ref.Eta2[k]) || math.Float64bits(in.Osc2[k]) != math.Float64bits(ref.Osc2[k]) {
					t.Fatalf("%s: GOMAXPROCS=%d: triangle %d differs from GOMAXPROCS=1", c.name, procs, k)
				}
			}
		}
		// Reuse of a dst that holds another estimate.
		dst := estimateTotal(t, Residual{}, c.u, c.p)
		dst, err := FluxRecovery{}.Estimate(dst, c.u, c.p)
		if err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(dst.Eta2, ref.Eta2) || !slices.Equal(dst.Osc2, ref.Osc2) {
			t.Errorf("%s: an estimate into a used dst differs", c.name)
		}
	}
}

// The P1 path of FluxRecovery (flux_p1.go) gives the element data of the
// general path to rounding (closed form against the exact Dunavant rule),
// and, from the same element data, the matrix, right-hand side, local guess
// and indicators of the general path bit for bit (same values, same
// summation order), on every kind of mesh and problem of the P1 fast
// paths.
func TestFluxFastMatchesGeneral(t *testing.T) {
	t.Parallel()
	const tol = 1e-12 // rounding of the element data, relative to the largest entry of the triangle
	for _, c := range fastCases(t) {
		df, err := prepare("test", nil, c.u, c.p)
		if err != nil {
			t.Fatal(err)
		}
		dg, err := prepare("test", nil, c.u, c.p)
		if err != nil {
			t.Fatal(err)
		}
		fast, err := FluxRecovery{}.system(df, c.u, c.p)
		if err != nil {
			t.Fatal(err)
		}
		gen, err := FluxRecovery{general: true}.system(dg, c.u, c.p)
		if err != nil {
			t.Fatal(err)
		}
		for k := range c.u.Space.Mesh.NumTriangles() {
			lf, lg := fast.loc[12*k:12*k+12], gen.loc[12*k:12*k+12]
			ms, cs := 0.0, 0.0
			for i := range 9 {
				ms = max(ms, math.Abs(lg[i]))
			}
			for i := 9; i < 12; i++ {
				cs = max(cs, math.Abs(lg[i]))
			}
			for i := range 12 {
				s := ms
				if i >= 9 {
					s = cs
				}
				if math.Abs(lf[i]-lg[i]) > tol*s {
					t.Fatalf("%s: triangle %d: element data %v, general path %v", c.name, k, lf, lg)
				}
			}
		}
		// The general assembly on the fast path's element data.
		ref := *fast
		ref.b, ref.x = make([]float64, fast.n), make([]float64, fast.n)
		for r := range fast.n {
			if fast.fixed[r] != 0 {
				ref.x[r] = fast.x[r]
			}
		}
		nnz := len(fast.a.Val)
		ref.assemble(make([]int32, fast.n+1), make([]int32, 4*nnz), make([]float64, 4*nnz))
		ref.guess()
		if !slices.Equal(ref.a.RowPtr, fast.a.RowPtr) || !slices.Equal(ref.a.Col, fast.a.Col) || !slices.Equal(ref.a.Val, fast.a.Val) {
			t.Errorf("%s: the matrices differ", c.name)
		}
		if err := fast.a.Validate(); err != nil {
			t.Errorf("%s: %v", c.name, err)
		}
		if !slices.Equal(ref.b, fast.b) || !slices.Equal(ref.x, fast.x) {
			t.Errorf("%s: the right-hand sides or the guesses differ", c.name)
		}
		nt := c.u.Space.Mesh.NumTriangles()
		ef, eg := make([]float64, nt), make([]float64, nt)
		fast.local(ef)
		ref.localGeneral(eg)
		if !slices.Equal(ef, eg) {
			t.Errorf("%s: the indicators of the guess differ", c.name)
		}
	}
}
