package fem

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/internal/quadrature"
)

// The integration scheme of Function.Error. Each triangle is integrated by
// one of three means, chosen per triangle (and per piece of a subdivided
// triangle) before any evaluation:
//
//   - A piece that contains a singular point P (to within 1e-9 of its
//     diameter) is cut into the three triangles (P, A, B) over its edges AB,
//     with signed areas, so that the decomposition is exact wherever P lies:
//     at a vertex (one piece), on an edge (two), inside or just outside
//     (three). Each is mapped to the unit square by the Duffy transformation
//     x = P + s((A − P) + t(B − A)), dx = 2|PAB| s ds dt, under which
//     u = r^γ μ(θ) and its gradient become sums of powers of s along each
//     ray t = const. In s the integral is split into the geometric layers
//     [σ^{k+1}, σ^k], σ = errRadialRatio, each integrated by an
//     errRadialPoints-point Gauss–Legendre rule; the partial sums of the
//     layers are extrapolated by Wynn's ε-algorithm (Shanks' transformation,
//     exact for the partial sums of a few powers s^β, one geometric sequence
//     of layers per power), and layers are added until three successive
//     extrapolations agree to errRelTol. In t the rule is graded the same way
//     towards the foot of the perpendicular from P onto AB, down to the
//     distance of P from that edge, so that thin pieces (P close to an edge)
//     are integrated as accurately as fat ones; that distance and the
//     offsets from the foot are kept to full relative precision (Kahan's 2×2
//     determinant, diffOfProducts).
//   - A piece at distance d from the nearest singular point, with diameter h,
//     gets the Dunavant rule of the lowest degree whose measured accuracy at
//     the ratio h/ℓ, ℓ = min(d, Exact.Scale), is 5e-10 relative or better
//     (the tables energyRules and allRules: the error of a degree-q rule
//     falls like (h/ℓ)^{q+1−2p} for elements of degree p); if even degree
//     10 does not serve, the piece is cut into four at its edge midpoints
//     and each child chooses again.
//   - Without singular points and without Exact.Scale, every triangle gets
//     the rule of degree ErrorDegree.
//
// References:
//   - M. G. Duffy, Quadrature over a pyramid or cube of integrands with a
//     singularity at a vertex, SIAM J. Numer. Anal. 19 (1982) 1260–1262.
//   - C. Schwab, Variable order composite quadrature of singular and nearly
//     singular integrals, Computing 53 (1994) 173–194 (geometric grading
//     with Gauss rules of fixed order: exponential convergence for r^β).
//   - P. Wynn, On a device for computing the e_m(S_n) transformation,
//     Math. Tables Aids Comput. 10 (1956) 91–96 (see wynn).
const (
	errRadialRatio  = 0.25  // σ of the geometric layers in s and t
	errRadialPoints = 12    // Gauss–Legendre points per layer
	errRelTol       = 1e-12 // agreement of successive extrapolations
	errMaxLayers    = 40    // layers per ray at most (the floor of radialIntegral ends them sooner)
	errMaxDepth     = 40    // subdivisions into four of a piece near a singular point
)

// errQuantities is the number of integrands: e², |∇e|², a∇e·∇e + c e².
const errQuantities = 3

type errSums [errQuantities]float64

// errorIntegrator integrates the error integrands on the triangles of one
// Function. It is used by one goroutine at a time.
type errorIntegrator struct {
	ev       *Evaluator
	ex       Exact
	p        *Problem
	degree   int
	constA   bool   // the diffusion is constant on each triangle
	a        Tensor // the current triangle's diffusion, when constA
	full     *quadrature.Triangle
	rules    [quadrature.MaxTriangleDegree + 1]*quadrature.Triangle
	radial   *quadrature.Line
	bad      error
	hasScale bool
	needU    bool      // the L² error or a reaction term needs u itself
	table    ruleTable // the rules away from singular points
	locate   bool      // check every value, to locate a NaN or infinity
	// Fast path: P1 without u, whose gradient (gx, gy) is constant on the
	// triangle.
	constGrad bool
	gx, gy    float64
	// custom, if not nil, replaces the error integrands: at returns its
	// value as the first integrand (the goal values of goal_exact.go).
	custom func(it *errorIntegrator, x, y float64, l [3]float64) float64
}

// newErrorIntegrator returns an integrator of the errors of u; with
// energyOnly, the L² and H¹ sums are not needed (they are returned, but
// computed with rules chosen for the energy, and without u when c = 0).
func newErrorIntegrator(u *Function, ex Exact, p *Problem, energyOnly bool) (*errorIntegrator, error) {
	deg := u.Space.Degree
	it := &errorIntegrator{ev: NewEvaluator(u), ex: ex, p: p, degree: deg, constA: p.AFunc == nil,
		needU: !energyOnly || p.C != 0, table: allRules[deg]}
	if energyOnly {
		it.table = energyRules[deg]
	}
	for q := 1; q <= quadrature.MaxTriangleDegree; q++ {
		r, err := quadrature.ForTriangle(q)
		if err != nil {
			return nil, err
		}
		it.rules[q] = r
	}
	it.full = it.rules[ErrorDegree]
	r, err := quadrature.GaussLegendre(errRadialPoints)
	if err != nil {
		return nil, err
	}
	it.radial = r
	it.hasScale = ex.Scale > 0 && !math.IsInf(ex.Scale, 1)
	return it, nil
}

// at returns the three integrands at the physical point (x, y) with
// barycentric coordinates l in the current triangle.
func (it *errorIntegrator) at(x, y float64, l [3]float64) (e2, g2, en float64) {
	if it.custom != nil {
		return it.custom(it, x, y, l), 0, 0
	}
	var v, gx, gy float64
	if it.constGrad {
		gx, gy = it.gx, it.gy
	} else {
		v, gx, gy = it.ev.Eval(l)
	}
	ue := v
	if it.needU {
		ue = it.ex.U(x, y)
	}
	ux, uy := it.ex.Grad(x, y)
	e, dx, dy := ue-v, ux-gx, uy-gy
	if it.locate && (math.IsNaN(e+dx+dy) || math.IsInf(e+dx+dy, 0)) {
		if it.bad == nil {
			it.bad = atTriangle(it.ev.k, x, y, fmt.Errorf("%w: exact solution or its gradient", ErrNotFinite))
		}
		return 0, 0, 0
	}
	a := it.a
	if !it.constA {
		a = it.p.AFunc(x, y, it.ev.g.region)
	}
	ax, ay := a.Apply(dx, dy)
	return e * e, dx*dx + dy*dy, ax*dx + ay*dy + it.p.C*e*e
}

// triangle returns the integrals over triangle k.
func (it *errorIntegrator) triangle(k int) (errSums, error) {
	it.ev.Load(k)
	g := &it.ev.g
	if it.constA {
		it.a = it.p.Diffusion(0, 0, g.region)
	}
	it.bad = nil
	if it.constGrad = it.degree == 1 && !it.needU; it.constGrad {
		// ∇u_h = Σ u_i ∇λ_i.
		it.gx, it.gy = 0, 0
		for i := range 3 {
			it.gx += it.ev.coef[i] * g.gl[i][0]
			it.gy += it.ev.coef[i] * g.gl[i][1]
		}
	}
	s := it.integrate(g.area)
	if v := s[0] + s[1] + s[2]; math.IsNaN(v) || math.IsInf(v, 0) {
		// Integrate again, checking each point, to locate the bad value.
		it.locate = true
		it.integrate(g.area)
		it.locate = false
		if it.bad == nil {
			it.bad = atPiece(k, fmt.Errorf("%w: error integral", ErrNotFinite))
		}
	}
	return s, it.bad
}

// integrate integrates over the current triangle, of the given area.
func (it *errorIntegrator) integrate(area float64) errSums {
	corners := [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}
	if len(it.ex.Singular) == 0 && !it.hasScale {
		return it.rule(corners, area, it.full)
	}
	return it.piece(corners, area, 0)
}

// rule applies r on the piece with barycentric corners c and the given area.
func (it *errorIntegrator) rule(c [3][3]float64, area float64, r *quadrature.Triangle) errSums {
	g := &it.ev.g
	whole := c == [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}
	var s errSums
	for q := range r.Len() {
		l := [3]float64{r.Bary[3*q], r.Bary[3*q+1], r.Bary[3*q+2]}
		if !whole {
			a, b, d := l[0], l[1], l[2]
			for i := range 3 {
				l[i] = a*c[0][i] + b*c[1][i] + d*c[2][i]
			}
		}
		x, y := g.point(l)
		e2, g2, en := it.at(x, y, l)
		w := r.W[q] * area
		s[0] += w * e2
		s[1] += w * g2
		s[2] += w * en
	}
	return s
}

// piece integrates over the piece with barycentric corners c (in the
// current triangle) and the given area, at subdivision depth depth.
func (it *errorIntegrator) piece(c [3][3]float64, area float64, depth int) errSums {
	g := &it.ev.g
	px, py := g.x, g.y
	if depth > 0 {
		for i := range 3 {
			px[i], py[i] = g.point(c[i])
		}
	}
	h := math.Sqrt(max(sq(px[1]-px[0])+sq(py[1]-py[0]), sq(px[2]-px[1])+sq(py[2]-py[1]), sq(px[0]-px[2])+sq(py[0]-py[2])))
	cx, cy := (px[0]+px[1]+px[2])/3, (py[0]+py[1]+py[2])/3
	inside, found := 0, -1
	dist := math.Inf(1)
	for i, sp := range it.ex.Singular {
		// Far from the piece, the distance to its centroid less h (every
		// point of the piece lies within h of the centroid) is a lower
		// bound close enough for the rule choice.
		d := math.Hypot(sp[0]-cx, sp[1]-cy) - h
		if d < 2*h {
			d = pointTriangleDistance(sp[0], sp[1], px, py)
		}
		if d <= 1e-9*h {
			inside++
			found = i
		}
		dist = min(dist, d)
	}
	switch {
	case inside == 1 || (inside > 1 && depth >= errMaxDepth):
		return it.singular(c, px, py, it.ex.Singular[found])
	case inside > 1:
		return it.split(c, area, depth)
	}
	ell := dist
	if it.hasScale {
		ell = min(ell, it.ex.Scale)
	}
	q := it.table.degreeFor(h / ell)
	if q == 0 {
		if depth >= errMaxDepth {
			return it.rule(c, area, it.full)
		}
		return it.split(c, area, depth)
	}
	return it.rule(c, area, it.rules[q])
}

// split cuts the piece into four at its edge midpoints.
func (it *errorIntegrator) split(c [3][3]float64, area float64, depth int) errSums {
	mid := func(i, j int) [3]float64 {
		return [3]float64{(c[i][0] + c[j][0]) / 2, (c[i][1] + c[j][1]) / 2, (c[i][2] + c[j][2]) / 2}
	}
	m01, m12, m20 := mid(0, 1), mid(1, 2), mid(2, 0)
	children := [4][3][3]float64{{c[0], m01, m20}, {m01, c[1], m12}, {m20, m12, c[2]}, {m12, m20, m01}}
	var s errSums
	for _, ch := range children {
		add(&s, it.piece(ch, area/4, depth+1))
	}
	return s
}

// ruleTable lists, for one element degree, the Dunavant rules Error uses
// away from the singular points, each with the largest h/ℓ at which it is
// used, in increasing order.
type ruleTable []struct {
	degree int
	ratio  float64
}

// The rule tables come from a one-off calibration run (not kept in the
// repository): for u = r^γ μ(θ), γ ∈ {0.05, 0.1, 0.5, 2/3}, its P1 or P2
// interpolant as u_h, and 80 random triangles at each of 13 ratios h/d
// from 0.001 to 0.4, each rule's largest relative error against the
// degree-10 rule on 256 sub-triangles was at most 5e-10 at the ratio
// listed; the P1 degree-5 entry, 0.0125, lies between two measured ratios
// (2e-10 at 0.01, 3.2e-9 at 0.02) and was set from the observed slope.
// TestRuleChoiceAccuracy checks the tables as they are on 400 random
// triangles against 1e-9 (largest seen: 3.0e-10, P1 energy).
// energyRules serve the energy and H¹ errors; allRules also the L² error,
// whose integrand (u − u_h)² is smaller relative to the rounding of u_h
// and needs higher degrees.
var (
	energyRules = [3]ruleTable{
		1: {{4, 0.002}, {5, 0.0125}, {6, 0.04}, {8, 0.1}, {9, 0.15}, {10, 0.3}},
		2: {{6, 0.01}, {8, 0.04}, {9, 0.07}, {10, 0.15}},
	}
	allRules = [3]ruleTable{
		1: {{6, 0.005}, {8, 0.04}, {9, 0.07}, {10, 0.2}},
		2: {{8, 0.01}, {9, 0.02}, {10, 0.07}},
	}
)

// degreeFor returns the degree of the first rule of t that serves the
// ratio h/ℓ, or 0 if the piece must be cut.
func (t ruleTable) degreeFor(ratio float64) int {
	for _, r := range t {
		if ratio <= r.ratio {
			return r.degree
		}
	}
	return 0
}

// singular integrates over the piece with barycentric corners c and
// physical corners (px, py) that contains the singular point sp.
func (it *errorIntegrator) singular(c [3][3]float64, px, py [3]float64, sp [2]float64) errSums {
	lp := it.ev.g.bary(sp[0], sp[1])
	var s errSums
	for i := range 3 {
		j, k := (i+1)%3, (i+2)%3
		add(&s, it.duffy(sp, lp, [2]float64{px[j], py[j]}, [2]float64{px[k], py[k]}, c[j], c[k]))
	}
	return s
}

// duffy returns the integral over the sub-triangle (P, A, B), signed by
// its orientation: twice its signed area times
// ∫_0^1 ∫_0^1 F(P + s v(t)) s ds dt with v(t) = (A − P) + t(B − A).
func (it *errorIntegrator) duffy(P [2]float64, lp [3]float64, A, B [2]float64, la, lb [3]float64) errSums {
	// With d = B − A and d⊥ = (−d_y, d_x), A − P = −t0 d + β d⊥, so that
	// v(t) = (t − t0) d + β d⊥ and twice the signed area is −β|d|²: the
	// offsets t − t0 and β are small numbers known to full relative
	// precision when P is close to AB, where the differences A + t d − P
	// would cancel.
	dx, dy := B[0]-A[0], B[1]-A[1]
	len2 := dx*dx + dy*dy
	ax, ay := A[0]-P[0], A[1]-P[1]
	t0 := -(ax*dx + ay*dy) / len2
	beta := diffOfProducts(dx, ay, dy, ax) / len2
	if beta == 0 || len2 == 0 {
		return errSums{} // P on the line AB: an empty sub-triangle
	}
	ts := min(max(t0, 0), 1)
	w := math.Hypot(ts-t0, beta)       // distance of P from the segment AB, in units of t
	ray := func(off float64) errSums { // the ray to A + (ts + off) d
		tau := (ts - t0) + off
		v := [2]float64{tau*dx - beta*dy, tau*dy + beta*dx}
		t := ts + off
		var lv [3]float64
		for i := range 3 {
			lv[i] = la[i] - lp[i] + t*(lb[i]-la[i])
		}
		return it.radialIntegral(P, lp, v, lv)
	}
	var s errSums
	// Each side of ts: geometric layers towards ts down to the width w,
	// then one interval.
	for _, side := range [2]float64{-1, 1} {
		length := ts
		if side > 0 {
			length = 1 - ts
		}
		if length <= 0 {
			continue
		}
		hi := length
		for range errMaxLayers {
			if hi <= w {
				break
			}
			lo := hi * errRadialRatio
			add(&s, it.line(ray, side*lo, side*hi))
			hi = lo
		}
		add(&s, it.line(ray, 0, side*hi))
	}
	return scaled(s, -beta*len2)
}

// line integrates f over [a, b] (in either order; the result is for the
// interval's length) with the Gauss–Legendre rule of errRadialPoints.
func (it *errorIntegrator) line(f func(t float64) errSums, a, b float64) errSums {
	if a > b {
		a, b = b, a
	}
	r := it.radial
	var s errSums
	for j := range r.Len() {
		v := f(a + (b-a)*r.X[j])
		add(&s, scaled(v, r.W[j]*(b-a)))
	}
	return s
}

// radialIntegral returns ∫_0^1 F(P + s v) s ds, with lp + s lv the
// barycentric coordinates of P + s v, by geometric layers in s whose
// partial sums are extrapolated by Wynn's ε-algorithm.
func (it *errorIntegrator) radialIntegral(P [2]float64, lp [3]float64, v [2]float64, lv [3]float64) errSums {
	r := it.radial
	vlen := math.Hypot(v[0], v[1])
	// Below this s, P + s v no longer resolves s v relative to P, or |s v|
	// nears the floating-point range's end (powers of it may overflow).
	floor := max(1e-60, 1e-100/vlen)
	if pm := max(math.Abs(P[0]), math.Abs(P[1])); pm > 0 {
		floor = max(floor, 1e3*pm*0x1p-52/vlen)
	}
	var sums [errQuantities][errMaxLayers]float64
	var est [2]errSums // the last two extrapolations
	var total errSums
	hi := 1.0
	for k := range errMaxLayers {
		lo := hi * errRadialRatio
		for j := range r.Len() {
			s := lo + (hi-lo)*r.X[j]
			x, y := P[0]+s*v[0], P[1]+s*v[1]
			var l [3]float64
			for i := range 3 {
				l[i] = lp[i] + s*lv[i]
			}
			e2, g2, en := it.at(x, y, l)
			w := r.W[j] * (hi - lo) * s
			total[0] += w * e2
			total[1] += w * g2
			total[2] += w * en
		}
		var cur errSums
		for c := range errQuantities {
			sums[c][k] = total[c]
			cur[c] = wynn(sums[c][:k+1])
		}
		if k >= 4 && settled(cur, est[0], est[1]) || lo <= floor {
			return cur
		}
		est[1], est[0] = est[0], cur
		hi = lo
	}
	return est[0]
}

// settled reports whether three successive extrapolations agree to
// errRelTol for every quantity.
func settled(e, e1, e2 errSums) bool {
	for c := range errQuantities {
		tol := errRelTol * math.Abs(e[c])
		if !(math.Abs(e[c]-e1[c]) <= tol && math.Abs(e1[c]-e2[c]) <= tol) {
			return false
		}
	}
	return true
}

// wynn returns the limit of the partial sums s estimated by Wynn's
// ε-algorithm: the last entry of the highest even column of the table
//
//	ε_{−1}^{(n)} = 0,  ε_0^{(n)} = s_n,  ε_{k+1}^{(n)} = ε_{k−1}^{(n+1)} + 1/(ε_k^{(n+1)} − ε_k^{(n)}),
//
// whose column 2m is exact when s_n = S + Σ_{i ≤ m} a_i q_i^n (Shanks'
// e_m transformation). The partial sums of the layers of a sum of powers
// s^β are of this form, one term per power.
//
// References:
//   - P. Wynn, On a device for computing the e_m(S_n) transformation,
//     Math. Tables Aids Comput. 10 (1956) 91–96.
//   - D. Shanks, Non-linear transformations of divergent and slowly
//     convergent sequences, J. Math. Phys. 34 (1955) 1–42.
func wynn(s []float64) float64 {
	n := len(s)
	var a, b [errMaxLayers + 1]float64
	prev, cur := a[:n+1], b[:n] // columns k−1 and k
	copy(cur, s)
	best := s[n-1]
	for col := 1; len(cur) > 1; col++ {
		next := prev[:len(cur)-1]
		for i := range next {
			d := cur[i+1] - cur[i]
			if d == 0 {
				// The column has converged exactly.
				if col%2 == 1 {
					return cur[i+1]
				}
				return best
			}
			next[i] = prev[i+1] + 1/d
		}
		prev, cur = cur, next
		if col%2 == 0 {
			best = cur[len(cur)-1]
		}
	}
	return best
}

// pointTriangleDistance returns the distance from (x, y) to the closed
// triangle with corners (px, py), 0 inside.
func pointTriangleDistance(x, y float64, px, py [3]float64) float64 {
	inside := true
	orient := (px[1]-px[0])*(py[2]-py[0]) - (py[1]-py[0])*(px[2]-px[0])
	d2 := math.Inf(1)
	for i := range 3 {
		j := (i + 1) % 3
		ex, ey := px[j]-px[i], py[j]-py[i]
		cross := ex*(y-py[i]) - ey*(x-px[i])
		if cross*orient < 0 {
			inside = false
		}
		t := ((x-px[i])*ex + (y-py[i])*ey) / (ex*ex + ey*ey)
		t = min(max(t, 0), 1)
		dx, dy := x-px[i]-t*ex, y-py[i]-t*ey
		d2 = min(d2, dx*dx+dy*dy)
	}
	if inside {
		return 0
	}
	return math.Sqrt(d2)
}

func sq(x float64) float64 { return x * x }

// diffOfProducts returns ab − cd to within about one ulp of the result,
// also when the two products nearly cancel (Kahan's algorithm with a fused
// multiply–add; C.-P. Jeannerod, N. Louvet and J.-M. Muller, Further
// analysis of Kahan's algorithm for the accurate computation of 2×2
// determinants, Math. Comp. 82 (2013) 2245–2264).
func diffOfProducts(a, b, c, d float64) float64 {
	w := c * d
	e := math.FMA(-c, d, w)
	f := math.FMA(a, b, -w)
	return f + e
}

func add(s *errSums, v errSums) {
	for c := range errQuantities {
		s[c] += v[c]
	}
}

func scaled(v errSums, f float64) errSums {
	for c := range errQuantities {
		v[c] *= f
	}
	return v
}
