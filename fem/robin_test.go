package fem

import (
	"errors"
	"math"
	"testing"

	"github.com/posteriori-fem/posteriori/mesh"
)

// robinLinear is the one-dimensional problem −(a u')' = 0 on the unit
// square (a = 2, natural condition on the bottom and top), with the Robin
// condition a u' + α u = g_R at x = 1 (α = 3, g_R = 1) and, at x = 0, either
// u = 1 (Dirichlet) or −a u' + α u = 3.8 (Robin). Its solution is
// u = 1 + βx with aβ + α(1 + β) = g_R, β = (g_R − α)/(a + α) = −0.4, and
// −a β + α = 3.8 at x = 0 (closed form, derived here). P1 and P2 contain it,
// so the Galerkin solution is u itself.
func robinLinear(dirichletLeft bool) (Exact, *Problem) {
	const a, alpha, beta = 2.0, 3.0, -0.4
	u := func(x, y float64) float64 { return 1 + beta*x }
	ex := Exact{U: u, Grad: func(x, y float64) (float64, float64) { return beta, 0 }}
	p := &Problem{
		A:     map[int32]Tensor{0: Scalar(a)},
		Robin: map[int32]RobinData{mesh.SideRight: {Alpha: alpha, G: func(x, y float64) float64 { return 1 }}},
	}
	if dirichletLeft {
		p.Dirichlet = map[int32]Func{mesh.SideLeft: u}
	} else {
		p.Robin[mesh.SideLeft] = RobinData{Alpha: alpha, G: func(x, y float64) float64 { return 3.8 }}
	}
	return ex, p
}

// The Galerkin solution of a problem whose solution lies in the space is
// that solution (common practice): the Robin terms of the matrix and load
// must be right for it to hold, with a Dirichlet side and with Robin sides
// alone (no Dirichlet edge and c = 0, well posed through α > 0).
func TestRobinLinearExact(t *testing.T) {
	t.Parallel()
	const tol = 1e-12 // rounding of a solve to the solver's tolerance on a small mesh
	for _, dirichlet := range []bool{true, false} {
		for _, deg := range []int{1, 2} {
			ex, p := robinLinear(dirichlet)
			m, err := mesh.Rectangle(0, 0, 1, 1, 5, 3)
			if err != nil {
				t.Fatal(err)
			}
			s, _ := NewSpace(m, deg)
			u, _, err := solveTight(s, p)
			if err != nil {
				t.Fatalf("Dirichlet %v P%d: %v", dirichlet, deg, err)
			}
			for i := range s.NumDOF() {
				x, y := s.DOFPoint(i)
				if d := math.Abs(u.U[i] - ex.U(x, y)); d > tol {
					t.Errorf("Dirichlet %v P%d: DOF %d at (%g, %g): u_h = %.15g, u = %.15g", dirichlet, deg, i, x, y, u.U[i], ex.U(x, y))
					break
				}
			}
			// The energy norm of u: ∫ a u'² + α u(1)² (+ α u(0)² with Robin on
			// the left) = 2·0.16 + 3·0.36 (+ 3·1) (closed form).
			want := 2*0.16 + 3*0.36
			if !dirichlet {
				want += 3
			}
			got, err := u.EnergyNorm(p)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(got-math.Sqrt(want)) > tol {
				t.Errorf("Dirichlet %v P%d: EnergyNorm %.15g, want %.15g", dirichlet, deg, got, math.Sqrt(want))
			}
		}
	}
}

// solveTight assembles and solves p on s to a tight tolerance.
func solveTight(s *Space, p *Problem) (*Function, SolveStats, error) {
	sys, err := Assemble(s, p)
	if err != nil {
		return nil, SolveStats{}, err
	}
	return sys.Solve(SolveSettings{Tol: 1e-14})
}

// robinSmooth is u = sin(πx) eʸ on the unit square with a = 1, c = 0:
// f = −Δu = (π² − 1) u; Dirichlet on the left and bottom; Robin on the
// right, ∂ₓu + α u = −π eʸ with α(x, y) = 1 + y (AlphaFunc), and on the
// top, ∂ᵧu + 2u = 3u (manufactured solution, common practice).
func robinSmooth() (Exact, *Problem) {
	u := func(x, y float64) float64 { return math.Sin(math.Pi*x) * math.Exp(y) }
	ex := Exact{U: u, Grad: func(x, y float64) (float64, float64) {
		return math.Pi * math.Cos(math.Pi*x) * math.Exp(y), u(x, y)
	}}
	p := &Problem{
		F:         func(x, y float64) float64 { return (math.Pi*math.Pi - 1) * u(x, y) },
		Dirichlet: map[int32]Func{mesh.SideLeft: u, mesh.SideBottom: u},
		Robin: map[int32]RobinData{
			mesh.SideRight: {AlphaFunc: func(x, y float64) float64 { return 1 + y }, G: func(x, y float64) float64 { return -math.Pi * math.Exp(y) }},
			mesh.SideTop:   {Alpha: 2, G: func(x, y float64) float64 { return 3 * u(x, y) }},
		},
	}
	return ex, p
}

// Uniform refinement of a smooth Robin problem gives the a priori rates:
// energy error (with its boundary term α‖e‖²) O(h^p) and L² error
// O(h^{p+1}) (Céa's lemma and the Aubin–Nitsche argument, common
// practice), within 0.1.
func TestRobinRates(t *testing.T) {
	t.Parallel()
	for _, deg := range []int{1, 2} {
		ex, p := robinSmooth()
		m, err := mesh.Rectangle(0, 0, 1, 1, 2, 2)
		if err != nil {
			t.Fatal(err)
		}
		var en, l2 []float64
		for level := range 6 {
			if level > 0 {
				if m, _, err = m.RefineUniform(); err != nil {
					t.Fatal(err)
				}
			}
			s, _ := NewSpace(m, deg)
			u, _, err := Solve(s, p)
			if err != nil {
				t.Fatal(err)
			}
			_, e, err := u.Error(nil, ex, p)
			if err != nil {
				t.Fatal(err)
			}
			en = append(en, e.Energy)
			l2 = append(l2, e.L2)
		}
		n := len(en)
		for i := n - 3; i < n; i++ {
			re, rl := rate(en[i-1], en[i]), rate(l2[i-1], l2[i])
			if math.Abs(re-float64(deg)) > 0.1 || math.Abs(rl-float64(deg+1)) > 0.1 {
				t.Errorf("P%d level %d: energy rate %.3f (want %d), L2 rate %.3f (want %d)", deg, i, re, deg, rl, deg+1)
			}
		}
		t.Logf("P%d: energy %.4g, L2 %.4g", deg, en, l2)
	}
}

// The energy error includes the Robin term: on a Robin problem the energy
// error squared exceeds ‖∇e‖² by exactly Σ_E ∫_E α e², computed here
// independently with a 30-point Gauss–Legendre rule from the nodal trace.
func TestRobinEnergyErrorBoundaryTerm(t *testing.T) {
	t.Parallel()
	ex, p := robinSmooth()
	m, err := mesh.Rectangle(0, 0, 1, 1, 4, 4)
	if err != nil {
		t.Fatal(err)
	}
	s, _ := NewSpace(m, 1)
	u, _, err := Solve(s, p)
	if err != nil {
		t.Fatal(err)
	}
	_, e, err := u.Error(nil, ex, p)
	if err != nil {
		t.Fatal(err)
	}
	// The boundary term by hand: on the right x = 1, α = 1 + y; on the top
	// y = 1, α = 2; u_h linear between the nodes.
	const n = 4
	bnd := 0.0
	for side := range 2 {
		for c := range n {
			for q := range 200 { // midpoint rule, 200 points per edge
				t0 := (float64(c) + (float64(q)+0.5)/200) / n
				x, y, alpha := 1.0, t0, 1+t0
				if side == 1 {
					x, y, alpha = t0, 1, 2
				}
				loc, l, _ := s.locator().Locate(x, y)
				ev := NewEvaluator(u)
				ev.Load(loc)
				vh, _, _ := ev.Eval(l)
				d := ex.U(x, y) - vh
				bnd += alpha * d * d / (200 * n)
			}
		}
	}
	diff := e.Energy*e.Energy - e.H1*e.H1
	if math.Abs(diff-bnd) > 1e-4*bnd { // midpoint rule error, O((1/800)²) relative
		t.Errorf("energy² − H1² = %.8g, boundary term by hand %.8g", diff, bnd)
	}
}

// A source per region: −u_xx = 1 for x < 0 (regions 2 and 3 of Quadrants),
// 0 for x > 0, u(±1) = 0, natural condition on the top and bottom. Closed
// form (derived here): u = −x²/2 − x/4 + 1/4 for x ≤ 0, u = (1 − x)/4 for
// x ≥ 0, continuous with continuous flux at x = 0. It is piecewise quadratic
// on the mesh, so P2 reproduces it (common practice); and the load through
// FRegion is that of F written by geometry, bit for bit, since no
// quadrature point lies on x = 0.
func TestSourceByRegion(t *testing.T) {
	t.Parallel()
	m, err := mesh.Quadrants(4)
	if err != nil {
		t.Fatal(err)
	}
	byRegion := &Problem{
		FRegion: func(x, y float64, r int32) float64 {
			if r == 2 || r == 3 {
				return 1
			}
			return 0
		},
		Dirichlet: map[int32]Func{mesh.SideLeft: nil, mesh.SideRight: nil},
	}
	byPlace := &Problem{
		F: func(x, y float64) float64 {
			if x < 0 {
				return 1
			}
			return 0
		},
		Dirichlet: byRegion.Dirichlet,
	}
	exact := func(x float64) float64 {
		if x <= 0 {
			return -x*x/2 - x/4 + 0.25
		}
		return (1 - x) / 4
	}
	for _, deg := range []int{1, 2} {
		s, _ := NewSpace(m, deg)
		a, err := Assemble(s, byRegion)
		if err != nil {
			t.Fatal(err)
		}
		b, err := Assemble(s, byPlace)
		if err != nil {
			t.Fatal(err)
		}
		for i := range a.B {
			if a.B[i] != b.B[i] {
				t.Fatalf("P%d: load %d: %g by region, %g by place", deg, i, a.B[i], b.B[i])
			}
		}
		if deg == 1 {
			continue
		}
		u, _, err := a.Solve(SolveSettings{Tol: 1e-14})
		if err != nil {
			t.Fatal(err)
		}
		for i := range s.NumDOF() {
			x, y := s.DOFPoint(i)
			if d := math.Abs(u.U[i] - exact(x)); d > 1e-12 {
				t.Fatalf("P2: DOF %d at (%g, %g): u_h = %.15g, u = %.15g", i, x, y, u.U[i], exact(x))
			}
		}
	}
	// Source reads FRegion first.
	both := *byRegion
	both.F = func(x, y float64) float64 { return 7 }
	if got := both.Source(-0.5, 0.5, 2); got != 1 {
		t.Errorf("Source with F and FRegion = %g, want FRegion's 1", got)
	}
}

// The flux through a boundary part next to a Robin edge includes the
// Robin edge's terms: on robinLinear (u = 1 − 0.4x, a = 2), the flux
// through the right side is a u'(1) = −0.8, and through the top it is 0,
// to which Flux adds the flux 0.8 through the Dirichlet edge at the
// top-left corner weighted by φ, ∫_E φ = h/2 (P1) or h/6 (P2) with
// h = 1/4 (closed forms; see Flux). P1 and P2 contain u, so J(u_h) is exact
// to rounding.
func TestFluxGoalRobin(t *testing.T) {
	t.Parallel()
	const tol = 1e-11
	for _, deg := range []int{1, 2} {
		ex, p := robinLinear(true)
		m, err := mesh.Rectangle(0, 0, 1, 1, 4, 4)
		if err != nil {
			t.Fatal(err)
		}
		s, _ := NewSpace(m, deg)
		u, _, err := solveTight(s, p)
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range []struct {
			tag  int32
			want float64
		}{{mesh.SideTop, 0.8 * 0.25 / float64(4*deg-2)}, {mesh.SideRight, -0.8}} {
			g := Flux{Tag: c.tag}
			v, err := g.Value(u, p)
			if err != nil {
				t.Fatal(err)
			}
			xv, err := g.ExactValue(s, ex, p)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(v-c.want) > tol || math.Abs(xv-c.want) > tol {
				t.Errorf("P%d tag %d: J(u_h) = %.15g, J(u) = %.15g, want %g", deg, c.tag, v, xv, c.want)
			}
		}
	}
}

// Bad Robin data: each is a matchable error, from Check or from assembly.
func TestRobinBadInput(t *testing.T) {
	t.Parallel()
	m, err := mesh.Rectangle(0, 0, 1, 1, 2, 2)
	if err != nil {
		t.Fatal(err)
	}
	s, _ := NewSpace(m, 1)
	nan := func(x, y float64) float64 { return math.NaN() }
	one := func(x, y float64) float64 { return 1 }
	right := func(r RobinData) map[int32]RobinData { return map[int32]RobinData{mesh.SideRight: r} }
	dir := map[int32]Func{mesh.SideLeft: nil}
	for _, c := range []struct {
		name string
		p    *Problem
		want error
	}{
		{"Dirichlet and Robin", &Problem{Dirichlet: map[int32]Func{mesh.SideRight: nil}, Robin: right(RobinData{Alpha: 1})}, ErrBoundaryCondition},
		{"Neumann and Robin", &Problem{Dirichlet: dir, Neumann: map[int32]Func{mesh.SideRight: one}, Robin: right(RobinData{Alpha: 1})}, ErrBoundaryCondition},
		{"tag on no edge", &Problem{Dirichlet: dir, Robin: map[int32]RobinData{99: {Alpha: 1}}}, ErrBoundaryCondition},
		{"alpha NaN", &Problem{Dirichlet: dir, Robin: right(RobinData{Alpha: math.NaN()})}, ErrBoundaryCondition},
		{"alpha negative", &Problem{Dirichlet: dir, Robin: right(RobinData{Alpha: -1})}, ErrBoundaryCondition},
		{"alpha infinite", &Problem{Dirichlet: dir, Robin: right(RobinData{Alpha: math.Inf(1)})}, ErrBoundaryCondition},
		{"AlphaFunc negative", &Problem{Dirichlet: dir, Robin: right(RobinData{AlphaFunc: func(x, y float64) float64 { return -1 }})}, ErrBoundaryCondition},
		{"AlphaFunc NaN", &Problem{Dirichlet: dir, Robin: right(RobinData{AlphaFunc: nan})}, ErrNotFinite},
		{"G NaN", &Problem{Dirichlet: dir, Robin: right(RobinData{Alpha: 1, G: nan})}, ErrNotFinite},
		{"alpha zero only", &Problem{Robin: right(RobinData{Alpha: 0, G: one})}, ErrIllPosed},
		{"AlphaFunc zero only", &Problem{Robin: right(RobinData{AlphaFunc: func(x, y float64) float64 { return 0 }})}, ErrIllPosed},
		{"FRegion NaN", &Problem{Dirichlet: dir, FRegion: func(x, y float64, r int32) float64 { return math.NaN() }}, ErrNotFinite},
	} {
		_, err := Assemble(s, c.p)
		if !errors.Is(err, c.want) {
			t.Errorf("%s: %v, want %v", c.name, err, c.want)
		}
		var de *DataError
		if c.want != ErrIllPosed && !errors.As(err, &de) {
			t.Errorf("%s: %v is not located", c.name, err)
		}
	}
	// A pure Neumann problem with α = 0 Robin edges is allowed with
	// PureNeumann, and one α > 0 edge makes a problem without Dirichlet
	// edges well posed.
	if _, err := Assemble(s, &Problem{PureNeumann: true, Robin: right(RobinData{Alpha: 0})}); err != nil {
		t.Errorf("PureNeumann with α = 0: %v", err)
	}
	if err := (&Problem{Robin: right(RobinData{Alpha: 0.5})}).Check(m); err != nil {
		t.Errorf("Robin α > 0 alone: %v", err)
	}
}

// The P1 fast path of EnergyNorm agrees with the general quadrature to
// rounding (1e-13 relative), with reaction, contrast between regions and
// Robin edges.
func TestEnergyNormFastPath(t *testing.T) {
	t.Parallel()
	m, err := mesh.Quadrants(5)
	if err != nil {
		t.Fatal(err)
	}
	s, _ := NewSpace(m, 1)
	u, err := Interpolate(s, func(x, y float64) float64 { return math.Sin(2*x+0.3) * math.Exp(y) })
	if err != nil {
		t.Fatal(err)
	}
	p := &Problem{C: 2.5, A: map[int32]Tensor{1: Scalar(1), 2: {XX: 30, XY: 3, YY: 10}, 3: Scalar(0.01), 4: Scalar(5)},
		Dirichlet: map[int32]Func{mesh.SideLeft: nil}, Robin: map[int32]RobinData{mesh.SideTop: {Alpha: 3}}}
	fast, err := u.energyNorm(p, false)
	if err != nil {
		t.Fatal(err)
	}
	general, err := u.energyNorm(p, true)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(fast-general) > 1e-13*general {
		t.Errorf("fast path %.17g, general %.17g", fast, general)
	}
}
