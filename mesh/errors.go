package mesh

import (
	"errors"
	"fmt"
	"strings"

	"github.com/posteriori-fem/posteriori/internal/sentinel"
)

// Reasons a mesh is rejected. They are wrapped in a *ValidationError that
// says where the problem is; match them with errors.Is. ErrLength,
// ErrNotFinite and ErrArgument are shared with the other packages of the
// library (fem.ErrNotFinite is mesh.ErrNotFinite, for example), so one
// errors.Is test serves whichever package met the problem.
var (
	ErrLength         = sentinel.Length
	ErrEmpty          = errors.New("no triangles")
	ErrIndex          = errors.New("vertex index out of range")
	ErrRepeatedVertex = errors.New("triangle repeats a vertex")
	ErrNotFinite      = sentinel.NotFinite
	ErrZeroArea       = errors.New("zero area")
	ErrNonManifold    = errors.New("edge shared by more than two triangles")
	ErrOverlap        = errors.New("two triangles lie on the same side of a shared edge (duplicated or folded)")
	ErrNotAnEdge      = errors.New("boundary edge is not an edge of any triangle")
	ErrNotBoundary    = errors.New("tagged edge is not on the boundary")
	ErrDuplicateEdge  = errors.New("boundary edge listed twice")
	ErrNegativeTag    = errors.New("boundary tag is negative")
	ErrUnusedVertex   = errors.New("vertex belongs to no triangle")
	ErrCoincident     = errors.New("vertices share their coordinates")
	ErrArgument       = sentinel.Argument
)

// ValidationError reports why and where a mesh was rejected. Fields that do
// not apply are -1.
type ValidationError struct {
	Triangle int // index of the offending triangle
	Vertex   int // index of the offending vertex
	Edge     int // index into the boundary-edge list given by the caller
	Err      error
}

// Error describes the error with its location.
func (e *ValidationError) Error() string {
	s := "mesh:"
	if e.Triangle >= 0 {
		s += fmt.Sprintf(" triangle %d:", e.Triangle)
	}
	if e.Vertex >= 0 {
		s += fmt.Sprintf(" vertex %d:", e.Vertex)
	}
	if e.Edge >= 0 {
		s += fmt.Sprintf(" boundary edge %d:", e.Edge)
	}
	return s + " " + e.Err.Error()
}

// Unwrap returns the reason, for errors.Is and errors.As.
func (e *ValidationError) Unwrap() error { return e.Err }

func triErr(k int, err error) error {
	return &ValidationError{Triangle: k, Vertex: -1, Edge: -1, Err: err}
}

func vertErr(v int, err error) error {
	return &ValidationError{Triangle: -1, Vertex: v, Edge: -1, Err: err}
}

func edgeErr(b int, err error) error {
	return &ValidationError{Triangle: -1, Vertex: -1, Edge: b, Err: err}
}

func lenErr(format string, args ...any) error {
	return &ValidationError{Triangle: -1, Vertex: -1, Edge: -1, Err: fmt.Errorf("%w: "+format, append([]any{ErrLength}, args...)...)}
}

// contextError puts the name of a function or format in front of an error
// of this package, whose text already starts with "mesh: ", so that the
// package is named once: "mesh: json: vertex 3: ...". It unwraps to the
// error.
type contextError struct {
	where string
	err   error
}

func (e *contextError) Error() string {
	return "mesh: " + e.where + ": " + strings.TrimPrefix(e.err.Error(), "mesh: ")
}

func (e *contextError) Unwrap() error { return e.err }

// within returns err with the context where, as contextError describes.
func within(where string, err error) error { return &contextError{where: where, err: err} }
