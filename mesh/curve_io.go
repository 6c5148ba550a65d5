package mesh

import "fmt"

// The curves in files: JSON and VTU files keep the circles that edges
// follow (Circle values of Mesh.Curves), not curves of other kinds, which
// have no data to write.

// circlesOf returns the circles among m.Curves, in their order, and per
// edge the index among them of the circle it follows, or -1 (straight, or
// following a curve that is not a Circle). Both are nil when no edge
// follows a circle.
func circlesOf(m *Mesh) (circles []Circle, edgeCircle []int32) {
	if m.EdgeCurve == nil {
		return nil, nil
	}
	index := make([]int32, len(m.Curves))
	for i, c := range m.Curves {
		index[i] = -1
		if ci, ok := c.(Circle); ok {
			index[i] = int32(len(circles))
			circles = append(circles, ci)
		}
	}
	edgeCircle = make([]int32, m.NumEdges())
	some := false
	for e, c := range m.EdgeCurve {
		edgeCircle[e] = -1
		if c >= 0 && index[c] >= 0 {
			edgeCircle[e] = index[c]
			some = true
		}
	}
	if !some {
		return nil, nil
	}
	return circles, edgeCircle
}

// curveReading is what a reader found of the curves in a file: the
// circles, and the edges that follow them as triples (a, b, k) of the
// edge's ends and its circle, each with the name of its place in the file
// for errors.
type curveReading struct {
	format      string // "json" or "vtu"
	circles     []Circle
	circleField func(i int) string
	curved      []int32 // 3 per curved edge: its ends and its circle
	edgeField   func(i int) string
	emptyField  string // the field to blame when circles come without edges
}

func (c *curveReading) err(field string, format string, args ...any) *FormatError {
	return &FormatError{Format: c.format, Field: field, Err: fmt.Errorf("%w: "+format, append([]any{ErrFormat}, args...)...)}
}

// attach gives the curved edges read their circles. Unlike WithCurves it
// does not require the ends of an edge to lie on its circle: a refinement
// may have left a vertex on the chord (see Refine), and files written from
// such a mesh must read back. It requires that the midpoint of each edge
// has a projection onto its circle (it is not the centre).
func (c *curveReading) attach(m *Mesh) (*Mesh, error) {
	if len(c.curved) == 0 {
		if len(c.circles) > 0 {
			return nil, c.err(c.emptyField, "circles, but no edge follows them")
		}
		return m, nil
	}
	for i, ci := range c.circles {
		if err := checkCurve(ci); err != nil {
			return nil, c.err(c.circleField(i), "%v", err)
		}
	}
	m.Curves = make([]Curve, len(c.circles))
	for i, ci := range c.circles {
		m.Curves[i] = ci
	}
	m.EdgeCurve = make([]int32, m.NumEdges())
	for e := range m.EdgeCurve {
		m.EdgeCurve[e] = -1
	}
	for b := 0; b < len(c.curved); b += 3 {
		field := c.edgeField(b / 3)
		a, v, k := c.curved[b], c.curved[b+1], c.curved[b+2]
		e := -1
		if int(max(a, v)) < m.NumVertices() {
			e = m.findEdge(a, v)
		}
		switch {
		case e < 0:
			return nil, c.err(field, "%d–%d is not an edge of the mesh", a, v)
		case int(k) >= len(c.circles):
			return nil, c.err(field, "circle %d of %d", k, len(c.circles))
		case m.EdgeCurve[e] >= 0:
			return nil, c.err(field, "edge %d–%d listed twice", a, v)
		}
		ci := c.circles[k]
		if _, _, err := project(ci, 0.5*(m.X[2*a]+m.X[2*v]), 0.5*(m.X[2*a+1]+m.X[2*v+1])); err != nil {
			return nil, &FormatError{Format: c.format, Field: field, Err: fmt.Errorf("%w: edge %d–%d: %w", ErrFormat, a, v, err)}
		}
		m.EdgeCurve[e] = k
	}
	return m, nil
}
