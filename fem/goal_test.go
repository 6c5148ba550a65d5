package fem_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

// goalTol is the arithmetic tolerance of the goal checks: sums of a few
// thousand products of order one (common practice, no source).
const goalTol = 1e-12

// randomlyRefined returns the L-shape mesh with n cells per unit length,
// refined three times at random marks (a fixed seed), so that triangles of
// several sizes and orientations meet a box's sides.
func randomlyRefined(t *testing.T, n int) *mesh.Mesh {
	t.Helper()
	m, err := mesh.LShape(n)
	if err != nil {
		t.Fatal(err)
	}
	r := rand.New(rand.NewPCG(1, 1))
	for range 3 {
		marks := make([]bool, m.NumTriangles())
		for i := range marks {
			marks[i] = r.Float64() < 0.3
		}
		if m, _, err = m.Refine(marks); err != nil {
			t.Fatal(err)
		}
	}
	return m
}

// rectMonomial returns ∫∫ x^a y^b over [x0, x1] × [y0, y1] (closed form).
func rectMonomial(a, b int, x0, x1, y0, y1 float64) float64 {
	fa, fb := float64(a+1), float64(b+1)
	return (math.Pow(x1, fa) - math.Pow(x0, fa)) / fa * (math.Pow(y1, fb) - math.Pow(y0, fb)) / fb
}

// TestBoxMeanExactForPolynomials checks that the box load integrates P1
// and P2 functions exactly: the mean of a polynomial of degree p over a
// box that crosses the L-shape's notch, against the closed form of its
// integral over the box less the notch [0, 1) × (−1, 0].
func TestBoxMeanExactForPolynomials(t *testing.T) {
	t.Parallel()
	m := randomlyRefined(t, 3)
	x0, y0, x1, y1 := -0.35, -0.45, 0.62, 0.8
	// q = 1 + 2x − 3y + c (x² − xy + 2y²), c = 0 for P1 (invented data).
	terms := []struct {
		a, b int
		c    float64
		quad bool
	}{{0, 0, 1, false}, {1, 0, 2, false}, {0, 1, -3, false}, {2, 0, 1, true}, {1, 1, -1, true}, {0, 2, 2, true}}
	for _, deg := range []int{1, 2} {
		s, _ := fem.NewSpace(m, deg)
		q := func(x, y float64) float64 {
			v := 1 + 2*x - 3*y
			if deg == 2 {
				v += x*x - x*y + 2*y*y
			}
			return v
		}
		u, err := fem.Interpolate(s, q)
		if err != nil {
			t.Fatal(err)
		}
		num, area := 0.0, (x1-x0)*(y1-y0)-(x1-0)*(0-y0)
		for _, tm := range terms {
			if tm.quad && deg == 1 {
				continue
			}
			num += tm.c * (rectMonomial(tm.a, tm.b, x0, x1, y0, y1) - rectMonomial(tm.a, tm.b, 0, x1, y0, 0))
		}
		want := num / area // closed form
		got, err := fem.BoxMean{X0: x0, Y0: y0, X1: x1, Y1: y1}.Value(u, nil)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(got-want) > goalTol*math.Abs(want) {
			t.Errorf("P%d: box mean %.16g, want %.16g (closed form)", deg, got, want)
		}
	}
}

// lshapeIntegral is ∫_Ω r^{2/3} sin(2θ/3) over the L-shape, in polar
// coordinates: Σ ∫ sin(2θ/3) (3/8) R(θ)^{8/3} dθ over the four pieces of
// the boundary seen from the corner, each by gonum's 40-point
// Gauss–Legendre rule (the integrands are smooth on each piece).
func lshapeIntegral() float64 {
	pieces := []struct {
		a, b float64
		R    func(th float64) float64
	}{
		{0, math.Pi / 4, func(th float64) float64 { return 1 / math.Cos(th) }},
		{math.Pi / 4, 3 * math.Pi / 4, func(th float64) float64 { return 1 / math.Sin(th) }},
		{3 * math.Pi / 4, 5 * math.Pi / 4, func(th float64) float64 { return -1 / math.Cos(th) }},
		{5 * math.Pi / 4, 3 * math.Pi / 2, func(th float64) float64 { return -1 / math.Sin(th) }},
	}
	v := 0.0
	for _, pc := range pieces {
		v += quad.Fixed(func(th float64) float64 {
			return math.Sin(2*th/3) * 3 / 8 * math.Pow(pc.R(th), 8.0/3)
		}, pc.a, pc.b, 40, quad.Legendre{}, 0)
	}
	return v
}

// TestGoalExactValues checks J(u) of the exact L-shape solution
// u = r^{2/3} sin(2θ/3), by the singular-point-aware quadrature, against
// gonum's Gauss–Legendre quadrature of the same integrals.
func TestGoalExactValues(t *testing.T) {
	t.Parallel()
	ex, p := known.LShape()
	m, _ := mesh.LShape(4)
	// The flux problem: Neumann data a∇u·n from the exact solution on the
	// sides x = ±1 (tags 4 and 6), so that the ends of the top side (tag 5)
	// meet Neumann edges and J is the flux through it exactly.
	fp := &fem.Problem{
		Dirichlet: map[int32]fem.Func{1: ex.U, 2: nil, 3: nil, 5: ex.U},
		Neumann: map[int32]fem.Func{
			4: func(x, y float64) float64 { gx, _ := ex.Grad(x, y); return gx },
			6: func(x, y float64) float64 { gx, _ := ex.Grad(x, y); return -gx },
		},
	}
	box := quad.Fixed(func(y float64) float64 {
		return quad.Fixed(func(x float64) float64 { return ex.U(x, y) }, 0.5, 1, 30, quad.Legendre{}, 0)
	}, 0.5, 1, 30, quad.Legendre{}, 0) / 0.25
	top := quad.Fixed(func(x float64) float64 { _, gy := ex.Grad(x, 1); return gy }, -1, 1, 40, quad.Legendre{}, 0)
	mean := lshapeIntegral() / 3
	cases := []struct {
		name string
		g    fem.ExactGoal
		p    *fem.Problem
		want float64
	}{
		{"box", fem.BoxMean{X0: 0.5, Y0: 0.5, X1: 1, Y1: 1}, p, box},           // gonum nested Gauss–Legendre
		{"region", fem.RegionMean{Region: 0}, p, mean},                         // polar form, gonum Gauss–Legendre
		{"weight", fem.Mean{}, p, mean},                                        // the same
		{"flux", fem.Flux{Tag: 5}, fp, top},                                    // gonum Gauss–Legendre on y = 1
		{"box-notch", fem.BoxMean{X0: -0.5, Y0: -0.5, X1: 0.5, Y1: 0.5}, p, 0}, // set below
	}
	// The box around the corner: [−0.5, 0.5]² less the notch, by polar
	// pieces as lshapeIntegral (R = 0.5/|cos| or 0.5/|sin|), scaled: the
	// integral over a box of side 2ρ is ρ^{8/3} times that over side 2.
	cases[4].want = math.Pow(0.5, 8.0/3) * lshapeIntegral() / 0.75
	for _, c := range cases {
		for _, deg := range []int{1, 2} {
			s, _ := fem.NewSpace(m, deg)
			got, err := c.g.ExactValue(s, ex, c.p)
			if err != nil {
				t.Fatal(c.name, err)
			}
			t.Logf("%s, P%d: J(u) = %.15g, reference %.15g, rel. %.2g", c.name, deg, got, c.want, math.Abs(got-c.want)/math.Abs(c.want))
			if math.Abs(got-c.want) > 1e-11*math.Abs(c.want) {
				t.Errorf("%s, P%d: J(u) = %.15g, want %.15g (rel. %.2g)", c.name, deg, got, c.want, math.Abs(got-c.want)/math.Abs(c.want))
			}
		}
	}
}

// TestGoalBadInput checks that unusable goals give matchable errors.
func TestGoalBadInput(t *testing.T) {
	t.Parallel()
	m, _ := mesh.LShape(2)
	sq, _ := mesh.Rectangle(-1, -1, 1, 1, 2, 2)
	cases := []struct {
		name string
		m    *mesh.Mesh
		g    fem.Goal
		want error
	}{
		{"box outside", m, fem.BoxMean{X0: 0.2, Y0: -0.8, X1: 0.8, Y1: -0.2}, fem.ErrGoal},
		{"box far", m, fem.BoxMean{X0: 5, Y0: 5, X1: 6, Y1: 6}, fem.ErrGoal},
		{"box NaN", m, fem.BoxMean{X0: math.NaN(), Y0: 0, X1: 1, Y1: 1}, fem.ErrNotFinite},
		{"box reversed", m, fem.BoxMean{X0: 1, Y0: 0, X1: 0, Y1: 1}, fem.ErrArgument},
		{"empty region", m, fem.RegionMean{Region: 7}, fem.ErrGoal},
		{"flux tag", m, fem.Flux{Tag: 9}, fem.ErrGoal},
		{"zero weight", sq, fem.Mean{W: func(x, y float64) float64 { return x }}, fem.ErrGoal},
		{"NaN weight", sq, fem.Mean{W: func(x, y float64) float64 { return math.NaN() }}, fem.ErrNotFinite},
		{"short load", m, fem.Functional{L: func(dst []float64, s *fem.Space) ([]float64, error) { return make([]float64, 3), nil }}, fem.ErrLength},
	}
	for _, c := range cases {
		s, _ := fem.NewSpace(c.m, 1)
		_, err := c.g.Load(nil, s, nil)
		if !errors.Is(err, c.want) {
			t.Errorf("%s: Load: %v, want %v", c.name, err, c.want)
		}
		// Assembling a dual problem with the goal fails the same way.
		_, err = fem.Assemble(s, &fem.Problem{Dirichlet: map[int32]fem.Func{1: nil}, Goal: c.g})
		if !errors.Is(err, c.want) {
			t.Errorf("%s: Assemble: %v, want %v", c.name, err, c.want)
		}
	}
}

// TestSystemDual checks that System.Dual gives the system that Assemble
// builds for the dual problem (the same matrix, the same right-hand side,
// bit for bit), and that a Prepared dual solves it as System.Solve does:
// P1 and P2, Dirichlet and Neumann data, a reaction term, a pure Neumann
// problem, a mean and a flux goal (an arithmetic identity: the same
// operations in the same order; common practice, no source).
func TestSystemDual(t *testing.T) {
	t.Parallel()
	ex, pL := known.LShape()
	withC := &fem.Problem{
		C: 2, F: func(x, y float64) float64 { return 1 + x*y },
		Dirichlet: map[int32]fem.Func{1: ex.U, 2: nil, 3: nil},
		Neumann:   map[int32]fem.Func{4: func(x, y float64) float64 { return x }},
	}
	neumann := &fem.Problem{PureNeumann: true, Neumann: map[int32]fem.Func{5: func(x, y float64) float64 { return 1 }, 2: func(x, y float64) float64 { return -1 }}}
	for _, c := range []struct {
		name string
		p    *fem.Problem
		g    fem.Goal
	}{
		{"lshape box", pL, fem.BoxMean{X0: 0.5, Y0: 0.5, X1: 1, Y1: 1}},
		{"lshape flux", pL, fem.Flux{Tag: 5}},
		{"reaction mean", withC, fem.Mean{W: func(x, y float64) float64 { return 1 + x*x }}},
		{"pure Neumann box", neumann, fem.BoxMean{X0: -0.5, Y0: -0.5, X1: 0.5, Y1: 0.5}},
	} {
		for _, deg := range []int{1, 2} {
			m := randomlyRefined(t, 4)
			s, err := fem.NewSpace(m, deg)
			if err != nil {
				t.Fatal(err)
			}
			sys, err := fem.Assemble(s, c.p)
			if err != nil {
				t.Fatal(err)
			}
			want, err := fem.Assemble(s, fem.Dual(c.p, c.g))
			if err != nil {
				t.Fatal(err)
			}
			ps, err := sys.Prepare(fem.Multigrid)
			if err != nil {
				t.Fatal(err)
			}
			got, err := ps.Dual(c.g)
			if err != nil {
				t.Fatal(err)
			}
			if got.A != sys.A {
				t.Errorf("%s P%d: the dual system does not share the matrix", c.name, deg)
			}
			for i, v := range want.A.Val {
				if got.A.Val[i] != v {
					t.Fatalf("%s P%d: matrix entry %d: %g, assembled %g", c.name, deg, i, got.A.Val[i], v)
				}
			}
			for i, v := range want.B {
				if got.B[i] != v {
					t.Fatalf("%s P%d: B[%d] = %g, assembled %g", c.name, deg, i, got.B[i], v)
				}
			}
			zw, _, err := want.Solve(fem.SolveSettings{})
			if err != nil {
				t.Fatal(err)
			}
			zg, _, err := got.Solve(fem.SolveSettings{})
			if err != nil {
				t.Fatal(err)
			}
			for i, v := range zw.U {
				if zg.U[i] != v {
					t.Fatalf("%s P%d: z[%d] = %g, from the assembled dual %g", c.name, deg, i, zg.U[i], v)
				}
			}
		}
	}
}
