package mesh

import (
	"errors"
	"fmt"
	"math"
	"slices"
)

// Curve is a curve that boundary edges follow. Project returns the point
// of the curve nearest to (x, y), for points (x, y) near the curve: the
// refinements call it at the midpoint of a curved edge's chord.
type Curve interface {
	Project(x, y float64) (px, py float64)
}

var (
	_ Curve = Circle{}
	_ Curve = ProjectFunc(nil)
)

// Circle is the circle of centre (X, Y) and radius R > 0. A straight edge
// whose ends lie on it stands for the shorter of the two arcs between its
// ends, so bisection puts the new vertex at the middle of that arc.
type Circle struct{ X, Y, R float64 }

// Project returns the point of the circle on the ray from its centre
// through (x, y): the arc midpoint when (x, y) is the midpoint of a chord.
// At the centre itself the direction is undefined and Project returns
// NaN, NaN, which the callers report as ErrNotFinite.
func (c Circle) Project(x, y float64) (float64, float64) {
	dx, dy := x-c.X, y-c.Y
	d := math.Hypot(dx, dy)
	if d == 0 {
		return math.NaN(), math.NaN()
	}
	return c.X + c.R*dx/d, c.Y + c.R*dy/d
}

// ProjectFunc is a caller's curve, given by its projection: a point near
// the curve to the nearest point on it.
type ProjectFunc func(x, y float64) (px, py float64)

// Project calls f.
func (f ProjectFunc) Project(x, y float64) (float64, float64) { return f(x, y) }

// CurveTol is the distance, relative to the size of the mesh or domain
// (the larger side of the bounding box of its vertices or points), within
// which WithCurves and Triangulate accept a vertex as lying on its edge's
// curve: Project must move it by no more than CurveTol times that size.
// It leaves room for the rounding of coordinates computed as, say,
// (R cos θ, R sin θ) (common practice, no source).
const CurveTol = 1e-9

// MinCurveArea is the rule that keeps the triangles valid when a new
// vertex moves from the chord midpoint of a curved edge onto the curve:
// the move is kept when every new triangle at that vertex keeps at least
// this fraction of the area it would have with the vertex at the chord
// midpoint (see Refine). It is our rule (no source): it keeps each
// triangle counter-clockwise and its height over any edge at least half
// of the straight bisection's, so the shape bound of newest-vertex
// bisection degrades by at most a factor of two per move.
const MinCurveArea = 0.5

// Errors of curves, wrapped in a *CurveError or a *DomainError.
var (
	ErrOffCurve = errors.New("vertex does not lie on its edge's curve")
	ErrCurve    = errors.New("unusable curve")
)

// CurveError reports a curve that WithCurves or a refinement could not
// use. Fields that do not apply are -1.
type CurveError struct {
	Tag    int // boundary tag (WithCurves)
	Edge   int // mesh edge
	Vertex int // mesh vertex
	Err    error
}

// Error describes the error with its location.
func (e *CurveError) Error() string {
	s := "mesh:"
	if e.Tag >= 0 {
		s += fmt.Sprintf(" boundary tag %d:", e.Tag)
	}
	if e.Edge >= 0 {
		s += fmt.Sprintf(" edge %d:", e.Edge)
	}
	if e.Vertex >= 0 {
		s += fmt.Sprintf(" vertex %d:", e.Vertex)
	}
	return s + " " + e.Err.Error()
}

// Unwrap returns the reason, for errors.Is and errors.As.
func (e *CurveError) Unwrap() error { return e.Err }

// checkCurve rejects a nil curve and a circle whose radius is not a
// positive finite number.
func checkCurve(c Curve) error {
	switch c := c.(type) {
	case nil:
		return fmt.Errorf("%w: nil", ErrCurve)
	case ProjectFunc:
		if c == nil {
			return fmt.Errorf("%w: nil ProjectFunc", ErrCurve)
		}
	case Circle:
		if !(c.R > 0) || math.IsInf(c.R, 0) || math.IsNaN(c.X) || math.IsInf(c.X, 0) || math.IsNaN(c.Y) || math.IsInf(c.Y, 0) {
			return fmt.Errorf("%w: circle of centre (%g, %g) and radius %g", ErrCurve, c.X, c.Y, c.R)
		}
	}
	return nil
}

// project returns the projection of (x, y) on c, or an error wrapping
// ErrNotFinite.
func project(c Curve, x, y float64) (float64, float64, error) {
	px, py := c.Project(x, y)
	if math.IsNaN(px) || math.IsInf(px, 0) || math.IsNaN(py) || math.IsInf(py, 0) {
		return 0, 0, fmt.Errorf("%w: the curve projects (%g, %g) to (%g, %g)", ErrNotFinite, x, y, px, py)
	}
	return px, py, nil
}

// onCurve returns nil if c moves (x, y) by at most tol, else an error
// wrapping ErrOffCurve or ErrNotFinite.
func onCurve(c Curve, x, y, tol float64) error {
	px, py, err := project(c, x, y)
	if err != nil {
		return err
	}
	if d := math.Hypot(px-x, py-y); !(d <= tol) {
		return fmt.Errorf("%w: (%g, %g) is %.3g from its projection (%g, %g), more than %.3g", ErrOffCurve, x, y, d, px, py, tol)
	}
	return nil
}

// boxSize returns the larger side of the bounding box of the points in x.
func boxSize(x []float64) float64 {
	x0, y0, x1, y1 := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
	for i := 0; i+1 < len(x); i += 2 {
		x0, x1 = min(x0, x[i]), max(x1, x[i])
		y0, y1 = min(y0, x[i+1]), max(y1, x[i+1])
	}
	return max(x1-x0, y1-y0)
}

// WithCurves returns a mesh that shares m's arrays and whose boundary
// edges with a tag in byTag follow that tag's curve: Curves lists the
// curves in increasing tag order and EdgeCurve gives each edge its curve
// (or -1). Curves already on m are replaced. Refine and RefineUniform then
// place the new vertex of a curved edge on the curve (see Refine).
//
// WithCurves rejects, with a *CurveError, a nil curve, a circle whose
// radius is not positive and finite (ErrCurve), a tag that no boundary
// edge carries (ErrCurve), a vertex of a curved edge that the curve moves
// by more than CurveTol times the size of the mesh (ErrOffCurve), and a
// projection that is NaN or infinite at a vertex or at the midpoint of a
// curved edge (ErrNotFinite; a chord through a circle's centre, whose arc
// is undefined, is one). It is linear in the size of the mesh.
func (m *Mesh) WithCurves(byTag map[int32]Curve) (*Mesh, error) {
	if err := checkShape(m, "WithCurves"); err != nil {
		return nil, err
	}
	tags := make([]int32, 0, len(byTag))
	for t := range byTag {
		tags = append(tags, t)
	}
	slices.Sort(tags)
	out := *m
	out.Curves, out.EdgeCurve = nil, nil
	if len(tags) == 0 {
		return &out, nil
	}
	index := make(map[int32]int32, len(tags))
	for i, t := range tags {
		if err := checkCurve(byTag[t]); err != nil {
			return nil, &CurveError{Tag: int(t), Edge: -1, Vertex: -1, Err: err}
		}
		index[t] = int32(i)
		out.Curves = append(out.Curves, byTag[t])
	}
	used := make([]bool, len(tags))
	tol := CurveTol * boxSize(m.X)
	out.EdgeCurve = make([]int32, m.NumEdges())
	for e := range out.EdgeCurve {
		out.EdgeCurve[e] = -1
		if !m.IsBoundary(e) {
			continue
		}
		i, ok := index[m.EdgeTag[e]]
		if !ok {
			continue
		}
		used[i] = true
		out.EdgeCurve[e] = i
		if v, err := m.edgeOnCurve(e, out.Curves[i], tol); err != nil {
			return nil, &CurveError{Tag: int(m.EdgeTag[e]), Edge: e, Vertex: v, Err: err}
		}
	}
	for i, u := range used {
		if !u {
			return nil, &CurveError{Tag: int(tags[i]), Edge: -1, Vertex: -1, Err: fmt.Errorf("%w: no boundary edge carries the tag", ErrCurve)}
		}
	}
	return &out, nil
}

// edgeOnCurve checks that the ends of edge e lie on c within tol (see
// onCurve) and that c projects the edge's midpoint to a finite point. On
// an error it also returns the vertex at fault, or -1 for the midpoint.
func (m *Mesh) edgeOnCurve(e int, c Curve, tol float64) (int, error) {
	a, b := m.Edge[2*e], m.Edge[2*e+1]
	for _, v := range [2]int32{a, b} {
		if err := onCurve(c, m.X[2*v], m.X[2*v+1], tol); err != nil {
			return int(v), err
		}
	}
	if _, _, err := project(c, 0.5*(m.X[2*a]+m.X[2*b]), 0.5*(m.X[2*a+1]+m.X[2*b+1])); err != nil {
		return -1, err
	}
	return -1, nil
}

// curvePoint returns where the new vertex of curved edge e goes: the
// projection of its chord midpoint (mx, my) on the edge's curve.
func (m *Mesh) curvePoint(e int32, mx, my float64) (float64, float64, error) {
	px, py, err := project(m.Curves[m.EdgeCurve[e]], mx, my)
	if err != nil {
		return 0, 0, &CurveError{Tag: int(m.EdgeTag[e]), Edge: int(e), Vertex: -1, Err: err}
	}
	return px, py, nil
}

// settleCurves applies the rule of MinCurveArea. x holds the vertices with
// the new vertices first..first+len(moved)-1 at their curve points where
// moved says so; chord holds the chord midpoint of every new vertex (2
// per vertex). tri lists the triangles to check (3 vertices each), which
// must include every triangle at a moved vertex. A triangle that keeps
// less than MinCurveArea of its area with all its vertices at their chord
// points sends its moved vertices back to the chord midpoint; this repeats
// until no triangle does, which ends since every triangle is valid with no
// vertex moved. It returns the vertices sent back, in increasing order.
func settleCurves(x []float64, tri []int32, first int32, moved []bool, chord []float64) []int32 {
	var back []int32
	at := func(v int32, useChord bool) (float64, float64) {
		if useChord && v >= first && moved[v-first] {
			i := v - first
			return chord[2*i], chord[2*i+1]
		}
		return x[2*v], x[2*v+1]
	}
	area2 := func(t []int32, useChord bool) float64 {
		ax, ay := at(t[0], useChord)
		bx, by := at(t[1], useChord)
		cx, cy := at(t[2], useChord)
		return (bx-ax)*(cy-ay) - (by-ay)*(cx-ax)
	}
	for changed := true; changed; {
		changed = false
		for k := 0; k+2 < len(tri); k += 3 {
			t := tri[k : k+3]
			any := false
			for _, v := range t {
				if v >= first && moved[v-first] {
					any = true
				}
			}
			if !any || area2(t, false) >= MinCurveArea*area2(t, true) {
				continue
			}
			for _, v := range t {
				if v >= first && moved[v-first] {
					i := v - first
					moved[i] = false
					x[2*v], x[2*v+1] = chord[2*i], chord[2*i+1]
					back = append(back, v)
					changed = true
				}
			}
		}
	}
	slices.Sort(back)
	return back
}
