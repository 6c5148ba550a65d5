package mesh

import (
	"fmt"
	"github.com/posteriori-fem/posteriori/internal/parallel"
	"math"
)

// Refine bisects every marked triangle through its refinement edge, at
// least once, by newest-vertex bisection, and keeps the mesh conforming by
// the closure: an edge is bisected in both of its triangles, and a triangle
// with a bisected edge has its refinement edge bisected too (which is the
// recursive rule "bisect the neighbour across the refinement edge first"
// written in terms of edges). There are never hanging nodes.
//
// A triangle (v0, v1, v2) with refinement edge v1–v2 and midpoint m0 is cut
// into (m0, v0, v1) and (m0, v2, v0); a child whose refinement edge (v0–v1,
// resp. v2–v0) is bisected too is cut again the same way. So a triangle is
// replaced by 2, 3 or 4 children. The first child keeps the parent's index;
// the others are appended after the triangles of m, in parent order. New
// vertices (the midpoints of the bisected edges, in increasing old edge
// order) are appended after the vertices of m. Edges keep their numbers: the
// half of a bisected edge that holds its lower vertex keeps the edge's
// number; the other halves and the new interior edges are appended.
// Regions, boundary tags and curves are inherited.
//
// # Curved edges
//
// The new vertex of an edge that follows a curve (EdgeCurve ≥ 0, see
// WithCurves and Triangulate: a boundary edge, or an interface edge
// between two regions) goes on the curve: at the curve's projection of
// the chord midpoint, which for a Circle is the midpoint of the arc. Both
// halves follow the same curve. On an interface the triangles of both
// sides follow the curve, so the regions approach the curved pieces
// they stand for, with an area error of order h² along the curve. The triangles stay straight: the mesh is
// a polygon inscribed in the curve, and its area approaches the enclosed
// area as h², as for the regular n-gon, whose area is (n/2) R² sin(2π/n).
// The geometry error of such a polygon is of order h in the energy norm,
// enough for P1; for P2 it is bounded by O(h^{3/2}) under uniform
// refinement (Strang and Fix 1973, §4.4), below the O(h²) of smooth
// solutions, which curved (isoparametric) elements restore (Lenoir 1986).
// In the adaptive loop, TestCurvedRates (package adapt) measures rates of
// 1.15 and 1.09 for P2 on a disc and an annulus up to 2·10⁴ DOFs,
// against stalling at the initial polygon's error without curves.
//
// Near an interior vertex the move could flatten or invert a triangle
// (where the curve bends towards a vertex that lies closer to the chord
// than the curve's distance to it). The move is kept only if every new
// triangle at the vertex keeps at least MinCurveArea (one half) of the
// area it has with the vertex at the chord midpoint; otherwise the vertex
// stays at the chord midpoint, Parents.Chord lists it, and the mesh
// remains a valid straight bisection there. Its edge halves still follow
// the curve, so later bisections try again. The check is local: a curve
// that bulges outward across another part of the boundary, closer than
// the bulge, is not detected.
//
// A projection that is NaN or infinite is an error (a *CurveError at the
// edge, wrapping ErrNotFinite), and no mesh is returned.
//
// marked must have one entry per triangle. A mesh with no triangles (such
// as the zero Mesh) or with arrays of inconsistent lengths is rejected with
// an error wrapping ErrEmpty, ErrLength or ErrIndex. Refine does not modify m. Its
// cost is that of copying m's arrays (concurrently, on meshes of more
// than 65,536 triangles) and one scan of its edges and triangles, plus
// time linear in the number of triangles refined: the topology of the
// untouched part is not rebuilt. The rest runs on one goroutine.
//
// Newest-vertex bisection produces only finitely many similarity classes
// of triangles from each initial one (at most four per triangle), so the
// smallest angle stays bounded below; and the closure adds at most a
// constant times the triangles marked over any sequence of refinements,
// when the initial refinement edges are labelled so that the matching
// condition of Binev, Dahmen and DeVore holds (Stevenson's completion
// result). TestRefineSimilarityClasses and TestRefineClosureLocal check
// both on this implementation.
//
// References:
//   - E. G. Sewell, Automatic generation of triangulations for piecewise
//     polynomial approximation, PhD thesis, Purdue University, 1972.
//   - W. F. Mitchell, Adaptive refinement for arbitrary finite-element
//     spaces with hierarchical bases, J. Comput. Appl. Math. 36 (1991)
//     65–78.
//   - P. Binev, W. Dahmen and R. DeVore, Adaptive finite element methods
//     with convergence rates, Numer. Math. 97 (2004) 219–268.
//   - R. Stevenson, The completion of locally refined simplicial partitions
//     created by bisection, Math. Comp. 77 (2008) 227–241.
//   - G. Strang and G. J. Fix, An Analysis of the Finite Element Method,
//     Prentice-Hall, 1973, §4.4 (from memory).
//   - M. Lenoir, Optimal isoparametric finite elements and error estimates
//     for domains involving curved boundaries, SIAM J. Numer. Anal. 23
//     (1986) 562–580.
func (m *Mesh) Refine(marked []bool) (*Mesh, *Parents, error) {
	if err := checkShape(m, "Refine"); err != nil {
		return nil, nil, err
	}
	nv, nt, ne := m.NumVertices(), m.NumTriangles(), m.NumEdges()
	if len(marked) != nt {
		return nil, nil, fmt.Errorf("mesh: Refine: %d marks for %d triangles: %w", len(marked), nt, ErrLength)
	}
	// Closure: mark edges.
	mid := make([]int32, ne) // midpoint vertex of a bisected edge, or -1
	for i := range mid {
		mid[i] = -1
	}
	nsplit := 0
	var stack []int32
	markEdge := func(e int32) {
		if mid[e] < 0 {
			mid[e] = 0
			nsplit++
			stack = append(stack, e)
		}
	}
	for k, mk := range marked {
		if mk {
			markEdge(m.TriEdge[3*k])
		}
	}
	for len(stack) > 0 {
		e := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		for _, t := range m.EdgeTri[2*e : 2*e+2] {
			if t >= 0 {
				markEdge(m.TriEdge[3*t])
			}
		}
	}
	// The bisected edges in ascending order, and the triangles whose
	// refinement edge is bisected (each has one): scans, not sorts.
	split := make([]int32, 0, nsplit)
	for e, v := range mid {
		if v == 0 {
			split = append(split, int32(e))
		}
	}
	isTouched := make([]bool, nt)
	ntouched := 0
	for _, e := range split {
		for _, t := range m.EdgeTri[2*e : 2*e+2] {
			if t >= 0 && m.TriEdge[3*t] == e {
				isTouched[t] = true
				ntouched++
			}
		}
	}
	touched := make([]int32, 0, ntouched)
	for t, ok := range isTouched {
		if ok {
			touched = append(touched, int32(t))
		}
	}
	// Count the children to size the arrays.
	extraTri, extraEdge := 0, len(split)
	for _, t := range touched {
		c := 1
		if mid[m.TriEdge[3*t+1]] >= 0 {
			c++
		}
		if mid[m.TriEdge[3*t+2]] >= 0 {
			c++
		}
		extraTri += c
		extraEdge += c
	}
	nv2, nt2, ne2 := nv+len(split), nt+extraTri, ne+extraEdge
	if float64(nv2) > math.MaxInt32/2 || float64(nt2) > math.MaxInt32/3 || float64(ne2) > math.MaxInt32/2 {
		return nil, nil, fmt.Errorf("mesh: Refine: %d triangles is too many for int32 indices: %w", nt2, ErrArgument)
	}
	r := &refiner{
		old: m,
		m:   &Mesh{pieces: m.pieces}, // bisection keeps the connected pieces
		mid: mid,
		nv:  int32(nv),
		ne:  int32(ne),
	}
	// The copies of the old arrays, with room for the new entries, made
	// concurrently on large meshes (on fresh memory most of their time is
	// the kernel's, which the cores share out); about equal halves by
	// bytes: the first three, the other four.
	copies := []func(){
		func() { r.m.Tri = grow(m.Tri, 3*nt2)[:3*nt] },
		func() { r.m.Edge = grow(m.Edge, 2*ne2)[:2*ne] },
		func() { r.m.TriEdge = grow(m.TriEdge, 3*nt2)[:3*nt] },
		func() { r.m.X = grow(m.X, 2*nv2) },
		func() { r.m.Region = grow(m.Region, nt2)[:nt] },
		func() { r.m.EdgeTri = grow(m.EdgeTri, 2*ne2)[:2*ne] },
		func() { r.m.EdgeTag = grow(m.EdgeTag, ne2)[:ne] },
	}
	grain := len(copies)
	if nt > refineParallel {
		grain = 1
	}
	parallel.For(len(copies), grain, func(lo, hi int) error {
		for _, c := range copies[lo:hi] {
			c()
		}
		return nil
	})
	p := &Parents{Triangle: make([]int32, nt, nt2), Vertex: vertexMap(nv, ne, split), OldVertices: nv}
	for k := range nt {
		p.Triangle[k] = int32(k)
	}
	var moved []bool    // per new vertex: whether it sits on a curve
	var chord []float64 // per new vertex: its chord midpoint
	if m.EdgeCurve != nil {
		r.m.Curves = m.Curves
		r.m.EdgeCurve = grow(m.EdgeCurve, ne2)[:ne]
		moved = make([]bool, len(split))
		chord = make([]float64, 2*len(split))
	}
	// Midpoints and edge halves.
	for i, e := range split {
		v := int32(nv + i)
		mid[e] = v
		a, b := m.Edge[2*e], m.Edge[2*e+1]
		mx, my := 0.5*(m.X[2*a]+m.X[2*b]), 0.5*(m.X[2*a+1]+m.X[2*b+1])
		curve := int32(-1)
		if m.EdgeCurve != nil {
			curve = m.EdgeCurve[e]
			chord[2*i], chord[2*i+1] = mx, my
			if curve >= 0 {
				var err error
				if mx, my, err = m.curvePoint(e, mx, my); err != nil {
					return nil, nil, within("Refine", err)
				}
				moved[i] = true
			}
		}
		r.m.X[2*v], r.m.X[2*v+1] = mx, my
		r.m.Edge[2*e], r.m.Edge[2*e+1] = a, v
		r.m.EdgeTri[2*e], r.m.EdgeTri[2*e+1] = -1, -1
		r.newEdge(b, v, m.EdgeTag[e], curve) // edge ne+i: the other half
	}
	for _, t := range touched {
		r.bisect(t, p)
	}
	if moved != nil {
		// The triangles at a new vertex are the children: the first
		// child of each touched triangle, and every appended one.
		tri := make([]int32, 0, 3*(len(touched)+nt2-nt))
		for _, t := range touched {
			tri = append(tri, r.m.Tri[3*t:3*t+3]...)
		}
		tri = append(tri, r.m.Tri[3*nt:]...)
		p.Chord = settleCurves(r.m.X, tri, int32(nv), moved, chord)
	}
	return r.m, p, nil
}

// refineParallel is the number of triangles above which Refine copies
// the old arrays concurrently (common practice, no source: enough work to
// pay for a goroutine).
const refineParallel = 1 << 16

// grow returns a copy of s with length and capacity n (n ≥ len(s)), the
// new entries zero. The capacity is exact: append's growth rule would add
// up to a quarter more, which the refined mesh (renumbered in place by the
// adaptive loop) would keep.
func grow[T any](s []T, n int) []T {
	r := make([]T, n)
	copy(r, s)
	return r
}

// refiner holds the state of one call of Refine.
type refiner struct {
	old    *Mesh
	m      *Mesh
	mid    []int32 // midpoint of each bisected old edge: vertex nv+i for the i-th bisected edge
	nv, ne int32   // vertices and edges of the old mesh
}

// newEdge appends the edge a–b with no triangles yet; curve is its index
// into Curves or -1.
func (r *refiner) newEdge(a, b, tag, curve int32) int32 {
	e := int32(len(r.m.EdgeTag))
	r.m.Edge = append(r.m.Edge, min(a, b), max(a, b))
	r.m.EdgeTri = append(r.m.EdgeTri, -1, -1)
	r.m.EdgeTag = append(r.m.EdgeTag, tag)
	if r.m.EdgeCurve != nil {
		r.m.EdgeCurve = append(r.m.EdgeCurve, curve)
	}
	return e
}

// half returns the half of bisected old edge e that holds vertex v.
func (r *refiner) half(e, v int32) int32 {
	if v == r.old.Edge[2*e] {
		return e
	}
	return r.ne + r.mid[e] - r.nv // the i-th bisected edge's other half is edge ne+i
}

// attach records triangle t on side of edge e; old is the parent's index,
// replaced where the edge still lists it (an edge that was not bisected).
func (r *refiner) attach(e, t, old int32) {
	s := r.m.EdgeTri[2*e : 2*e+2]
	kept := e < int32(len(r.mid)) && r.mid[e] < 0 // an old edge, not bisected
	switch {
	case kept && s[0] == old:
		s[0] = t
	case kept && s[1] == old:
		s[1] = t
	case s[0] < 0:
		s[0] = t
	default:
		s[1] = t
	}
}

// child writes triangle (a, b, c) with edges (ea, eb, ec) opposite its
// vertices into slot t (the parent's index) for the first child, else into
// a new slot.
func (r *refiner) child(t, parent int32, p *Parents, first bool, a, b, c, ea, eb, ec int32) {
	if !first {
		t = int32(len(r.m.Region))
		r.m.Tri = append(r.m.Tri, 0, 0, 0)
		r.m.TriEdge = append(r.m.TriEdge, 0, 0, 0)
		r.m.Region = append(r.m.Region, r.old.Region[parent])
		p.Triangle = append(p.Triangle, parent)
	}
	copy(r.m.Tri[3*t:], []int32{a, b, c})
	copy(r.m.TriEdge[3*t:], []int32{ea, eb, ec})
	for _, e := range [3]int32{ea, eb, ec} {
		r.attach(e, t, parent)
	}
}

// bisect replaces triangle t by its children.
func (r *refiner) bisect(t int32, p *Parents) {
	o := r.old
	v0, v1, v2 := o.Tri[3*t], o.Tri[3*t+1], o.Tri[3*t+2]
	e0, e1, e2 := o.TriEdge[3*t], o.TriEdge[3*t+1], o.TriEdge[3*t+2]
	m0 := r.mid[e0]
	c := r.newEdge(v0, m0, Interior, -1)
	first := true
	put := func(a, b, cc, ea, eb, ec int32) {
		r.child(t, t, p, first, a, b, cc, ea, eb, ec)
		first = false
	}
	// Child A = (m0, v0, v1), refinement edge v0–v1 = e2.
	if m2 := r.mid[e2]; m2 >= 0 {
		d := r.newEdge(m0, m2, Interior, -1)
		put(m2, m0, v0, c, r.half(e2, v0), d)
		put(m2, v1, m0, r.half(e0, v1), d, r.half(e2, v1))
	} else {
		put(m0, v0, v1, e2, r.half(e0, v1), c)
	}
	// Child B = (m0, v2, v0), refinement edge v2–v0 = e1.
	if m1 := r.mid[e1]; m1 >= 0 {
		d := r.newEdge(m0, m1, Interior, -1)
		put(m1, m0, v2, r.half(e0, v2), r.half(e1, v2), d)
		put(m1, v0, m0, c, d, r.half(e1, v0))
	} else {
		put(m0, v2, v0, e1, c, r.half(e0, v2))
	}
}
