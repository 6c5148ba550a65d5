package estimate

import (
	"cmp"
	"fmt"
	"math"
	"runtime"
	"slices"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
	"github.com/posteriori-fem/posteriori/mesh"
)

// The P1 fast paths for piecewise-constant diffusion. They work straight on
// the flat arrays of the mesh and on the nodal values: the gradient of u_h
// is constant on each triangle and is computed in closed form,
//
//	∇u_h = J⁻ᵀ (u_1 − u_0, u_2 − u_0),  J = [x_1 − x_0, x_2 − x_0],
//
// the diffusion of each region is resolved once, and every integral whose
// integrand is a polynomial is taken in closed form. Only f and g_N are
// integrated by quadrature, with the rules of the general path. The results
// agree with the general path to rounding (its gradient Σ u_i ∇λ_i loses
// more to cancellation than the differences above).

// maxRegionSpan bounds the range of region tags for which the diffusion is
// kept in a table indexed by region; wider ranges look the map up.
const maxRegionSpan = 4096

// coeffs holds the diffusion a of each region of a problem with
// piecewise-constant diffusion and its smallest eigenvalue a_T.
type coeffs struct {
	uniform bool  // one tensor for all regions (p.A nil)
	lo      int64 // region of t[0]
	t       []fem.Tensor
	w       []float64
	p       *fem.Problem
}

func newCoeffs(p *fem.Problem) *coeffs {
	c := &coeffs{p: p}
	if p.A == nil {
		t := p.Diffusion(0, 0, 0)
		c.uniform, c.t, c.w = true, []fem.Tensor{t}, []float64{minEig(t)}
		return c
	}
	lo, hi, first := int64(0), int64(0), true
	for r := range p.A {
		if first || int64(r) < lo {
			lo = int64(r)
		}
		if first || int64(r) > hi {
			hi = int64(r)
		}
		first = false
	}
	if first || hi-lo >= maxRegionSpan {
		return c // no table: at looks the map up
	}
	c.lo = lo
	c.t = make([]fem.Tensor, hi-lo+1)
	c.w = make([]float64, hi-lo+1)
	for r, t := range p.A {
		c.t[int64(r)-lo], c.w[int64(r)-lo] = t, minEig(t)
	}
	return c
}

// at returns the diffusion of region r and its smallest eigenvalue.
func (c *coeffs) at(r int32) (fem.Tensor, float64) {
	if c.uniform {
		return c.t[0], c.w[0]
	}
	if i := int64(r) - c.lo; uint64(i) < uint64(len(c.t)) {
		return c.t[i], c.w[i]
	}
	t := c.p.Diffusion(0, 0, r)
	return t, minEig(t)
}

// Kinds of boundary edge, by tag.
const (
	edgeNatural   uint8 = iota // no Dirichlet tag and no Neumann data: a∇u·n = 0
	edgeDirichlet              // Dirichlet: no contribution
	edgeNeumann                // Neumann data g_N, integrated by quadrature
)

// tagKinds classifies boundary tags, from a table for the small tags.
type tagKinds struct {
	small [64]uint8
	p     *fem.Problem
}

func newTagKinds(p *fem.Problem) *tagKinds {
	b := &tagKinds{p: p}
	for tag := range b.small {
		b.small[tag] = edgeKind(p, int32(tag))
	}
	return b
}

func (b *tagKinds) kind(tag int32) uint8 {
	if uint32(tag) < uint32(len(b.small)) {
		return b.small[tag]
	}
	return edgeKind(b.p, tag)
}

func edgeKind(p *fem.Problem, tag int32) uint8 {
	if _, ok := p.Dirichlet[tag]; ok {
		return edgeDirichlet
	}
	if p.Neumann[tag] != nil {
		return edgeNeumann
	}
	return edgeNatural
}

// zero sets s[k] to +0, reading first: where s[k] is +0 already (the
// oscillation of an earlier estimate without f, or fresh memory) the cache
// line is then not written back.
func zero(s []float64, k int) {
	if math.Float64bits(s[k]) != 0 {
		s[k] = 0
	}
}

// p1Grad returns twice the area of the triangle with vertices a, b, c
// (counter-clockwise) and the gradient of the P1 function with nodal
// values u on it.
func p1Grad(x, u []float64, a, b, c int32) (d, gx, gy float64) {
	x0, y0 := x[2*a], x[2*a+1]
	ax, ay := x[2*b]-x0, x[2*b+1]-y0
	bx, by := x[2*c]-x0, x[2*c+1]-y0
	d = ax*by - ay*bx
	u0 := u[a]
	du1, du2 := u[b]-u0, u[c]-u0
	return d, (by*du1 - ay*du2) / d, (ax*du2 - bx*du1) / d
}

// corners returns the coordinates of the vertices of triangle t.
func corners(x []float64, t []int32) (xs, ys [3]float64) {
	for i, v := range t[:3] {
		xs[i], ys[i] = x[2*v], x[2*v+1]
	}
	return xs, ys
}

// diameter returns the longest edge of the triangle with vertices xs, ys,
// as mesh.Diameter does.
func diameter(xs, ys *[3]float64) float64 {
	d2 := func(i, j int) float64 {
		dx, dy := xs[j]-xs[i], ys[j]-ys[i]
		return dx*dx + dy*dy
	}
	return math.Sqrt(max(d2(0, 1), d2(1, 2), d2(2, 0)))
}

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
	if p.F != nil {
		var err error
		if rule, err = quadrature.ForTriangle(4); err != nil {
			return err
		}
	}
	line, err := quadrature.ForLine(4)
	if err != nil {
		return err
	}
	co, bt := newCoeffs(p), newTagKinds(p)
	x, tri, uu, region := m.X, m.Tri, u.U, m.Region
	// flux holds (a∂x u_h, a∂y u_h) per triangle, and a_T and a pad when a
	// differs between regions; jump holds the edge terms.
	stride := 4
	if co.uniform {
		stride = 2
	}
	work := dst.scratch(stride*nt + ne)
	flux, jump := work[:stride*nt], work[stride*nt:]
	element := rule != nil || p.C != 0
	err = parallel.For(nt, 2048, func(lo, hi int) error {
		for k := lo; k < hi; k++ {
			t := tri[3*k : 3*k+3 : 3*k+3]
			d, gx, gy := p1Grad(x, uu, t[0], t[1], t[2])
			a, w := co.at(region[k])
			f := flux[stride*k : stride*k+stride : stride*k+stride]
			f[0], f[1] = a.Apply(gx, gy)
			if stride == 4 {
				f[2], f[3] = w, 0
			}
			if !element {
				zero(dst.Osc2, k) // Eta2 is written by pass 3
				continue
			}
			res2, osc2, err := elementP1(p, rule, k, x, t, d, w, uu)
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
	var w0 float64 // a_T of every triangle when co.uniform
	if co.uniform {
		w0 = co.w[0]
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
					v, err := neumannP1(m, p, line, e, k1, fx, fy, w)
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
	return parallel.For(nt, 4096, func(lo, hi int) error {
		for k := lo; k < hi; k++ {
			t := triEdge[3*k : 3*k+3 : 3*k+3]
			eta := 0.0
			if element {
				eta = dst.Eta2[k]
			}
			dst.Eta2[k] = eta + jump[t[0]] + jump[t[1]] + jump[t[2]]
		}
		return nil
	})
}

// elementP1 returns h_T²/a_T ‖f − c u_h‖²_T and h_T² ‖f − Π_0 f‖²_T for
// triangle k with vertices t (d twice its area, w = a_T): with the degree-4
// rule where f is given (rule not nil), else in closed form from
// ∫_T u_h² = |T|/12 (Σ u_i² + (Σ u_i)²).
func elementP1(p *fem.Problem, rule *quadrature.Triangle, k int, x []float64, t []int32, d, w float64, uu []float64) (res2, osc2 float64, err error) {
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
		f := p.F(px, py)
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

// oscP0 returns ‖f − Π_0 f‖²_T / |T| from f at the points of rule.
func oscP0(rule *quadrature.Triangle, f []float64) float64 {
	mean := 0.0
	for q, v := range f {
		mean += rule.W[q] * v
	}
	o := 0.0
	for q, v := range f {
		o += rule.W[q] * (v - mean) * (v - mean)
	}
	return o
}

// neumannP1 returns h_E ‖g_N − a∇u_h·n‖²_E / a_T for the Neumann boundary
// edge e of triangle k, with a∇u_h = (fx, fy) on k and w = a_T, by the
// Gauss–Legendre rule line.
func neumannP1(m *mesh.Mesh, p *fem.Problem, line *quadrature.Line, e, k int, fx, fy, w float64) (float64, error) {
	tag := m.EdgeTag[e]
	gn := p.Neumann[tag]
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
		g := gn(px, py)
		if math.IsNaN(g) || math.IsInf(g, 0) {
			return 0, fmt.Errorf("estimate: boundary tag %d at (%g, %g): Neumann data %g: %w", tag, px, py, g, ErrNotFinite)
		}
		j := g - fn
		sum += line.W[q] * j * j
	}
	return hE * hE * sum / w, nil
}

// averagingP1 is Recovery.Estimate with Averaging for P1 and
// piecewise-constant diffusion, in three passes:
//
//  1. over the triangles: |T| and ∇u_h are stored per triangle;
//  2. the vertex sums Σ |T| and Σ |T|∇u_h of each vertex side: the vertices
//     are split into ranges, one per goroutine, and each goroutine scans
//     all triangles in index order and adds those at its vertices, so that
//     every sum is taken in triangle order whatever the split (the order of
//     the general path); then it divides. Where the mesh has several
//     regions, a vertex keeps the region of its first triangle, and the
//     triangles of its other regions are collected and summed per region
//     afterwards;
//  3. over the triangles: η_T² in closed form from the three recovered
//     vertex values (as recoveryNormP1), and the oscillation.
func averagingP1(dst *Indicators, u *fem.Function, p *fem.Problem) error {
	m := u.Space.Mesh
	nt, nv := m.NumTriangles(), m.NumVertices()
	var orule *quadrature.Triangle
	if p.F != nil {
		var err error
		if orule, err = quadrature.ForTriangle(4); err != nil {
			return err
		}
	}
	co := newCoeffs(p)
	x, tri, uu, region := m.X, m.Tri, u.U, m.Region
	owners := max(1, min(runtime.GOMAXPROCS(0), 8, nv/4096))
	// acc: 4 per vertex (Σ|T|, Σ|T|∂x u_h, Σ|T|∂y u_h, and the region of the
	// sums where there are several; 32 bytes from the aligned start of the
	// scratch, so that one vertex touches one cache line); grad: the
	// recovered gradient per vertex; tg: |T|, ∂x u_h, ∂y u_h per triangle.
	work := dst.scratch(4*nv + 2*nv + 3*nt)
	acc, grad, tg := work[:4*nv], work[4*nv:6*nv], work[6*nv:]
	// 1. |T| and ∇u_h; whether the mesh has several regions.
	const block = 4096
	multi := make([]bool, (nt+block-1)/block)
	_ = parallel.For(len(multi), 1, func(lo, hi int) error {
		r0 := region[0]
		for b := lo; b < hi; b++ {
			several := false
			for k := b * block; k < min((b+1)*block, nt); k++ {
				t := tri[3*k : 3*k+3 : 3*k+3]
				d, gx, gy := p1Grad(x, uu, t[0], t[1], t[2])
				tg[3*k], tg[3*k+1], tg[3*k+2] = 0.5*d, gx, gy
				several = several || region[k] != r0
			}
			multi[b] = several
		}
		return nil
	})
	// 2. Vertex sums and recovered gradients.
	several := slices.Contains(multi, true)
	var reg []int32 // with several regions: the region of each vertex's sums in acc
	over := make([][]int32, owners)
	if several {
		reg = dst.scratchInt(nv)
	}
	_ = parallel.For(owners, 1, func(lo, hi int) error {
		for w := lo; w < hi; w++ {
			vlo, vhi := int32(w*nv/owners), int32((w+1)*nv/owners)
			if several {
				over[w] = vertexSidesSums(tri, region, tg, acc, reg, vlo, vhi, nil)
			} else {
				vertexSums(tri, tg, acc, vlo, vhi)
			}
			for v := int(vlo); v < int(vhi); v++ {
				a := acc[4*v]
				grad[2*v], grad[2*v+1] = acc[4*v+1]/a, acc[4*v+2]/a
			}
		}
		return nil
	})
	var sides []side
	if several {
		sides = interfaceSides(region, tg, slices.Concat(over...))
	}
	// 3. η_T² and the oscillation.
	return parallel.For(nt, 2048, func(lo, hi int) error {
		for k := lo; k < hi; k++ {
			area, gx, gy := tg[3*k], tg[3*k+1], tg[3*k+2]
			var t fem.Tensor
			var r int32
			if several || !co.uniform {
				r = region[k]
				t, _ = co.at(r)
			} else {
				t = co.t[0]
			}
			var sx, sy, sum float64
			for i := range 3 {
				v := tri[3*k+i]
				vx, vy := grad[2*int(v)], grad[2*int(v)+1]
				if several && reg[v] != r {
					vx, vy = sideValue(sides, v, r)
				}
				dx, dy := vx-gx, vy-gy
				ax, ay := t.Apply(dx, dy)
				sum += dx*ax + dy*ay
				sx, sy = sx+dx, sy+dy
			}
			ax, ay := t.Apply(sx, sy)
			dst.Eta2[k] = area / 12 * (sum + sx*ax + sy*ay)
			if orule == nil {
				zero(dst.Osc2, k)
				continue
			}
			xs, ys := corners(x, tri[3*k:3*k+3])
			var fq [quadrature.MaxTrianglePoints]float64
			for q := range orule.Len() {
				l0, l1, l2 := orule.Bary[3*q], orule.Bary[3*q+1], orule.Bary[3*q+2]
				px, py := l0*xs[0]+l1*xs[1]+l2*xs[2], l0*ys[0]+l1*ys[1]+l2*ys[2]
				fq[q] = p.F(px, py)
				if math.IsNaN(fq[q]) || math.IsInf(fq[q], 0) {
					return fmt.Errorf("estimate: triangle %d at (%g, %g): source f = %g: %w", k, px, py, fq[q], ErrNotFinite)
				}
			}
			h := diameter(&xs, &ys)
			dst.Osc2[k] = h * h * (oscP0(orule, fq[:orule.Len()]) * area)
		}
		return nil
	})
}

// vertexSums fills acc[4v:4v+3], for the vertices v in [vlo, vhi) of a mesh
// of one region, with Σ |T|, Σ |T| ∂x u_h and Σ |T| ∂y u_h over the
// triangles T around v, summed in triangle order. (A branch on the owner of
// each corner measured faster than adding the other corners to scratch
// slots without one, and than compacting the owned corners first.)
func vertexSums(tri []int32, tg, acc []float64, vlo, vhi int32) {
	clear(acc[4*int(vlo) : 4*int(vhi)])
	span := uint32(vhi - vlo)
	for k := range len(tri) / 3 {
		g := tg[3*k : 3*k+3 : 3*k+3]
		a := g[0]
		ax, ay := a*g[1], a*g[2]
		for _, v := range tri[3*k : 3*k+3 : 3*k+3] {
			if uint32(v-vlo) >= span {
				continue
			}
			s := acc[4*int(v) : 4*int(v)+3 : 4*int(v)+3]
			s[0] += a
			s[1] += ax
			s[2] += ay
		}
	}
}

// vertexSidesSums is vertexSums for a mesh of several regions: it also
// keeps the region of v's first triangle in acc[4v+3] (the same cache line
// as the sums) and copies it to reg[v], sums only the triangles of that
// region into acc, and appends the (vertex, triangle) pairs of the other
// regions to over, in triangle order, which it returns.
func vertexSidesSums(tri, region []int32, tg, acc []float64, reg []int32, vlo, vhi int32, over []int32) []int32 {
	clear(acc[4*int(vlo) : 4*int(vhi)])
	span := uint32(vhi - vlo)
	for k := range len(tri) / 3 {
		r := region[k]
		for _, v := range tri[3*k : 3*k+3 : 3*k+3] {
			if uint32(v-vlo) >= span {
				continue
			}
			s := acc[4*int(v) : 4*int(v)+4 : 4*int(v)+4]
			if s[0] == 0 { // first triangle (areas are positive)
				s[3] = float64(r)
			} else if s[3] != float64(r) {
				over = append(over, v, int32(k))
				continue
			}
			a := tg[3*k]
			s[0] += a
			s[1] += a * tg[3*k+1]
			s[2] += a * tg[3*k+2]
		}
	}
	for v := int(vlo); v < int(vhi); v++ {
		reg[v] = int32(acc[4*v+3])
	}
	return over
}

// side is the recovered gradient of a vertex for the triangles of one
// region, where that is not the region of the vertex's first triangle.
type side struct {
	v, r   int32
	gx, gy float64
}

// interfaceSides sums the (vertex, triangle) pairs of over per (vertex,
// region), in triangle order, and returns the mean gradients sorted by
// vertex and region.
func interfaceSides(region []int32, tg []float64, over []int32) []side {
	n := len(over) / 2
	if n == 0 {
		return nil
	}
	idx := make([]int, n)
	for i := range idx {
		idx[i] = i
	}
	key := func(i int) (int32, int32, int32) { return over[2*i], region[over[2*i+1]], over[2*i+1] }
	slices.SortFunc(idx, func(i, j int) int {
		vi, ri, ki := key(i)
		vj, rj, kj := key(j)
		return cmp.Or(cmp.Compare(vi, vj), cmp.Compare(ri, rj), cmp.Compare(ki, kj))
	})
	var sides []side
	var a, sx, sy float64
	for q, i := range idx {
		v, r, k := key(i)
		b := tg[3*k]
		a, sx, sy = a+b, sx+b*tg[3*k+1], sy+b*tg[3*k+2]
		if q+1 < n {
			if v2, r2, _ := key(idx[q+1]); v2 == v && r2 == r {
				continue
			}
		}
		sides = append(sides, side{v, r, sx / a, sy / a})
		a, sx, sy = 0, 0, 0
	}
	return sides
}

// sideValue returns the recovered gradient of vertex v for region r from
// sides.
func sideValue(sides []side, v, r int32) (gx, gy float64) {
	i, ok := slices.BinarySearchFunc(sides, side{v: v, r: r}, func(a, b side) int {
		return cmp.Or(cmp.Compare(a.v, b.v), cmp.Compare(a.r, b.r))
	})
	if !ok {
		panic("estimate: vertex has no side for its triangle's region") // broken invariant
	}
	return sides[i].gx, sides[i].gy
}
