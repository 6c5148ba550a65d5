package mesh

import (
	"fmt"
	"math"
)

// RefineUniform cuts every triangle into four by two rounds of
// newest-vertex bisection, so that every edge of m is halved once and the
// newest-vertex labelling is kept. For a triangle (v0, v1, v2) with
// midpoints m0, m1, m2 of the edges opposite v0, v1, v2, the children are,
// in this order,
//
//	(m2, m0, v0), (m2, v1, m0), (m1, m0, v2), (m1, v0, m0)
//
// so child 4k+c of the new mesh lies in triangle k. The midpoint of old edge
// e is new vertex NumVertices()+e. Regions, boundary tags and curves are
// inherited; the new vertex of a curved edge goes on its curve by Refine's
// rule (see Refine, "Curved edges"), and then child 4k+c lies in
// triangle k only up to the bulge of the curve. RefineUniform is linear in
// the size of the mesh.
func (m *Mesh) RefineUniform() (*Mesh, *Parents, error) {
	if err := checkShape(m, "RefineUniform"); err != nil {
		return nil, nil, err
	}
	nv, nt, ne := m.NumVertices(), m.NumTriangles(), m.NumEdges()
	if float64(nv+ne) > math.MaxInt32/2 || float64(4*nt) > math.MaxInt32/3 {
		return nil, nil, fmt.Errorf("mesh: RefineUniform: %d triangles is too many for int32 indices: %w", 4*nt, ErrArgument)
	}
	x := make([]float64, 2*(nv+ne))
	copy(x, m.X)
	p := &Parents{Triangle: make([]int32, 4*nt), Vertex: vertexMap(nv, ne, nil), OldVertices: nv}
	var moved []bool
	var chord []float64
	if m.EdgeCurve != nil {
		moved = make([]bool, ne)
		chord = make([]float64, 2*ne)
	}
	for e := range ne {
		a, b := m.Edge[2*e], m.Edge[2*e+1]
		mx, my := 0.5*(m.X[2*a]+m.X[2*b]), 0.5*(m.X[2*a+1]+m.X[2*b+1])
		if m.EdgeCurve != nil {
			chord[2*e], chord[2*e+1] = mx, my
			if m.EdgeCurve[e] >= 0 {
				var err error
				if mx, my, err = m.curvePoint(int32(e), mx, my); err != nil {
					return nil, nil, within("RefineUniform", err)
				}
				moved[e] = true
			}
		}
		x[2*(nv+e)], x[2*(nv+e)+1] = mx, my
	}
	tri := make([]int32, 0, 12*nt)
	region := make([]int32, 0, 4*nt)
	base := int32(nv)
	for k := range nt {
		v0, v1, v2 := m.Tri[3*k], m.Tri[3*k+1], m.Tri[3*k+2]
		m0, m1, m2 := base+m.TriEdge[3*k], base+m.TriEdge[3*k+1], base+m.TriEdge[3*k+2]
		tri = append(tri, m2, m0, v0, m2, v1, m0, m1, m0, v2, m1, v0, m0)
		r := m.Region[k]
		region = append(region, r, r, r, r)
		for c := range 4 {
			p.Triangle[4*k+c] = int32(k)
		}
	}
	if moved != nil {
		p.Chord = settleCurves(x, tri, int32(nv), moved, chord)
	}
	var bnd, tag []int32
	for e := range ne {
		if m.IsBoundary(e) {
			a, b, mid := m.Edge[2*e], m.Edge[2*e+1], base+int32(e)
			bnd = append(bnd, a, mid, mid, b)
			tag = append(tag, m.EdgeTag[e], m.EdgeTag[e])
		}
	}
	fine, _, err := New(Arrays{X: x, Tri: tri, Region: region, Bnd: bnd, BndTag: tag})
	if err != nil {
		return nil, nil, within("RefineUniform", err)
	}
	if m.EdgeCurve != nil {
		fine.Curves = m.Curves
		fine.EdgeCurve = make([]int32, fine.NumEdges())
		for e := range fine.EdgeCurve {
			fine.EdgeCurve[e] = -1
		}
		for e := range ne {
			if c := m.EdgeCurve[e]; c >= 0 {
				mid := base + int32(e)
				fine.EdgeCurve[fine.findEdge(m.Edge[2*e], mid)] = c
				fine.EdgeCurve[fine.findEdge(mid, m.Edge[2*e+1])] = c
			}
		}
	}
	return fine, p, nil
}
