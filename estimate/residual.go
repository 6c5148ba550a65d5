package estimate

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Residual is the explicit residual estimator for P1 and P2, weighted by
// the diffusion so that it measures the error in the energy norm:
//
//	η_T² = h_T²/a_T ‖f + ∇·(a∇u_h) − c u_h‖²_T
//	       + ½ Σ_{interior E ⊂ ∂T} h_E/a_E ‖[[a∇u_h·n]]‖²_E
//	       + Σ_{Neumann E ⊂ ∂T} h_E/a_T ‖g_N − a∇u_h·n‖²_E
//	       + Σ_{Robin E ⊂ ∂T} h_E/a_T ‖g_R − α u_h − a∇u_h·n‖²_E
//
// with h_T the diameter of T, h_E the length of E, a_T the smallest
// eigenvalue of the diffusion at the centroid of T and a_E the larger of
// a_T over the two triangles of E. For a = 1 this is the unweighted
// estimator of the library's conventions; the weights make its
// effectivity independent of the size of a and of the contrast across
// interfaces (Bernardi and Verfürth 2000). Boundary edges with
// no Dirichlet, Neumann or Robin tag count as Neumann edges with g_N = 0;
// Dirichlet edges contribute nothing (the Dirichlet data are taken as
// resolved). A Robin edge is a Neumann edge whose data g_R − α u_h depend
// on u_h (fem.Problem.BoundaryFlux gives both); the estimate then bounds the
// energy norm with the boundary term, |||v|||² = ‖a^½∇v‖² + c‖v‖² +
// ‖α^½ v‖²_{Γ_R}, as the Neumann argument carries over with the residual
// of the Robin condition in place of that of the Neumann one.
// ∇·(a∇u_h) is a : ∇²u_h for piecewise-constant a (zero for P1); for a given
// by AFunc the derivatives of a are taken by central differences with step
// 1e-6 h_T.
//
// Quadrature: the element residual and the oscillation use the Dunavant
// rule of degree 2p + 2 (for P1 without f, the residual −c u_h is
// integrated in closed form, which that rule integrates exactly too); the
// flux jumps for piecewise-constant a are integrated exactly (they are
// polynomials of degree p − 1 on each edge); for AFunc and for the Neumann
// and Robin terms a Gauss–Legendre rule of degree 2p + 2 is used.
//
// The zero value is ready to use.
//
// References:
//   - R. Verfürth, A Posteriori Error Estimation Techniques for Finite
//     Element Methods, Oxford University Press, 2013.
//   - C. Bernardi and R. Verfürth, Adaptive finite element methods for
//     elliptic equations with non-smooth coefficients, Numer. Math. 85
//     (2000) 579–608.
//   - I. Babuška and W. C. Rheinboldt, Error estimates for adaptive finite
//     element computations, SIAM J. Numer. Anal. 15 (1978) 736–754.
type Residual struct {
	plainJumps bool // test hook: jumps of ∇u_h·n without a, to show why a belongs there
}

var _ Estimator = Residual{}

// Estimate computes the residual indicators and the data oscillation, in
// three passes, each split over GOMAXPROCS goroutines: one over the
// triangles (element residual and oscillation), one over the edges (edge
// terms) and one more over the triangles that adds the edge terms. Every
// value is computed by one goroutine in a fixed order, so the result does
// not depend on GOMAXPROCS.
//
// Fast paths for special cases; if none of them applies, the general but
// slower implementation:
//
//   - P1, piecewise-constant a (residualP1, residual_p1.go): the passes work
//     on the arrays of the mesh and the nodal values; the first stores the
//     flux a∇u_h of each triangle, from which the second takes the edge
//     terms in closed form.
//   - P2, piecewise-constant a (residualP2, residual_p2.go): the first pass
//     also stores the flux a∇u_h at the vertices of each triangle, from
//     which the second takes the jumps and the homogeneous boundary terms in
//     closed form.
//   - otherwise, that is for AFunc (general): every term by quadrature, a and
//     ∇u_h evaluated at each point.
func (r Residual) Estimate(dst *Indicators, u *fem.Function, p *fem.Problem) (*Indicators, error) {
	return estimateBy("Residual", dst, u, p, r.dispatch)
}

// dispatch runs the path of Estimate that serves u and p.
func (r Residual) dispatch(dst *Indicators, u *fem.Function, p *fem.Problem) error {
	pc := p.PiecewiseConstant() && !r.plainJumps
	switch {
	case pc && u.Space.Degree == 1:
		return residualP1(dst, u, p)
	case pc && u.Space.Degree == 2:
		return residualP2(dst, u, p)
	}
	return r.general(dst, u, p)
}

// general is Estimate for every input, after prepare: the path of AFunc,
// and the reference against which the fast paths are tested. The edge
// terms are integrated by the Gauss–Legendre rule of degree 2p + 2, which
// is exact for piecewise-constant a.
func (r Residual) general(dst *Indicators, u *fem.Function, p *fem.Problem) error {
	m := u.Space.Mesh
	deg := u.Space.Degree
	rule, err := quadrature.ForTriangle(2*deg + 2)
	if err != nil {
		return err
	}
	line, err := quadrature.ForLine(2*deg + 2)
	if err != nil {
		return err
	}
	if err := elementPass(dst, u, p, rule, nil); err != nil {
		return err
	}
	jump, err := edgePass(u, p, line, r.plainJumps, nil)
	if err != nil {
		return err
	}
	addEdges(dst, m, jump)
	return nil
}

// elementPass writes the element residual of each triangle into Eta2 and
// its oscillation into Osc2, integrated by rule. each, if not nil, is called
// first with the loaded triangle.
func elementPass(dst *Indicators, u *fem.Function, p *fem.Problem, rule *quadrature.Triangle, each func(ev *fem.Evaluator, k int)) error {
	m := u.Space.Mesh
	// For P1 with piecewise-constant a and no f and c, the element residual
	// and the oscillation vanish.
	zero := u.Space.Degree == 1 && !p.HasSource() && p.C == 0 && p.PiecewiseConstant()
	return parallel.For(m.NumTriangles(), 512, func(lo, hi int) error {
		ev := fem.NewEvaluator(u)
		for k := lo; k < hi; k++ {
			ev.Load(k)
			if each != nil {
				each(ev, k)
			}
			if zero {
				dst.Eta2[k], dst.Osc2[k] = 0, 0
				continue
			}
			res2, osc2, err := elementResidual(ev, p, rule, m.Diameter(k))
			if err != nil {
				return err
			}
			dst.Eta2[k], dst.Osc2[k] = res2, osc2
		}
		return nil
	})
}

// edgePass returns the term of each edge: closed(e) where that reports
// true, else edgeTerm with the rule line. closed may be nil.
func edgePass(u *fem.Function, p *fem.Problem, line *quadrature.Line, plain bool, closed func(e int) (float64, bool)) ([]float64, error) {
	m := u.Space.Mesh
	jump := make([]float64, m.NumEdges())
	err := parallel.For(m.NumEdges(), 512, func(lo, hi int) error {
		e1, e2 := fem.NewEvaluator(u), fem.NewEvaluator(u)
		for e := lo; e < hi; e++ {
			if closed != nil {
				if v, ok := closed(e); ok {
					jump[e] = v
					continue
				}
			}
			v, err := edgeTerm(e1, e2, m, p, line, e, plain)
			if err != nil {
				return err
			}
			jump[e] = v
		}
		return nil
	})
	return jump, err
}

// addEdges adds to Eta2 the terms jump of the edges of each triangle, in
// local edge order: the whole term of a boundary edge, half of that of an
// interior edge.
func addEdges(dst *Indicators, m *mesh.Mesh, jump []float64) {
	_ = parallel.For(m.NumTriangles(), 4096, func(lo, hi int) error {
		for k := lo; k < hi; k++ {
			for _, e := range m.TriEdge[3*k : 3*k+3] {
				if m.IsBoundary(int(e)) {
					dst.Eta2[k] += jump[e]
				} else {
					dst.Eta2[k] += 0.5 * jump[e]
				}
			}
		}
		return nil
	})
}

// elementResidual returns h_T² ‖f + ∇·(a∇u_h) − c u_h‖²_T and
// h_T² ‖f − Π_{p−1} f‖²_T for the loaded triangle.
func elementResidual(ev *fem.Evaluator, p *fem.Problem, rule *quadrature.Triangle, h float64) (res2, osc2 float64, err error) {
	k, area, region := ev.Triangle(), ev.Area(), ev.Region()
	hess := ev.Hessian()
	var fq [quadrature.MaxTrianglePoints]float64
	div := 0.0
	if p.PiecewiseConstant() {
		cx, cy := ev.Point([3]float64{1. / 3, 1. / 3, 1. / 3})
		t := p.Diffusion(cx, cy, region)
		div = t.XX*hess[0] + 2*t.XY*hess[1] + t.YY*hess[2]
	}
	for q := range rule.Len() {
		l := [3]float64{rule.Bary[3*q], rule.Bary[3*q+1], rule.Bary[3*q+2]}
		x, y := ev.Point(l)
		f := p.Source(x, y, region)
		if math.IsNaN(f) || math.IsInf(f, 0) {
			return 0, 0, fmt.Errorf("estimate: triangle %d at (%g, %g): source f = %g: %w", k, x, y, f, ErrNotFinite)
		}
		fq[q] = f
		var v, gx, gy float64
		if p.C != 0 || !p.PiecewiseConstant() {
			v, gx, gy = ev.Eval(l)
		}
		if !p.PiecewiseConstant() {
			div, err = divAFunc(p, x, y, region, h, gx, gy, hess)
			if err != nil {
				return 0, 0, fmt.Errorf("estimate: triangle %d: %w", k, err)
			}
		}
		rq := f + div - p.C*v
		res2 += rule.W[q] * rq * rq
	}
	res2 *= area * h * h / weight(ev, p)
	osc2 = oscillation(ev, rule, fq[:rule.Len()]) * h * h
	return res2, osc2, nil
}

// oscillation returns ‖f − Π f‖²_T, with Π the L² projection onto
// polynomials of degree p − 1 on T, from f at the rule's points.
func oscillation(ev *fem.Evaluator, rule *quadrature.Triangle, f []float64) float64 {
	area := ev.Area()
	if ev.Degree() == 1 {
		return oscP0(rule, f) * area
	}
	// Projection onto linears: with b_i = ∫ f λ_i / |T|, the mass matrix
	// (1 + δ_ij)/12 has inverse 3(4δ_ij − 1), so c_i = 3(4 b_i − Σ b).
	var b [3]float64
	for q, v := range f {
		for i := range 3 {
			b[i] += rule.W[q] * v * rule.Bary[3*q+i]
		}
	}
	sb := b[0] + b[1] + b[2]
	c := [3]float64{3 * (4*b[0] - sb), 3 * (4*b[1] - sb), 3 * (4*b[2] - sb)}
	o := 0.0
	for q, v := range f {
		d := v - (c[0]*rule.Bary[3*q] + c[1]*rule.Bary[3*q+1] + c[2]*rule.Bary[3*q+2])
		o += rule.W[q] * d * d
	}
	return o * area
}

// divAFunc returns ∇·(a∇u_h) = (∂x a_xx + ∂y a_xy) u_x + (∂x a_xy + ∂y a_yy) u_y
// + a : ∇²u_h at (x, y), with the derivatives of a by central differences.
func divAFunc(p *fem.Problem, x, y float64, region int32, h, gx, gy float64, hess [3]float64) (float64, error) {
	d := 1e-6 * h
	t := p.Diffusion(x, y, region)
	xp, xm := p.Diffusion(x+d, y, region), p.Diffusion(x-d, y, region)
	yp, ym := p.Diffusion(x, y+d, region), p.Diffusion(x, y-d, region)
	dxx := (xp.XX - xm.XX) / (2 * d)
	dxy := (xp.XY - xm.XY) / (2 * d)
	dyxy := (yp.XY - ym.XY) / (2 * d)
	dyy := (yp.YY - ym.YY) / (2 * d)
	v := (dxx+dyxy)*gx + (dxy+dyy)*gy + t.XX*hess[0] + 2*t.XY*hess[1] + t.YY*hess[2]
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("diffusion or its derivative at (%g, %g) is not finite: %w", x, y, ErrNotFinite)
	}
	return v, nil
}

// edgeTerm returns h_E ‖[[a∇u_h·n]]‖²_E for an interior edge,
// h_E ‖g_N − a∇u_h·n‖²_E for a Neumann or untagged boundary edge,
// h_E ‖g_R − α u_h − a∇u_h·n‖²_E for a Robin edge, and 0 for a Dirichlet
// edge, by the Gauss–Legendre rule line. With plain (the test
// hook of Residual) the flux is ∇u_h·n and the weight 1.
func edgeTerm(e1, e2 *fem.Evaluator, m *mesh.Mesh, p *fem.Problem, line *quadrature.Line, e int, plain bool) (float64, error) {
	tag := m.EdgeTag[e]
	boundary := m.IsBoundary(e)
	if boundary {
		if _, ok := p.Dirichlet[tag]; ok {
			return 0, nil
		}
	}
	hE := m.EdgeLength(e)
	va, vb := m.Edge[2*e], m.Edge[2*e+1]
	k1 := int(m.EdgeTri[2*e])
	e1.Load(k1)
	i1 := localEdge(m, k1, e)
	nx, ny := e1.BaryGrad(i1)
	nl := math.Hypot(nx, ny)
	nx, ny = -nx/nl, -ny/nl // outward from T1
	la1, lb1 := localVertex(m, k1, va), localVertex(m, k1, vb)
	var la2, lb2 int
	if !boundary {
		k2 := int(m.EdgeTri[2*e+1])
		e2.Load(k2)
		la2, lb2 = localVertex(m, k2, va), localVertex(m, k2, vb)
	}
	ax, ay := m.Vertex(int(va))
	bx, by := m.Vertex(int(vb))
	// flux returns a∇u_h·n on T1 minus (interior) the same on T2, or the
	// prescribed flux (g_N, or g_R − α u_h) minus a∇u_h·n (boundary), at
	// parameter t from va to vb.
	flux := func(t float64) (float64, error) {
		x, y := ax+t*(bx-ax), ay+t*(by-ay)
		side := func(ev *fem.Evaluator, la, lb int) (v, fn float64) {
			var l [3]float64
			l[la], l[lb] = 1-t, t
			v, gx, gy := ev.Eval(l)
			if plain {
				return v, gx*nx + gy*ny
			}
			fx, fy := p.Diffusion(x, y, ev.Region()).Apply(gx, gy)
			return v, fx*nx + fy*ny
		}
		v1, f1 := side(e1, la1, lb1)
		if !boundary {
			_, f2 := side(e2, la2, lb2)
			return f1 - f2, nil
		}
		g, _, err := p.BoundaryFlux(tag, x, y, v1)
		if err != nil {
			return 0, fmt.Errorf("estimate: %w", err)
		}
		return g - f1, nil
	}
	w := weight(e1, p)
	if !boundary {
		w = max(w, weight(e2, p))
	}
	if plain {
		w = 1
	}
	sum := 0.0
	for q, t := range line.X {
		j, err := flux(t)
		if err != nil {
			return 0, err
		}
		sum += line.W[q] * j * j
	}
	return hE * hE * sum / w, nil
}

// weight returns a_T, the smallest eigenvalue of the diffusion at the
// centroid of the loaded triangle.
func weight(ev *fem.Evaluator, p *fem.Problem) float64 {
	x, y := ev.Point([3]float64{1. / 3, 1. / 3, 1. / 3})
	return p.Diffusion(x, y, ev.Region()).MinEig()
}
