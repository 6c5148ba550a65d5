package fem

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"

	"github.com/posteriori-fem/posteriori/mesh"
)

// radialMu is a smooth 2π-periodic angular factor for the test solutions
// u = r^γ μ(θ) about a point P (invented data; any smooth μ will do).
func radialMu(th float64) (mu, dmu float64) {
	return 1 + 0.3*math.Sin(2*th) + 0.2*math.Cos(th), 0.6*math.Cos(2*th) - 0.2*math.Sin(th)
}

// radialExact returns u = r^γ μ(θ) about P and its gradient
// ∇u = r^{γ−1}(γ μ e_r + μ' e_θ).
func radialExact(gamma float64, P [2]float64) Exact {
	return Exact{
		U: func(x, y float64) float64 {
			dx, dy := x-P[0], y-P[1]
			mu, _ := radialMu(math.Atan2(dy, dx))
			return math.Pow(math.Hypot(dx, dy), gamma) * mu
		},
		Grad: func(x, y float64) (float64, float64) {
			dx, dy := x-P[0], y-P[1]
			r := math.Hypot(dx, dy)
			if r == 0 {
				return 0, 0
			}
			th := math.Atan2(dy, dx)
			mu, dmu := radialMu(th)
			c := math.Pow(r, gamma-1)
			cs, sn := dx/r, dy/r
			return c * (gamma*mu*cs - dmu*sn), c * (gamma*mu*sn + dmu*cs)
		},
		Singular: [][2]float64{P},
	}
}

// quadratic is q(x) = c0 + c·ξ + ½ ξᵀHξ with ξ = x − P.
type quadratic struct {
	P      [2]float64
	c0     float64
	c      [2]float64
	h      [3]float64 // Hxx, Hxy, Hyy
	linear bool       // H = 0
}

func (q quadratic) at(x, y float64) float64 {
	a, b := x-q.P[0], y-q.P[1]
	return q.c0 + q.c[0]*a + q.c[1]*b + 0.5*(q.h[0]*a*a+2*q.h[1]*a*b+q.h[2]*b*b)
}

// referenceError returns ∫_T (u − q)² and ∫_T |∇(u − q)|² for
// u = r^γ μ(θ) about P, in polar coordinates about P: over each edge AB of
// T, the radial integrals from 0 to R(θ) (the distance from P to AB along
// θ) are the closed forms ∫ r^β dr = R^{β+1}/(β+1) of the powers in
//
//	|∇(u − q)|² = r^{2γ−2}(γ²μ² + μ'²) − 2 r^{γ−1}(γμ e_r + μ' e_θ)·(c + r H e_r) + |∇q|²,
//	(u − q)²    = r^{2γ} μ² − 2 r^γ μ (c0 + r c·e_r + ½ r² e_rᵀH e_r) + q²,
//
// and the angular integrals are taken over the point Q = A + t(B − A) of
// the edge: with A − P = −t0 d + β d⊥ (d = B − A, d⊥ = (−d_y, d_x)), the ray
// to Q is v = (t − t0) d + β d⊥, R = |v| and dθ = β |d|² / R² dt, signed, so
// that the sum over the edges is exact for P inside, on an edge of, or at a
// vertex of T. The t-integrals are done by gonum's Gauss–Legendre
// quad.Fixed (24 points) on pieces halved 64 times towards the foot of
// the perpendicular from P (or the nearer end), where the integrand varies
// on the scale of P's distance from the edge.
func referenceError(gamma float64, q quadratic, tx, ty [3]float64) (l2, h1 float64) {
	P := q.P
	for i := range 3 {
		ax, ay := tx[i]-P[0], ty[i]-P[1]
		dx, dy := tx[(i+1)%3]-tx[i], ty[(i+1)%3]-ty[i]
		len2 := dx*dx + dy*dy
		t0 := -(ax*dx + ay*dy) / len2
		beta := diffOfProducts(dx, ay, dy, ax) / len2
		if beta == 0 {
			continue // P on the line AB: the sector is empty
		}
		integrands := func(tau float64) (fl2, fh1 float64) {
			vx, vy := tau*dx-beta*dy, tau*dy+beta*dx
			r := math.Hypot(vx, vy)
			cs, sn := vx/r, vy/r
			th := math.Atan2(vy, vx)
			dth := -beta * len2 / (r * r) // dθ/dt = (v × d)/|v|²
			mu, dmu := radialMu(th)
			// e_r = (cs, sn), e_θ = (−sn, cs).
			her := [2]float64{q.h[0]*cs + q.h[1]*sn, q.h[1]*cs + q.h[2]*sn}
			cr, ct := q.c[0]*cs+q.c[1]*sn, -q.c[0]*sn+q.c[1]*cs
			hr, ht := her[0]*cs+her[1]*sn, -her[0]*sn+her[1]*cs
			uu := (gamma*gamma*mu*mu + dmu*dmu) * math.Pow(r, 2*gamma) / (2 * gamma)
			uq := (gamma*mu*cr+dmu*ct)*math.Pow(r, gamma+1)/(gamma+1) + (gamma*mu*hr+dmu*ht)*math.Pow(r, gamma+2)/(gamma+2)
			// |∇q|² = |c + r H e_r|² = |c|² + 2 r c·He_r + r²|He_r|².
			qq := (q.c[0]*q.c[0]+q.c[1]*q.c[1])*r*r/2 + 2*(q.c[0]*her[0]+q.c[1]*her[1])*r*r*r/3 + (her[0]*her[0]+her[1]*her[1])*r*r*r*r/4
			fh1 = (uu - 2*uq + qq) * dth
			hrr := 0.5 * (q.h[0]*cs*cs + 2*q.h[1]*cs*sn + q.h[2]*sn*sn)
			uu = mu * mu * math.Pow(r, 2*gamma+2) / (2*gamma + 2)
			uq = mu * (q.c0*math.Pow(r, gamma+2)/(gamma+2) + cr*math.Pow(r, gamma+3)/(gamma+3) + hrr*math.Pow(r, gamma+4)/(gamma+4))
			// q² along the ray: (c0 + r cr + r² hrr)², times r, integrated.
			qq = q.c0*q.c0*r*r/2 + 2*q.c0*cr*r*r*r/3 + (cr*cr+2*q.c0*hrr)*r*r*r*r/4 + 2*cr*hrr*math.Pow(r, 5)/5 + hrr*hrr*math.Pow(r, 6)/6
			fl2 = (uu - 2*uq + qq) * dth
			return fl2, fh1
		}
		piece := func(a, b float64) {
			l2 += quad.Fixed(func(t float64) float64 { v, _ := integrands(t); return v }, a, b, 24, quad.Legendre{}, 0)
			h1 += quad.Fixed(func(t float64) float64 { _, v := integrands(t); return v }, a, b, 24, quad.Legendre{}, 0)
		}
		// τ = t − t0 runs over [−t0, 1 − t0]; grade towards τ* = clamp(0).
		lo, hi := -t0, 1-t0
		star := min(max(0, lo), hi)
		for _, side := range [2]float64{lo, hi} {
			w := side - star
			if w == 0 {
				continue
			}
			for range 64 {
				a, b := star+w/2, star+w
				piece(min(a, b), max(a, b))
				w /= 2
			}
			piece(min(star, star+w), max(star, star+w))
		}
	}
	return l2, h1
}

// quadraticOnTriangle returns a P1 or P2 function on the mesh of the single
// triangle (tx, ty), interpolating q (exact, as q has degree ≤ p).
func quadraticOnTriangle(t *testing.T, tx, ty [3]float64, deg int, q quadratic) *Function {
	t.Helper()
	m, _, err := mesh.New(mesh.Arrays{X: []float64{tx[0], ty[0], tx[1], ty[1], tx[2], ty[2]}, Tri: []int32{0, 1, 2}})
	if err != nil {
		t.Fatal(err)
	}
	s, err := NewSpace(m, deg)
	if err != nil {
		t.Fatal(err)
	}
	u, err := Interpolate(s, q.at)
	if err != nil {
		t.Fatal(err)
	}
	return u
}

// Single triangles at a singular point, from diameter 1 down to 1e-12, with
// the point at a vertex, on an edge, and inside, for γ from 0.05 to 2/3
// and P1 and P2: Error agrees with the closed-form radial integrals
// (referenceError) to 1e-9 relative (measured: 9.1e-12 at worst); the scheme
// aims at 1e-12 per ray.
func TestErrorSingularTriangle(t *testing.T) {
	t.Parallel()
	type where struct {
		name string
		bary [3]float64 // P in barycentric coordinates of the triangle
	}
	// The points are given by barycentric coordinates in the triangle
	// (0, 0), (1, 0.1), (0.3, 0.8) before it is moved to put P at the origin;
	// "edge" uses the triangle (−0.35, 0), (0.65, 0), (0.3, 0.8) instead, so
	// that P lies on the edge exactly in floating point; "edge-rounded" puts
	// P on the edge in barycentric coordinates, which rounding moves off it
	// by about 1e-16 of the diameter.
	places := []where{
		{"vertex", [3]float64{1, 0, 0}},
		{"edge", [3]float64{}},
		{"edge-rounded", [3]float64{0, 0.35, 0.65}},
		{"inside", [3]float64{0.2, 0.5, 0.3}},
		{"near-edge", [3]float64{0.3, 0.7 - 1e-7, 1e-7}},
		{"nearer-edge", [3]float64{0.3, 0.7 - 1e-11, 1e-11}},
	}
	worst := 0.0
	for _, gamma := range []float64{0.05, 0.1, 2.0 / 3} {
		for _, h := range []float64{1, 1e-6, 1e-12} {
			for _, pl := range places {
				for _, deg := range []int{1, 2} {
					// A scalene triangle of diameter about h placed so that P
					// is the origin (no rounding of P: see Error's doc).
					sx := [3]float64{0, 1, 0.3}
					sy := [3]float64{0, 0.1, 0.8}
					px := pl.bary[0]*sx[0] + pl.bary[1]*sx[1] + pl.bary[2]*sx[2]
					py := pl.bary[0]*sy[0] + pl.bary[1]*sy[1] + pl.bary[2]*sy[2]
					if pl.name == "edge" {
						sx, sy = [3]float64{-0.35, 0.65, 0.3}, [3]float64{0, 0, 0.8}
						px, py = 0, 0
					}
					var tx, ty [3]float64
					for i := range 3 {
						tx[i], ty[i] = (sx[i]-px)*h, (sy[i]-py)*h
					}
					P := [2]float64{0, 0}
					q := quadratic{P: P, c0: 0.8 * math.Pow(h, gamma), c: [2]float64{0.7 * math.Pow(h, gamma-1), -0.4 * math.Pow(h, gamma-1)}}
					if deg == 2 {
						g := math.Pow(h, gamma-2)
						q.h = [3]float64{0.5 * g, 0.2 * g, -0.3 * g}
					}
					u := quadraticOnTriangle(t, tx, ty, deg, q)
					ex := radialExact(gamma, P)
					_, got, err := u.Error(nil, ex, nil)
					if err != nil {
						t.Fatal(err)
					}
					wl2, wh1 := referenceError(gamma, q, tx, ty)
					name := fmt.Sprintf("γ=%g h=%g %s P%d", gamma, h, pl.name, deg)
					for _, c := range []struct {
						what      string
						got, want float64
					}{{"L2²", got.L2 * got.L2, wl2}, {"H1²", got.H1 * got.H1, wh1}, {"energy²", got.Energy * got.Energy, wh1}} {
						rel := math.Abs(c.got-c.want) / math.Abs(c.want)
						worst = max(worst, rel)
						if !(rel <= 1e-9) {
							t.Errorf("%s: %s = %.15g, closed form %.15g (rel. %.2g)", name, c.what, c.got, c.want, rel)
						}
					}
				}
			}
		}
	}
	t.Logf("largest relative difference: %.2g", worst)
}

// refined applies the degree-10 rule on the 4^levels pieces of a uniform
// subdivision of the piece c: the reference for the rule choice.
func (it *errorIntegrator) refined(c [3][3]float64, area float64, levels int) errSums {
	if levels == 0 {
		return it.rule(c, area, it.full)
	}
	mid := func(i, j int) [3]float64 {
		return [3]float64{(c[i][0] + c[j][0]) / 2, (c[i][1] + c[j][1]) / 2, (c[i][2] + c[j][2]) / 2}
	}
	m01, m12, m20 := mid(0, 1), mid(1, 2), mid(2, 0)
	var s errSums
	for _, ch := range [4][3][3]float64{{c[0], m01, m20}, {m01, c[1], m12}, {m20, m12, c[2]}, {m12, m20, m01}} {
		add(&s, it.refined(ch, area/4, levels-1))
	}
	return s
}

// The rules chosen away from the singular point (energyRules, allRules,
// and cutting into four above their ratios) meet 1e-9 relative on random
// triangles of diameter h at distance d from it, h/d from 1e-3 to 2, for
// u = r^γ μ(θ) and its interpolant as u_h, against the degree-10 rule on
// 256 sub-triangles (common practice: a converged finer quadrature as the
// reference for a smooth integrand). For P2 and for the L² error the
// range starts where the rounding of u_h allows 1e-9 (see Error).
func TestRuleChoiceAccuracy(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 2))
	trials := 400
	if testing.Short() {
		trials = 100
	}
	worst := map[string]float64{}
	for trial := range trials {
		gamma := []float64{0.05, 0.1, 0.5, 2.0 / 3}[trial%4]
		deg := 1 + trial/2%2
		energyOnly := trial/4%2 == 0
		lo := 1e-3
		switch {
		case deg == 2:
			lo = 0.04
		case !energyOnly:
			lo = 0.004
		}
		ratio := lo * math.Pow(2/lo, rng.Float64())
		// A triangle of diameter about 1 whose nearest point is at about
		// 1/ratio from the origin.
		dist := 1 / ratio
		ang := rng.Float64() * 2 * math.Pi
		cx, cy := (dist+0.5)*math.Cos(ang), (dist+0.5)*math.Sin(ang)
		var tx, ty [3]float64
		for i := range 3 {
			a := ang + float64(i)*2*math.Pi/3 + 0.5*(rng.Float64()-0.5)
			tx[i], ty[i] = cx+0.55*math.Cos(a), cy+0.55*math.Sin(a)
		}
		ex := radialExact(gamma, [2]float64{})
		s := quadraticOnTriangle(t, tx, ty, deg, quadratic{}).Space
		u, err := Interpolate(s, ex.U)
		if err != nil {
			t.Fatal(err)
		}
		it, err := newErrorIntegrator(u, ex, &Problem{}, energyOnly)
		if err != nil {
			t.Fatal(err)
		}
		got, err := it.triangle(0)
		if err != nil {
			t.Fatal(err)
		}
		corners := [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}
		want := it.refined(corners, it.ev.g.area, 4)
		for c, what := range []string{"L2", "H1", "energy"} {
			if energyOnly && c < 2 {
				continue
			}
			rel := math.Abs(got[c]-want[c]) / want[c]
			key := fmt.Sprintf("P%d %s", deg, what)
			worst[key] = max(worst[key], rel)
			if !(rel <= 1e-9) {
				t.Errorf("P%d γ=%g h/d=%.3g energyOnly=%v: %s² %.15g, reference %.15g (rel. %.2g)", deg, gamma, ratio, energyOnly, what, got[c], want[c], rel)
			}
		}
	}
	t.Logf("largest relative differences: %v", worst)
}

// Bad exact solutions are errors that say where: a NaN gradient names its
// triangle and point, on the rule path and on the singular path; missing
// functions, a negative Scale and a NaN singular point are rejected.
func TestErrorBadExact(t *testing.T) {
	t.Parallel()
	m, err := mesh.Rectangle(0, 0, 1, 1, 4, 4)
	if err != nil {
		t.Fatal(err)
	}
	s, _ := NewSpace(m, 1)
	u := &Function{Space: s, U: make([]float64, s.NumDOF())}
	nanRight := func(x, y float64) (float64, float64) {
		if x > 0.6 {
			return math.NaN(), 0
		}
		return 1, 0
	}
	one := func(x, y float64) float64 { return 1 }
	for _, sing := range [][][2]float64{nil, {{0.75, 0.5}}} {
		for _, energy := range []bool{false, true} {
			var err error
			ex := Exact{U: one, Grad: nanRight, Singular: sing}
			if energy {
				_, _, err = u.EnergyError(nil, ex, nil)
			} else {
				_, _, err = u.Error(nil, ex, nil)
			}
			var de *DataError
			if !errors.Is(err, ErrNotFinite) || !errors.As(err, &de) || de.Triangle < 0 || !de.AtPoint || !(de.X > 0.6) {
				t.Errorf("singular %v, energy %v: error %v, want a located ErrNotFinite at x > 0.6", sing, energy, err)
			}
		}
	}
	for name, ex := range map[string]Exact{
		"no gradient":    {U: one},
		"negative scale": {U: one, Grad: nanRight, Scale: -1},
		"NaN point":      {U: one, Grad: nanRight, Singular: [][2]float64{{math.NaN(), 0}}},
	} {
		if _, _, err := u.Error(nil, ex, nil); !errors.Is(err, ErrArgument) && !errors.Is(err, ErrNotFinite) {
			t.Errorf("%s: error %v", name, err)
		}
	}
}
