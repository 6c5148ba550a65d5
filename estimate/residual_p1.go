package estimate

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
)

// residualP1 is Residual.Estimate for P1 and piecewise-constant diffusion,
// in three passes:
//
//  1. over the triangles: the flux a∇u_h (constant on each triangle), and
//     a_T where A is given, are stored, and the element residual and the
//     oscillation are written to Eta2 and Osc2;
//  2. over the edges: the edge term of each edge (halved for an interior
//     edge) from the fluxes of its triangles, in closed form;
//  3. over the triangles: the terms of the three edges are added, in
//     local edge order.
//
// Every random access is one load away from a sequential stream, so that
// the loads of a pass do not wait for one another; one pass in which each
// triangle computes its neighbours' fluxes itself (no stored flux, but
// chains of dependent loads) measured 2.6 times as slow on the mesh of the
// adaptive loop.
func residualP1(dst *Indicators, u *fem.Function, p *fem.Problem) error {
	m := u.Space.Mesh
	nt, ne := m.NumTriangles(), m.NumEdges()
	var rule *quadrature.Triangle
	if p.HasSource() {
		var err error
		if rule, err = quadrature.ForTriangle(4); err != nil {
			return err
		}
	}
	line, err := quadrature.ForLine(4)
	if err != nil {
		return err
	}
	co, bt := fem.NewRegionTable(p), newTagKinds(p)
	x, tri, uu, region := m.X, m.Tri, u.U, m.Region
	// flux holds (a∂x u_h, a∂y u_h) per triangle, and a_T and a pad when a
	// differs between regions; jump holds the edge terms.
	stride := 4
	if co.Uniform() {
		stride = 2
	}
	work := dst.scratch(stride*nt + ne)
	flux, jump := work[:stride*nt], work[stride*nt:]
	element := rule != nil || p.C != 0
	err = parallel.For(nt, 2048, func(lo, hi int) error {
		for k := lo; k < hi; k++ {
			t := tri[3*k : 3*k+3 : 3*k+3]
			d, gx, gy := p1Grad(x, uu, t[0], t[1], t[2])
			a, w := co.AtMin(region[k])
			f := flux[stride*k : stride*k+stride : stride*k+stride]
			f[0], f[1] = a.Apply(gx, gy)
			if stride == 4 {
				f[2], f[3] = w, 0
			}
			if !element {
				zero(dst.Osc2, k) // Eta2 is written by pass 3
				continue
			}
			res2, osc2, err := elementP1(p, rule, k, region[k], x, t, d, w, uu)
			if err != nil {
				return err
			}
			dst.Eta2[k], dst.Osc2[k] = res2, osc2
		}
		return nil
	})
	if err != nil {
		return err
	}
	edge, edgeTri, edgeTag := m.Edge, m.EdgeTri, m.EdgeTag
	var w0 float64 // a_T of every triangle when co.Uniform()
	if co.Uniform() {
		_, w0 = co.AtMin(0)
	}
	err = parallel.For(ne, 2048, func(lo, hi int) error {
		for e := lo; e < hi; e++ {
			va, vb := edge[2*e], edge[2*e+1]
			tx, ty := x[2*vb]-x[2*va], x[2*vb+1]-x[2*va+1] // |t| (a∇u_h·n) = ±(a∇u_h)·(t_y, −t_x)
			k1, k2 := int(edgeTri[2*e]), int(edgeTri[2*e+1])
			fx, fy, w := flux[stride*k1], flux[stride*k1+1], w0
			if stride == 4 {
				w = flux[stride*k1+2]
			}
			if k2 < 0 {
				jump[e] = 0
				switch bt.kind(edgeTag[e]) {
				case edgeNatural:
					j := fx*ty - fy*tx
					jump[e] = j * j / w
				case edgeNeumann:
					v, err := neumannP1(u, p, line, e, k1, fx, fy, w)
					if err != nil {
						return err
					}
					jump[e] = v
				}
				continue
			}
			if stride == 4 {
				w = max(w, flux[stride*k2+2])
			}
			j := (fx-flux[stride*k2])*ty - (fy-flux[stride*k2+1])*tx
			jump[e] = 0.5 * (j * j / w)
		}
		return nil
	})
	if err != nil {
		return err
	}
	triEdge := m.TriEdge
	dst.checked = true // each chunk below, while in cache
	return parallel.For(nt, 4096, func(lo, hi int) error {
		for k := lo; k < hi; k++ {
			t := triEdge[3*k : 3*k+3 : 3*k+3]
			eta := 0.0
			if element {
				eta = dst.Eta2[k]
			}
			dst.Eta2[k] = eta + jump[t[0]] + jump[t[1]] + jump[t[2]]
		}
		return finiteChunk("Residual", dst, lo, hi)
	})
}

// elementP1 returns h_T²/a_T ‖f − c u_h‖²_T and h_T² ‖f − Π_0 f‖²_T for
// triangle k of the given region with vertices t (d twice its area, w = a_T): with the degree-4
// rule where f is given (rule not nil), else in closed form from
// ∫_T u_h² = |T|/12 (Σ u_i² + (Σ u_i)²).
func elementP1(p *fem.Problem, rule *quadrature.Triangle, k int, region int32, x []float64, t []int32, d, w float64, uu []float64) (res2, osc2 float64, err error) {
	xs, ys := corners(x, t)
	area := 0.5 * d
	h := diameter(&xs, &ys)
	u0, u1, u2 := uu[t[0]], uu[t[1]], uu[t[2]]
	c := p.C
	if rule == nil {
		s := u0 + u1 + u2
		return c * c * (u0*u0 + u1*u1 + u2*u2 + s*s) / 12 * (area * h * h / w), 0, nil
	}
	var fq [quadrature.MaxTrianglePoints]float64
	for q := range rule.Len() {
		l0, l1, l2 := rule.Bary[3*q], rule.Bary[3*q+1], rule.Bary[3*q+2]
		px, py := l0*xs[0]+l1*xs[1]+l2*xs[2], l0*ys[0]+l1*ys[1]+l2*ys[2]
		f := p.Source(px, py, region)
		if math.IsNaN(f) || math.IsInf(f, 0) {
			return 0, 0, fmt.Errorf("estimate: triangle %d at (%g, %g): source f = %g: %w", k, px, py, f, ErrNotFinite)
		}
		fq[q] = f
		rq := f
		if c != 0 {
			rq -= c * (u0*l0 + u1*l1 + u2*l2)
		}
		res2 += rule.W[q] * rq * rq
	}
	res2 *= area * h * h / w
	return res2, oscP0(rule, fq[:rule.Len()]) * area * h * h, nil
}

// neumannP1 returns h_E ‖g − a∇u_h·n‖²_E / a_T for the Neumann or Robin
// boundary edge e of triangle k, g the prescribed flux (g_N, or
// g_R − α u_h), with a∇u_h = (fx, fy) on k and w = a_T, by the
// Gauss–Legendre rule line.
func neumannP1(u *fem.Function, p *fem.Problem, line *quadrature.Line, e, k int, fx, fy, w float64) (float64, error) {
	m := u.Space.Mesh
	tag := m.EdgeTag[e]
	i := localEdge(m, k, e)
	a, b := m.Tri[3*k+(i+1)%3], m.Tri[3*k+(i+2)%3] // counter-clockwise around k
	tx, ty := m.X[2*b]-m.X[2*a], m.X[2*b+1]-m.X[2*a+1]
	hE := math.Hypot(tx, ty)
	fn := (fx*ty - fy*tx) / hE // outward normal (t_y, −t_x)/|t|
	ax, ay := m.Vertex(int(m.Edge[2*e]))
	bx, by := m.Vertex(int(m.Edge[2*e+1]))
	sum := 0.0
	for q, s := range line.X {
		px, py := ax+s*(bx-ax), ay+s*(by-ay)
		g, _, err := p.BoundaryFlux(tag, px, py, u.EdgeValue(e, s))
		if err != nil {
			return 0, fmt.Errorf("estimate: %w", err)
		}
		j := g - fn
		sum += line.W[q] * j * j
	}
	return hE * hE * sum / w, nil
}
