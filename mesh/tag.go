package mesh

import "fmt"

// TagBoundary returns a copy of m whose boundary edges carry the tags
// rule gives at their midpoints, in one call: rule(x, y) is the tag of the
// boundary edge with midpoint (x, y). Interior edges, vertices,
// triangles and regions are unchanged (and shared with m, which is
// read-only). A negative tag is rejected with a *ValidationError wrapping
// ErrNegativeTag whose Edge is the position of the edge in the list of
// BoundaryEdges. TagBoundary is linear in the number of edges and calls
// rule once per boundary edge, in edge order.
func (m *Mesh) TagBoundary(rule func(x, y float64) int32) (*Mesh, error) {
	if err := checkShape(m, "TagBoundary"); err != nil {
		return nil, err
	}
	if rule == nil {
		return nil, fmt.Errorf("mesh: TagBoundary: nil rule: %w", ErrArgument)
	}
	out := *m
	out.EdgeTag = append([]int32(nil), m.EdgeTag...)
	b := 0
	for e := range m.NumEdges() {
		if m.EdgeTri[2*e+1] >= 0 {
			continue
		}
		p, q := m.Edge[2*e], m.Edge[2*e+1]
		tag := rule((m.X[2*p]+m.X[2*q])/2, (m.X[2*p+1]+m.X[2*q+1])/2)
		if tag < 0 {
			return nil, within("TagBoundary", &ValidationError{Triangle: -1, Vertex: -1, Edge: b,
				Err: fmt.Errorf("%w: rule gave %d at (%g, %g)", ErrNegativeTag, tag, (m.X[2*p]+m.X[2*q])/2, (m.X[2*p+1]+m.X[2*q+1])/2)})
		}
		out.EdgeTag[e] = tag
		b++
	}
	return &out, nil
}
