package mesh

import (
	"cmp"
	"fmt"
	"slices"
)

// WithInterfaceCurves returns a mesh that shares m's arrays, keeps m's
// curves, and whose interface edges between regions r and s (interior
// edges with a triangle of region r on one side and of region s on the
// other) follow the curve byRegions[[2]int32{r, s}], for each pair given
// (in either order): the curved material interfaces of a mesh made
// elsewhere, or of one read back from a file, which does not keep curves.
// The new curves follow m's in Curves, in increasing order of the pairs
// (smaller region first); an edge that already followed a curve follows
// the new one. Refine and RefineUniform then place the new vertex of such
// an edge on the curve (see Refine).
//
// WithInterfaceCurves rejects, with a *CurveError (Tag −1), a nil curve
// or a circle whose radius is not positive and finite (ErrCurve), a pair
// of one region twice, a pair given in both orders, or a pair that no
// interior edge separates (ErrCurve), a vertex of an interface edge that
// the curve moves by more than CurveTol times the size of the mesh
// (ErrOffCurve), and a projection that is NaN or infinite at a vertex or
// at the midpoint of an interface edge (ErrNotFinite). It is linear in
// the size of the mesh.
func (m *Mesh) WithInterfaceCurves(byRegions map[[2]int32]Curve) (*Mesh, error) {
	if err := checkShape(m, "WithInterfaceCurves"); err != nil {
		return nil, err
	}
	pairErr := func(p [2]int32, format string, args ...any) error {
		return &CurveError{Tag: -1, Edge: -1, Vertex: -1, Err: fmt.Errorf("regions %d and %d: %w: "+format, append([]any{p[0], p[1], ErrCurve}, args...)...)}
	}
	pairCmp := func(a, b [2]int32) int { return cmp.Or(cmp.Compare(a[0], b[0]), cmp.Compare(a[1], b[1])) }
	keys := make([][2]int32, 0, len(byRegions))
	for p := range byRegions {
		keys = append(keys, p)
	}
	slices.SortFunc(keys, pairCmp) // so that the error reported does not depend on the map's order
	pairs := make([][2]int32, 0, len(byRegions))
	for _, p := range keys {
		q := p
		if q[0] > q[1] {
			q[0], q[1] = q[1], q[0]
		}
		switch {
		case q[0] == q[1]:
			return nil, pairErr(p, "one region on both sides")
		case q != p:
			if _, both := byRegions[q]; both {
				return nil, pairErr(q, "given in both orders")
			}
		}
		pairs = append(pairs, q)
	}
	slices.SortFunc(pairs, pairCmp)
	out := *m
	if len(pairs) == 0 {
		return &out, nil
	}
	out.Curves = slices.Clone(m.Curves)
	index := make(map[[2]int32]int32, len(pairs))
	for _, q := range pairs {
		c, ok := byRegions[q]
		if !ok {
			c = byRegions[[2]int32{q[1], q[0]}]
		}
		if err := checkCurve(c); err != nil {
			return nil, &CurveError{Tag: -1, Edge: -1, Vertex: -1, Err: fmt.Errorf("regions %d and %d: %w", q[0], q[1], err)}
		}
		index[q] = int32(len(out.Curves))
		out.Curves = append(out.Curves, c)
	}
	if m.EdgeCurve != nil {
		out.EdgeCurve = slices.Clone(m.EdgeCurve)
	} else {
		out.EdgeCurve = make([]int32, m.NumEdges())
		for e := range out.EdgeCurve {
			out.EdgeCurve[e] = -1
		}
	}
	used := make(map[[2]int32]bool, len(pairs))
	tol := CurveTol * boxSize(m.X)
	for e := range m.NumEdges() {
		t0, t1 := m.EdgeTri[2*e], m.EdgeTri[2*e+1]
		if t1 < 0 {
			continue
		}
		q := [2]int32{m.Region[t0], m.Region[t1]}
		if q[0] > q[1] {
			q[0], q[1] = q[1], q[0]
		}
		i, ok := index[q]
		if !ok {
			continue
		}
		used[q] = true
		out.EdgeCurve[e] = i
		if v, err := m.edgeOnCurve(e, out.Curves[i], tol); err != nil {
			return nil, &CurveError{Tag: -1, Edge: e, Vertex: v, Err: fmt.Errorf("regions %d and %d: %w", q[0], q[1], err)}
		}
	}
	for _, q := range pairs {
		if !used[q] {
			return nil, pairErr(q, "no interior edge separates them")
		}
	}
	return &out, nil
}
