package mesh

import (
	"math"
	"slices"
)

// Triangulate meshes the domain d: the constrained Delaunay triangulation
// of its points and segments, refined by Delaunay refinement until every
// triangle meets the angle and size bounds of o, with refinement edges
// labelled for newest-vertex bisection (see Relabel). The returned mesh
// was built by New; its vertices are the input points inside the domain,
// in their order (Report.Vertex gives the numbers), then the added
// vertices. Its triangles carry the region tags of the seeds and its
// boundary edges the tags of their segments.
//
// # Method
//
// The points are inserted one at a time into a Delaunay triangulation
// with flips (Lawson), each segment is forced in by flipping the edges it
// crosses and restoring the Delaunay property among the new edges (Sloan
// 1993), and the triangles outside the domain and in its holes are
// removed. All orientation and in-circle decisions use exact predicates
// (see predicates.go), so nearly degenerate input is triangulated
// correctly and crossing segments are found exactly.
//
// The refinement is Ruppert's algorithm as Shewchuk (2002) states it: a
// subsegment whose diametral circle holds a vertex (is encroached) is split
// at its middle; a triangle whose circumradius-to-shortest-edge ratio
// exceeds 1/(2 sin θ), θ = MinAngle, or whose longest edge exceeds the
// size bound, gets a vertex at its circumcenter (Chew 1989, Ruppert 1995),
// unless that point would encroach a subsegment, which is then split
// instead. A subsegment with one end at an input point is split at a
// power of two from that point (concentric shells: Ruppert 1995; Shewchuk
// 2002), so that splits on segments meeting at a small angle stay in
// step.
//
// # Guarantee
//
// With no input angle below 60° (the angle between two segments at a
// point they share), and θ ≤ 20.7°, the refinement ends (Shewchuk 2002,
// for Ruppert's algorithm with concentric shells) and every triangle has
// all angles ≥ θ; θ defaults to 20°. Where two segments meet at an input
// angle below 60° the bound cannot hold in general. There, a triangle is
// left as it is when its shortest edge joins two points on the two
// segments at equal distance (to 1e-6 relative) from the point where they
// meet: the triangle is sheltered by the small angle, and Report.Sheltered
// counts it. Every triangle outside the shelter still has all angles ≥ θ
// (Report.ShelterMin), unless float64 leaves no room for a vertex between
// two others, which the refinement then leaves as they are (features
// some 1e-16 of the coordinates apart).
// When the refinement would need more than MaxVertices vertices it stops
// with ErrVertexLimit and returns no mesh.
//
// # Curved segments
//
// A segment with a curve (Domain.SegCurve) is first cut on its curve, at
// the projections of chord midpoints, until each piece's chord lies
// within 1/16 of its length of the curve (about 28.5° of arc on a circle)
// and is no longer than the size bound; the pieces are then meshed as
// segments, and the vertices the refinement adds on them are moved from
// the chord onto the curve at the end, under Refine's rule for curved
// edges (MinCurveArea; Report.OffCurve counts the vertices left on the
// chord). The angles in Report are those after the move. The edges along
// the segment carry its curve (Mesh.EdgeCurve), boundary edges and
// interface edges alike. The ends of a curved segment must lie on its
// curve within CurveTol times the size of the domain (ErrOffCurve), its
// curve must be usable (ErrCurve) and its projections finite
// (ErrNotFinite).
//
// Bad input gives a *DomainError located at the point, segment, hole or
// seed: see Domain and the Err values.
//
// # Cost
//
// The refinement inserts each vertex with work bounded by the number of
// triangles it changes, which is bounded on average for quality meshes;
// with the queues and the final New the cost is O(n log n) for a mesh of
// n triangles from a small input (BenchmarkTriangulate measures it). The
// input points are located by walking from the previous one, which is
// fast for points given in order along their loops, as polygons are.
//
// References:
//   - C. L. Lawson, Software for C¹ surface interpolation, in Mathematical
//     Software III, Academic Press, 1977, 161–194.
//   - L. P. Chew, Guaranteed-quality triangular meshes, Technical Report
//     TR 89-983, Department of Computer Science, Cornell University, 1989.
//   - S. W. Sloan, A fast algorithm for generating constrained Delaunay
//     triangulations, Computers & Structures 47 (1993) 441–450.
//   - J. Ruppert, A Delaunay refinement algorithm for quality
//     2-dimensional mesh generation, J. Algorithms 18 (1995) 548–585.
//   - J. R. Shewchuk, Delaunay refinement algorithms for triangular mesh
//     generation, Comput. Geom. 22 (2002) 21–74.
func Triangulate(d *Domain, o Options) (*Mesh, *Report, error) {
	if err := d.check(&o); err != nil {
		return nil, nil, err
	}
	np0 := len(d.Points) / 2
	d, segOrig, ptSeg, err := d.presplit(&o)
	if err != nil {
		return nil, nil, err
	}
	np, ns := len(d.Points)/2, len(d.Segments)/2
	x0, y0, x1, y1 := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
	for p := range np {
		x0, x1 = min(x0, d.Points[2*p]), max(x1, d.Points[2*p])
		y0, y1 = min(y0, d.Points[2*p+1]), max(y1, d.Points[2*p+1])
	}
	c := newCDT(x0, y0, x1, y1, np+3)
	pv := make([]int32, np) // cdt vertex of each point
	for p := range np {
		v, dup := c.insert(d.Points[2*p], d.Points[2*p+1])
		if dup && p >= np0 {
			return nil, nil, domErr(-1, int(ptSeg[p-np0]), -1, -1, ErrIntersect, "its curve passes through another point at (%g, %g)", d.Points[2*p], d.Points[2*p+1])
		}
		if v < 0 || dup {
			// check has excluded duplicates and the enclosing triangle
			// holds every point, so this is a broken invariant.
			panic("mesh: Triangulate: point location failed")
		}
		pv[p] = v
	}
	for s := range ns {
		a, b := pv[d.Segments[2*s]], pv[d.Segments[2*s+1]]
		s0 := int(segOrig[s]) // the caller's segment
		switch outcome, other := c.insertSegment(a, b, int32(s)); outcome {
		case segCrosses:
			return nil, nil, domErr(-1, s0, -1, -1, ErrIntersect, "it crosses segment %d", segOrig[other])
		case segRepeated:
			return nil, nil, domErr(-1, s0, -1, -1, ErrIntersect, "it joins the ends of segment %d again", segOrig[other])
		case segThrough:
			q := slices.Index(pv, other)
			if q >= np0 {
				return nil, nil, domErr(-1, s0, -1, -1, ErrIntersect, "a point that curved segment %d adds lies inside the segment", ptSeg[q-np0])
			}
			return nil, nil, domErr(q, s0, -1, -1, ErrIntersect, "point %d lies inside the segment", q)
		}
	}
	// Locate holes and seeds before anything is removed.
	holeTri := make([]int32, len(d.Holes)/2)
	for h := range holeTri {
		t, _, _ := c.locate(d.Holes[2*h], d.Holes[2*h+1])
		holeTri[h] = t
	}
	seedTri := make([]int32, len(d.Seeds)/2)
	for k := range seedTri {
		t, _, _ := c.locate(d.Seeds[2*k], d.Seeds[2*k+1])
		seedTri[k] = t
	}
	c.flood(c.vt[0], exterior, nil)
	for h, t := range holeTri {
		switch {
		case t < 0 || c.state[t] == exterior:
			return nil, nil, domErr(-1, -1, h, -1, ErrOutside, "(%g, %g)", d.Holes[2*h], d.Holes[2*h+1])
		case c.state[t] == live:
			c.flood(t, hole, nil)
		}
	}
	tagged := make([]bool, len(c.state))
	for k, t := range seedTri {
		if t < 0 || c.state[t] != live {
			return nil, nil, domErr(-1, -1, -1, k, ErrOutside, "(%g, %g)", d.Seeds[2*k], d.Seeds[2*k+1])
		}
		r := d.SeedRegion[k]
		if tagged[t] {
			if c.reg[t] != r {
				return nil, nil, domErr(-1, -1, -1, k, ErrSeedConflict, "tag %d where another seed gave %d", r, c.reg[t])
			}
			continue
		}
		stack := []int32{t}
		tagged[t], c.reg[t] = true, r
		for len(stack) > 0 {
			t := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			for j := range 3 {
				u := c.nbr[3*t+int32(j)]
				if u < 0 || c.seg[3*t+int32(j)] >= 0 || c.state[u] != live || tagged[u] {
					continue
				}
				tagged[u], c.reg[u] = true, r
				stack = append(stack, u)
			}
		}
	}
	c.cut()
	if c.anyLive() < 0 {
		return nil, nil, domErr(-1, -1, -1, -1, ErrEmpty, "no part of the plane is enclosed")
	}
	if s := c.unbounded(ns); s >= 0 {
		return nil, nil, domErr(-1, int(segOrig[s]), -1, -1, ErrDetached, "the domain lies on neither side (a loop outside the domain, or inside a hole?)")
	}
	rep := &Report{}
	r := newDelaunayRefiner(c, d, pv, &o)
	if !o.NoRefinement {
		if err := r.run(); err != nil {
			return nil, nil, err
		}
	}
	if rep.OffCurve, err = r.followCurves(segOrig); err != nil {
		return nil, nil, err
	}
	m, err := r.output(rep)
	if err != nil {
		return nil, nil, within("Triangulate", err)
	}
	if np > np0 {
		// Points added on curved segments count as added vertices.
		for _, v := range rep.Vertex[np0:] {
			if v >= 0 {
				rep.Added++
			}
		}
		rep.Vertex = rep.Vertex[:np0]
	}
	return m, rep, nil
}
