package mesh

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"
)

// Domain is a planar straight-line description of a domain: points,
// segments between them, a point inside each hole, and a seed point with a
// region tag inside each material.
//
// The segments bound the domain (the outer boundary and the boundaries of
// holes) and separate its materials (interfaces). Every end of a segment
// must be the end of another one too, so that the segments form closed
// loops and the chains of interfaces meet the boundary or each other; a
// point on no segment is allowed and becomes a vertex of the mesh where it
// lies inside the domain. Segments may meet only at their ends, and no
// point may lie inside a segment: split a segment where another ends on
// it.
//
// The domain is what the segments enclose: the part of the plane that
// cannot be reached from far away without crossing a segment, minus the
// holes. A hole is the part reached from its point without crossing a
// segment. A region seed gives its tag to the part reached from it in the
// same way; triangles that no seed reaches get region 0. A point of a
// hole or seed that lies on a segment belongs to one of its sides. Every
// segment must have the domain on at least one side (ErrDetached): a
// loop drawn outside the domain, or wholly inside a hole, is an error
// rather than a boundary that silently does not exist (a coolant channel
// placed outside the body, its hole point with it, would otherwise leave
// the body without the channel and its boundary tag unused).
//
// Tags gives a boundary tag (≥ 0) to each segment, which the mesh edges
// on that segment carry where it bounds the domain; the tags of interface
// segments are not kept (an interior edge carries Interior). A nil Tags
// gives every segment tag 0.
//
// SegCurve lets a segment follow a curve of Curves (an arc of a Circle,
// or a caller's ProjectFunc): a boundary segment, or an interface between
// two materials (a circular fibre in a matrix). Its ends must lie on the
// curve, the mesh edges along it carry the curve (Mesh.EdgeCurve), and
// the vertices that Triangulate adds on it lie on the curve (see
// Triangulate). A nil SegCurve makes every segment straight.
type Domain struct {
	Points     []float64 // 2 per point: x, y
	Segments   []int32   // 2 per segment: indices into Points
	Tags       []int32   // 1 per segment: the boundary tag, or nil
	Holes      []float64 // 2 per hole: a point inside it
	Seeds      []float64 // 2 per region seed: a point inside the region
	SeedRegion []int32   // 1 per seed: the region tag of its part
	Curves     []Curve   // the curves that segments follow
	SegCurve   []int32   // 1 per segment: its index into Curves, or -1 for a straight segment; or nil
}

// Options controls the refinement of Triangulate. The zero value asks for
// a smallest angle of 20° and no size limit.
type Options struct {
	// MinAngle is the smallest angle in degrees that the refinement
	// enforces away from small input angles; 0 means 20. It must lie in
	// (0, 30]: above about 20.7° the refinement is not proved to end
	// (MaxVertices then stops it).
	MinAngle float64

	// H bounds the length of every edge; 0 means no bound.
	H float64

	// Size, when not nil, bounds the edges of a triangle by Size(x, y)
	// at its centroid (and of a boundary edge at its midpoint), together
	// with H. It must return a positive finite length.
	Size func(x, y float64) float64

	// MaxVertices stops a refinement that would need more vertices,
	// with ErrVertexLimit; 0 means 1 << 24.
	MaxVertices int

	// NoRefinement asks for the constrained Delaunay triangulation of
	// the points and segments alone, without added vertices; MinAngle,
	// H and Size are then ignored.
	NoRefinement bool
}

// Report tells what Triangulate did beyond the mesh.
type Report struct {
	Vertex     []int32 // the mesh vertex of each input point, -1 for a point outside the domain
	Added      int     // vertices added by the refinement
	Sheltered  int     // triangles below MinAngle because of input angles below 60° (see Triangulate)
	Unmatched  int     // interior refinement edges that are the refinement edge of one of their triangles only
	MinAngle   float64 // smallest angle of the mesh, in degrees
	ShelterMin float64 // smallest angle, in degrees, of the triangles outside the shelter
	OffCurve   int     // vertices added on curved segments that stayed on the chord by the rule of MinCurveArea
}

// Reasons Triangulate rejects a Domain. They are wrapped in a
// *DomainError; match them with errors.Is. Triangulate also uses
// ErrLength, ErrIndex, ErrNotFinite, ErrNegativeTag, ErrCoincident (two
// points at the same place), ErrEmpty (nothing left inside) and
// ErrArgument (bad Options).
var (
	ErrZeroLength   = errors.New("segment has zero length")
	ErrUnclosed     = errors.New("boundary is not closed")
	ErrIntersect    = errors.New("segments cross or overlap")
	ErrOutside      = errors.New("point lies outside the domain")
	ErrDetached     = errors.New("segment bounds no part of the domain")
	ErrSeedConflict = errors.New("one region has seeds with different tags")
	ErrVertexLimit  = errors.New("refinement needs more vertices than allowed")
)

// DomainError reports why and where Triangulate rejected a Domain. Fields
// that do not apply are -1.
type DomainError struct {
	Point   int // index of the offending point
	Segment int // index of the offending segment
	Hole    int // index of the offending hole point
	Seed    int // index of the offending region seed
	Err     error
}

// Error describes the error with its location.
func (e *DomainError) Error() string {
	var b strings.Builder
	b.WriteString("mesh: Triangulate:")
	for _, f := range []struct {
		name string
		i    int
	}{{"point", e.Point}, {"segment", e.Segment}, {"hole", e.Hole}, {"seed", e.Seed}} {
		if f.i >= 0 {
			fmt.Fprintf(&b, " %s %d:", f.name, f.i)
		}
	}
	return b.String() + " " + e.Err.Error()
}

// Unwrap returns the reason, for errors.Is and errors.As.
func (e *DomainError) Unwrap() error { return e.Err }

func domErr(point, segment, hole, seed int, base error, format string, args ...any) error {
	err := base
	if format != "" {
		err = fmt.Errorf("%w: "+format, append([]any{base}, args...)...)
	}
	return &DomainError{Point: point, Segment: segment, Hole: hole, Seed: seed, Err: err}
}

// check validates what can be validated without triangulating.
func (d *Domain) check(o *Options) error {
	np, ns := len(d.Points)/2, len(d.Segments)/2
	switch {
	case len(d.Points)%2 != 0:
		return domErr(-1, -1, -1, -1, ErrLength, "len(Points) = %d is odd", len(d.Points))
	case len(d.Segments)%2 != 0:
		return domErr(-1, -1, -1, -1, ErrLength, "len(Segments) = %d is odd", len(d.Segments))
	case d.Tags != nil && len(d.Tags) != ns:
		return domErr(-1, -1, -1, -1, ErrLength, "len(Tags) = %d, want %d", len(d.Tags), ns)
	case len(d.Holes)%2 != 0:
		return domErr(-1, -1, -1, -1, ErrLength, "len(Holes) = %d is odd", len(d.Holes))
	case len(d.Seeds)%2 != 0 || len(d.Seeds)/2 != len(d.SeedRegion):
		return domErr(-1, -1, -1, -1, ErrLength, "len(Seeds) = %d, len(SeedRegion) = %d, want 2 coordinates per tag", len(d.Seeds), len(d.SeedRegion))
	case np > math.MaxInt32/4:
		return domErr(-1, -1, -1, -1, ErrLength, "%d points is more than int32 indices allow", np)
	}
	for i, v := range d.Points {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return domErr(i/2, -1, -1, -1, ErrNotFinite, "coordinate %v", v)
		}
	}
	for i, v := range d.Holes {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return domErr(-1, -1, i/2, -1, ErrNotFinite, "coordinate %v", v)
		}
	}
	for i, v := range d.Seeds {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return domErr(-1, -1, -1, i/2, ErrNotFinite, "coordinate %v", v)
		}
	}
	if ns == 0 {
		return domErr(-1, -1, -1, -1, ErrUnclosed, "no segments")
	}
	degree := make([]int32, np)
	first := make([]int32, np) // a segment at each point
	for s := range ns {
		a, b := d.Segments[2*s], d.Segments[2*s+1]
		if a < 0 || int(a) >= np || b < 0 || int(b) >= np {
			return domErr(-1, s, -1, -1, ErrIndex, "points %d, %d of %d", a, b, np)
		}
		if a == b {
			return domErr(int(a), s, -1, -1, ErrZeroLength, "")
		}
		if d.Tags != nil && d.Tags[s] < 0 {
			return domErr(-1, s, -1, -1, ErrNegativeTag, "tag %d", d.Tags[s])
		}
		degree[a]++
		degree[b]++
		first[a], first[b] = int32(s), int32(s)
	}
	for p, k := range degree {
		if k == 1 {
			return domErr(p, int(first[p]), -1, -1, ErrUnclosed, "the point ends segment %d and no other", first[p])
		}
	}
	// Duplicate points, by sorting; equal coordinates only (the
	// predicates are exact, so any distinct points are told apart).
	order := make([]int32, np)
	for i := range order {
		order[i] = int32(i)
	}
	x := d.Points
	slices.SortFunc(order, func(a, b int32) int {
		if c := compareXY(x[2*a], x[2*a+1], x[2*b], x[2*b+1]); c != 0 {
			return c
		}
		return int(a - b)
	})
	for k := 1; k < np; k++ {
		a, b := order[k-1], order[k]
		if x[2*a] == x[2*b] && x[2*a+1] == x[2*b+1] {
			return domErr(int(b), -1, -1, -1, ErrCoincident, "point %d is at (%g, %g) too", a, x[2*a], x[2*a+1])
		}
	}
	if err := d.checkCurves(); err != nil {
		return err
	}
	if o.NoRefinement {
		return nil
	}
	if o.MinAngle != 0 && !(o.MinAngle > 0 && o.MinAngle <= 30) {
		return fmt.Errorf("mesh: Triangulate: MinAngle = %v, want a value in (0, 30]: %w", o.MinAngle, ErrArgument)
	}
	if o.H != 0 && !(o.H > 0 && !math.IsInf(o.H, 0)) {
		return fmt.Errorf("mesh: Triangulate: H = %v, want a positive finite length or 0: %w", o.H, ErrArgument)
	}
	if o.MaxVertices < 0 {
		return fmt.Errorf("mesh: Triangulate: MaxVertices = %d is negative: %w", o.MaxVertices, ErrArgument)
	}
	return nil
}

func compareXY(ax, ay, bx, by float64) int {
	switch {
	case ax < bx:
		return -1
	case ax > bx:
		return 1
	case ay < by:
		return -1
	case ay > by:
		return 1
	}
	return 0
}
