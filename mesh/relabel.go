package mesh

import "math"

// Relabel returns a copy of m whose triangles are labelled for
// newest-vertex bisection by their longest edges, and the number of
// interior refinement edges left unmatched. Each triangle's vertices are
// turned (cyclically, which keeps the orientation) so that its refinement
// edge Tri[3k+1]–Tri[3k+2] is its longest edge; among edges of equal
// length the one with the larger (low vertex, high vertex) pair wins.
// Regions and boundary tags are kept; the vertices and the edges keep
// their numbers.
//
// This is the longest-edge labelling (Sewell 1972; Mitchell 1991). With
// edges ordered by length and ties broken by a fixed total order, the
// neighbour across a triangle's refinement edge has a refinement edge
// that is that same edge or comes later in the order, so the chains of
// the bisection closure (Refine) cannot cycle and end. An interior edge
// is matched when it is the refinement edge of both of its triangles, the
// matching condition under which Binev, Dahmen and DeVore (2004) and
// Stevenson (2008) bound the cost of the closure; a longest-edge
// labelling matches every edge whose two triangles share it as their
// longest edge, such as the hypotenuses of the right isosceles triangles
// of a grid, and unmatched says how many interior edges are the
// refinement edge of one side only. A conforming mesh need not admit a
// labelling that matches every edge with longest edges, so unmatched may
// be positive; Refine works with any labelling.
//
// The refinement edge changes how bisection ages a mesh: for the
// right-angled grid meshes of Rectangle labelled with the legs as
// refinement edges, repeated local refinement loses angle quality, while
// the hypotenuse labelling keeps the two triangle shapes
// (TestRelabelKeepsAngles measures both).
//
// Relabel rejects the zero Mesh and arrays that New did not build, with
// the errors of Quality. It costs one pass over the triangles and New's
// O(N log N).
//
// References:
//   - E. G. Sewell, Automatic generation of triangulations for piecewise
//     polynomial approximation, PhD thesis, Purdue University, 1972.
//   - W. F. Mitchell, Adaptive refinement for arbitrary finite-element
//     spaces with hierarchical bases, J. Comput. Appl. Math. 36 (1991)
//     65–78.
//   - P. Binev, W. Dahmen and R. DeVore, Adaptive finite element methods
//     with convergence rates, Numer. Math. 97 (2004) 219–268.
//   - R. Stevenson, The completion of locally refined simplicial
//     partitions created by bisection, Math. Comp. 77 (2008) 227–241.
func (m *Mesh) Relabel() (*Mesh, int, error) {
	if err := checkShape(m, "Relabel"); err != nil {
		return nil, 0, err
	}
	nt := m.NumTriangles()
	tri := make([]int32, 3*nt)
	for k := range nt {
		t := m.Tri[3*k : 3*k+3]
		i := longestSide(m.X, t[0], t[1], t[2])
		tri[3*k], tri[3*k+1], tri[3*k+2] = t[i], t[next3(i)], t[prev3(i)]
	}
	bnd, tag := m.BoundaryEdges()
	out, _, err := New(Arrays{X: m.X, Tri: tri, Region: m.Region, Bnd: bnd, BndTag: tag})
	if err != nil {
		return nil, 0, within("Relabel", err)
	}
	_, unmatched := countUnmatched(out)
	return out, unmatched, nil
}

// longestSide returns the side (0, 1 or 2: the side opposite that local
// vertex) of triangle (a, b, c) that comes last in the order of edges by
// squared length, then by (low vertex, high vertex).
func longestSide(x []float64, a, b, c int32) int {
	v := [3]int32{a, b, c}
	best := 0
	for i := 1; i < 3; i++ {
		if edgeLess(x, v[next3(best)], v[prev3(best)], v[next3(i)], v[prev3(i)]) {
			best = i
		}
	}
	return best
}

// edgeLess reports whether edge p–q comes before edge r–s in the order of
// longestSide.
func edgeLess(x []float64, p, q, r, s int32) bool {
	l1, l2 := dist2(x, p, q), dist2(x, r, s)
	if l1 != l2 {
		return l1 < l2
	}
	lo1, hi1, lo2, hi2 := min(p, q), max(p, q), min(r, s), max(r, s)
	if lo1 != lo2 {
		return lo1 < lo2
	}
	return hi1 < hi2
}

// output writes the live triangles of the refined triangulation as a
// Mesh, labelled as Relabel does, and fills rep.
func (r *delaunayRefiner) output(rep *Report) (*Mesh, error) {
	c := r.c
	nv := len(c.vt)
	used := make([]bool, nv)
	nt := 0
	for t := range c.state {
		if c.state[t] == live {
			nt++
			for _, v := range c.tri[3*t : 3*t+3] {
				used[v] = true
			}
		}
	}
	id := make([]int32, nv)
	for i := range id {
		id[i] = -1
	}
	n := int32(0)
	rep.Vertex = make([]int32, len(r.pv))
	for p, v := range r.pv {
		rep.Vertex[p] = -1
		if used[v] {
			id[v], rep.Vertex[p] = n, n
			n++
		}
	}
	kept := n
	for v := range nv {
		if used[v] && id[v] < 0 {
			id[v] = n
			n++
		}
	}
	rep.Added = int(n - kept)
	a := Arrays{X: make([]float64, 2*n), Tri: make([]int32, 0, 3*nt), Region: make([]int32, 0, nt)}
	for v := range nv {
		if i := id[v]; i >= 0 {
			a.X[2*i], a.X[2*i+1] = c.x[2*v], c.x[2*v+1]
		}
	}
	var bndCurve []int32 // per entry of a.Bnd: its curve
	var ifCurve []int32  // curved interface sides: 3 per side, its ends and its curve
	theta := math.Asin(math.Sqrt(r.sin2) / 2)
	rep.MinAngle, rep.ShelterMin = math.Inf(1), math.Inf(1)
	for t := range int32(len(c.state)) {
		if c.state[t] != live {
			continue
		}
		v := [3]int32{id[c.tri[3*t]], id[c.tri[3*t+1]], id[c.tri[3*t+2]]}
		i := longestSide(a.X, v[0], v[1], v[2])
		a.Tri = append(a.Tri, v[i], v[next3(i)], v[prev3(i)])
		a.Region = append(a.Region, c.reg[t])
		for j := range 3 {
			if c.nbr[3*t+int32(j)] >= 0 {
				// An interface side that follows a curve, once (from the
				// triangle of lower number).
				if s := c.seg[3*t+int32(j)]; s >= 0 && r.d.SegCurve != nil && r.d.SegCurve[s] >= 0 && c.nbr[3*t+int32(j)] > t {
					ifCurve = append(ifCurve, v[next3(j)], v[prev3(j)], r.d.SegCurve[s])
				}
				continue
			}
			s := c.seg[3*t+int32(j)]
			if s < 0 {
				panic("mesh: Triangulate: a boundary side lies on no segment")
			}
			tag := int32(0)
			if r.d.Tags != nil {
				tag = r.d.Tags[s]
			}
			a.Bnd = append(a.Bnd, v[next3(j)], v[prev3(j)])
			a.BndTag = append(a.BndTag, tag)
			if r.d.SegCurve != nil {
				bndCurve = append(bndCurve, r.d.SegCurve[s])
			}
		}
		// Angles, and whether a small one is sheltered.
		amin, at := math.Inf(1), 0
		for j := range 3 {
			if g := angle(a.X, v[j], v[next3(j)], v[prev3(j)]); g < amin {
				amin, at = g, j
			}
		}
		rep.MinAngle = min(rep.MinAngle, amin)
		if amin < theta && r.shelter(c.tri[3*t+int32(next3(at))], c.tri[3*t+int32(prev3(at))]) {
			rep.Sheltered++
		} else {
			rep.ShelterMin = min(rep.ShelterMin, amin)
		}
	}
	rep.MinAngle *= 180 / math.Pi
	rep.ShelterMin *= 180 / math.Pi
	m, _, err := New(a)
	if err != nil {
		return nil, err
	}
	if bndCurve != nil {
		m.Curves = r.d.Curves
		m.EdgeCurve = make([]int32, m.NumEdges())
		for e := range m.EdgeCurve {
			m.EdgeCurve[e] = -1
		}
		for b, k := range bndCurve {
			m.EdgeCurve[m.findEdge(a.Bnd[2*b], a.Bnd[2*b+1])] = k
		}
		for i := 0; i < len(ifCurve); i += 3 {
			m.EdgeCurve[m.findEdge(ifCurve[i], ifCurve[i+1])] = ifCurve[i+2]
		}
	}
	_, unmatched := countUnmatched(m)
	rep.Unmatched = unmatched
	return m, nil
}

// countUnmatched returns the numbers of interior edges that are the
// refinement edge of both, and of one only, of their triangles.
func countUnmatched(m *Mesh) (matched, unmatched int) {
	for e := range m.NumEdges() {
		k0, k1 := m.EdgeTri[2*e], m.EdgeTri[2*e+1]
		if k1 < 0 {
			continue
		}
		r0, r1 := int(m.TriEdge[3*k0]) == e, int(m.TriEdge[3*k1]) == e
		switch {
		case r0 && r1:
			matched++
		case r0 || r1:
			unmatched++
		}
	}
	return matched, unmatched
}
