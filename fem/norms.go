package fem

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
	"github.com/posteriori-fem/posteriori/internal/spare"
)

// Exact is a known solution for measuring true errors.
type Exact struct {
	U    Func                                // the solution u
	Grad func(x, y float64) (gx, gy float64) // its gradient ∇u
	// Singular lists points where u is not smooth (a re-entrant corner, a
	// crack tip, a point where coefficients meet), of the form
	// u = r^γ μ(θ) + (smoother terms) with r, θ polar coordinates about the
	// point and γ > 0. A triangle that contains one is integrated by the
	// Duffy transformation about it; triangles near one are integrated by
	// rules chosen from their distance to it (see Error).
	Singular [][2]float64
	// Scale, if positive, is a length on which u varies away from the
	// singular points: about the radius of a disc around each point in
	// which u is analytic (a layer's width, a peak's radius). It bounds the
	// length ℓ of Error's rule choice, which cuts a triangle of diameter
	// h into about (h/(0.3ℓ))² pieces where h > 0.3ℓ: costly on coarse
	// meshes when ℓ is small. Zero means no bound beyond the distance to
	// the singular points; with no singular points either, every triangle
	// gets the rule of degree ErrorDegree.
	Scale float64
}

// Errors holds the norms of the error e = u − u_h.
type Errors struct {
	L2 float64 // ‖e‖ in L²(Ω)
	H1 float64 // |e|_H¹ = ‖∇e‖ in L²(Ω), the H¹ seminorm
	// Energy is the energy norm of the problem,
	// (∫ a∇e·∇e + c e² + Σ_{Robin E} ∫_E α e²)^½, equal to ‖a^½ ∇e‖
	// when c = 0 and there are no Robin edges.
	Energy float64
}

// ErrorDegree is the degree of the rule Error uses on every triangle when
// the exact solution declares neither singular points nor a scale, and the
// highest degree it uses otherwise.
const ErrorDegree = 10

// Error returns the norms of u − u_h for the exact solution ex, and writes
// the squared energy error of each triangle into dst (resized; a nil dst
// allocates), which it returns. EnergyError computes the energy error
// alone, at about a third of the cost.
//
// Accuracy, measured against closed forms and reference quadrature (see
// the tests of errquad.go, which states the scheme and its sources):
//
//   - On a triangle that contains a declared singular point, at a vertex,
//     on an edge or inside, with u = r^γ μ(θ) about it (γ ≥ 0.05, μ smooth
//     on the triangle), the three integrals are exact to about 1e-11
//     relative on triangles of any size (tested down to diameter 1e-12).
//   - Elsewhere the rule for each triangle is chosen from h/ℓ, its diameter
//     over its distance to the nearest singular point (or Exact.Scale if
//     smaller), so that the energy, H¹ and L² errors of each triangle are
//     within 1e-9 relative for such u where the rounding of u_h allows:
//     the errors of a triangle far from the singular points are tiny next
//     to u and ∇u themselves, and the float64 values of u_h and ∇u_h
//     carry absolute errors of about 2⁻⁵²|u| and 2⁻⁵²|u|/h, which bound
//     the relative accuracy of ‖u − u_h‖²_T from below. Measured
//     (TestRuleChoiceAccuracy): 1e-9 for P1 from h/d = 0.001 (L² from
//     0.004) and for P2 from h/d = 0.04; below, the rounding floor rises
//     to about 1e-8 for P1's L² error and 1e-5 for P2's at h/d = 0.001.
//     The totals, dominated by the larger errors, are not affected at the
//     digits printed.
//   - U and Grad see coordinates rounded to float64: a singular point
//     P ≠ 0 is resolved to about 2⁻⁵²|P|, which limits the relative
//     accuracy on a triangle of diameter h at P to about
//     (1e-13 |P| / h)^{2γ}. At the origin there is no such limit.
//   - Without singular points and Scale, each triangle gets the rule of
//     degree ErrorDegree, exact for polynomial integrands of that degree
//     and no more.
//
// On a problem with Robin edges the energy error includes the boundary
// term Σ_E ∫_E α e² ds, integrated by a 20-point Gauss–Legendre rule per
// edge (exact for polynomial integrands of degree 39) and added to the
// triangle of the edge; the L² and H¹ norms are those of Ω alone.
//
// The triangles are split over GOMAXPROCS goroutines and the sums are
// taken in triangle order, so the result does not depend on GOMAXPROCS.
func (u *Function) Error(dst []float64, ex Exact, p *Problem) ([]float64, Errors, error) {
	return u.errors(dst, ex, p, false)
}

// EnergyError returns the squared energy error of each triangle in dst
// (resized; a nil dst allocates) and the total energy error
// (∫ a∇e·∇e + c e² + Σ_{Robin E} ∫_E α e²)^½ of e = u − u_h, with the
// accuracy stated for Error.
// It skips the L² and H¹ norms: the rules are chosen for the energy alone,
// and u itself is not evaluated when c = 0.
func (u *Function) EnergyError(dst []float64, ex Exact, p *Problem) ([]float64, float64, error) {
	dst, e, err := u.errors(dst, ex, p, true)
	return dst, e.Energy, err
}

func (u *Function) errors(dst []float64, ex Exact, p *Problem, energyOnly bool) ([]float64, Errors, error) {
	name := "Error"
	if energyOnly {
		name = "EnergyError"
	}
	if ex.U == nil || ex.Grad == nil {
		return dst, Errors{}, fmt.Errorf("fem: %s: exact solution needs U and Grad: %w", name, ErrArgument)
	}
	if !(ex.Scale >= 0) {
		return dst, Errors{}, fmt.Errorf("fem: %s: Scale = %g, want ≥ 0: %w", name, ex.Scale, ErrArgument)
	}
	for i, sp := range ex.Singular {
		if math.IsNaN(sp[0]+sp[1]) || math.IsInf(sp[0]+sp[1], 0) {
			return dst, Errors{}, fmt.Errorf("fem: %s: singular point %d = %v: %w", name, i, sp, ErrNotFinite)
		}
	}
	if p == nil {
		p = &Problem{}
	}
	nt := u.Space.Mesh.NumTriangles()
	dst = resize(dst, nt)
	var l2, h1 []float64
	if !energyOnly {
		l2, h1 = make([]float64, nt), make([]float64, nt)
	}
	// The cost per triangle varies (the rule's degree, the cuts near
	// singular points): chunks are handed out as workers finish.
	start := func() (*errorIntegrator, error) { return newErrorIntegrator(u, ex, p, energyOnly) }
	err := parallel.Dynamic(nt, 1024, start, func(it *errorIntegrator, lo, hi int) error {
		for k := lo; k < hi; k++ {
			s, err := it.triangle(k)
			if err != nil {
				return err
			}
			dst[k] = s[2]
			if !energyOnly {
				l2[k], h1[k] = s[0], s[1]
			}
		}
		return nil
	})
	if err != nil {
		return dst, Errors{}, err
	}
	if err := u.robinError(dst, ex, p); err != nil {
		return dst, Errors{}, err
	}
	var e Errors
	for k := range nt {
		e.Energy += dst[k]
	}
	if !energyOnly {
		for k := range nt {
			e.L2 += l2[k]
			e.H1 += h1[k]
		}
	}
	e.L2, e.H1, e.Energy = math.Sqrt(e.L2), math.Sqrt(e.H1), math.Sqrt(e.Energy)
	return dst, e, nil
}

// energyP1 writes the energy of u on the triangles [lo, hi) into part, for
// P1 and piecewise-constant a, in closed form.
func energyP1(u *Function, p *Problem, rt *RegionTable, lo, hi int, part []float64) {
	m := u.Space.Mesh
	x, uu := m.X, u.U
	for k := lo; k < hi; k++ {
		t := m.Tri[3*k : 3*k+3 : 3*k+3]
		x0, y0 := x[2*t[0]], x[2*t[0]+1]
		ax, ay := x[2*t[1]]-x0, x[2*t[1]+1]-y0
		bx, by := x[2*t[2]]-x0, x[2*t[2]+1]-y0
		d := ax*by - ay*bx // 2|T|
		u0, u1, u2 := uu[t[0]], uu[t[1]], uu[t[2]]
		du1, du2 := u1-u0, u2-u0
		gx, gy := (by*du1-ay*du2)/d, (ax*du2-bx*du1)/d
		fx, fy := rt.At(m.Region[k]).Apply(gx, gy)
		v := 0.5 * d * (fx*gx + fy*gy)
		if p.C != 0 {
			s := u0 + u1 + u2
			v += p.C * d / 24 * (u0*u0 + u1*u1 + u2*u2 + s*s)
		}
		part[k] = v
	}
}

// robinError adds ∫_E α (u − u_h)² ds of each Robin edge E to e2 at the
// triangle of E, in ascending edge order, by a 20-point Gauss–Legendre
// rule.
func (u *Function) robinError(e2 []float64, ex Exact, p *Problem) error {
	if len(p.Robin) == 0 {
		return nil
	}
	rule, err := quadrature.GaussLegendre(20)
	if err != nil {
		return err
	}
	m := u.Space.Mesh
	for _, e := range boundaryEdges(m) {
		tag := m.EdgeTag[e]
		r, ok := p.Robin[tag]
		if !ok {
			continue
		}
		ax, ay := m.Vertex(int(m.Edge[2*e]))
		bx, by := m.Vertex(int(m.Edge[2*e+1]))
		length := m.EdgeLength(int(e))
		s := 0.0
		for q, t := range rule.X {
			x, y := ax+t*(bx-ax), ay+t*(by-ay)
			alpha, _, err := r.Values(tag, x, y)
			if err != nil {
				return err
			}
			d := ex.U(x, y) - u.EdgeValue(int(e), t)
			if math.IsNaN(d) || math.IsInf(d, 0) {
				return atTag(tag, fmt.Errorf("%w: exact solution at (%g, %g)", ErrNotFinite, x, y))
			}
			s += rule.W[q] * alpha * d * d
		}
		e2[m.EdgeTri[2*e]] += s * length
	}
	return nil
}

// EnergyNorm returns the energy norm of u for the problem p,
//
//	|||u|||² = ∫ a∇u·∇u + c u² + Σ_{Robin E} ∫_E α u²,
//
// the norm in which the estimators measure the error, by the quadrature of
// Assemble (exact for piecewise-constant a and constant α; for AFunc and
// AlphaFunc, the rules of degree 2p and 2p + LoadExtraDegree). It is how
// package adapt's relative tolerance scales η. The value is integrated
// rather than taken as uᵀAu from an assembled system, because the system's
// rows at Dirichlet nodes are those of the identity and a caller's
// solver has no system of this package; the cost is one pass over the
// triangles, split over GOMAXPROCS goroutines and summed in triangle
// order (then the Robin edges in ascending order), so the result does not
// depend on GOMAXPROCS. Data that are NaN or infinite give an error
// wrapping ErrNotFinite; a nil problem means a = 1, c = 0.
//
// Fast path for P1 with piecewise-constant a: each triangle's term in
// closed form from the nodal values, |T| ∇u·a∇u + c|T|/12 (Σ u_i² +
// (Σ u_i)²), with the diffusion from a RegionTable; otherwise the general
// quadrature above.
func (u *Function) EnergyNorm(p *Problem) (float64, error) {
	return u.energyNorm(p, false)
}

// energyNorm is EnergyNorm; general skips the fast path (tests).
func (u *Function) energyNorm(p *Problem, general bool) (float64, error) {
	if u == nil || u.Space == nil || len(u.U) != u.Space.NumDOF() {
		return 0, fmt.Errorf("fem: EnergyNorm: a function with one value per DOF is needed: %w", ErrArgument)
	}
	if p == nil {
		p = &Problem{}
	}
	s := u.Space
	m := s.Mesh
	deg := s.Degree
	r, err := elementRules(deg, p)
	if err != nil {
		return 0, err
	}
	nt := m.NumTriangles()
	part := make([]float64, nt)
	fast := deg == 1 && p.PiecewiseConstant() && !general
	rt := NewRegionTable(p)
	err = parallel.For(nt, 1024, func(lo, hi int) error {
		if fast {
			energyP1(u, p, rt, lo, hi, part)
			return nil
		}
		ev := NewEvaluator(u)
		for k := lo; k < hi; k++ {
			ev.Load(k)
			g := &ev.g
			cx, cy := g.point([3]float64{1. / 3, 1. / 3, 1. / 3})
			t := p.Diffusion(cx, cy, g.region)
			v := 0.0
			for q := range r.stiff.Len() {
				l := [3]float64{r.stiff.Bary[3*q], r.stiff.Bary[3*q+1], r.stiff.Bary[3*q+2]}
				_, gx, gy := ev.Eval(l)
				if !p.PiecewiseConstant() {
					x, y := g.point(l)
					if t = p.Diffusion(x, y, g.region); !t.valid() {
						return atTriangle(k, x, y, fmt.Errorf("%w: %+v", ErrDiffusion, t))
					}
				}
				fx, fy := t.Apply(gx, gy)
				v += r.stiff.W[q] * (fx*gx + fy*gy)
			}
			if p.C != 0 {
				for q := range r.mass.Len() {
					w, _, _ := ev.Eval([3]float64{r.mass.Bary[3*q], r.mass.Bary[3*q+1], r.mass.Bary[3*q+2]})
					v += p.C * r.mass.W[q] * w * w
				}
			}
			part[k] = v * g.area
		}
		return nil
	})
	if err != nil {
		return 0, err
	}
	n2 := 0.0
	for _, v := range part {
		n2 += v
	}
	if len(p.Robin) > 0 {
		rule, err := robinRule(deg)
		if err != nil {
			return 0, err
		}
		var me [3][3]float64
		var be [3]float64
		for _, e := range boundaryEdges(m) {
			rd, ok := p.Robin[m.EdgeTag[e]]
			if !ok {
				continue
			}
			if _, err := robinEdge(s, rd, int(e), rule, &me, &be); err != nil {
				return 0, err
			}
			ds := edgeDOFs(s, int(e))
			for i, di := range ds {
				for j, dj := range ds {
					n2 += me[i][j] * u.U[di] * u.U[dj]
				}
			}
		}
	}
	if math.IsNaN(n2) || math.IsInf(n2, 0) {
		return 0, fmt.Errorf("fem: EnergyNorm: %w: the norm of u is %g", ErrNotFinite, n2)
	}
	return math.Sqrt(max(n2, 0)), nil
}

// resize is spare.Resize: dst with length n, reusing its storage if it
// has room; the values are not cleared.
func resize(dst []float64, n int) []float64 { return spare.Resize(dst, n) }

// bary returns the barycentric coordinates of (x, y) in the triangle of g.
func (g *geometry) bary(x, y float64) [3]float64 {
	var l [3]float64
	for i := range 3 {
		j := (i + 1) % 3
		// λ_i is affine with gradient gl[i] and vanishes at vertex j.
		l[i] = g.gl[i][0]*(x-g.x[j]) + g.gl[i][1]*(y-g.y[j])
	}
	return l
}
