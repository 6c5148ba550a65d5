package fem

import (
	"errors"
	"fmt"

	"github.com/posteriori-fem/posteriori/internal/sentinel"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Reasons package fem rejects its input, for errors.Is.
// ErrBoundaryCondition covers a Dirichlet or Neumann tag that no boundary
// edge carries and a tag given as both; the error that wraps it names the
// tag and says which.
var (
	ErrDegree            = errors.New("degree must be 1 or 2")
	ErrDiffusion         = errors.New("diffusion is not symmetric positive definite and finite")
	ErrReaction          = errors.New("reaction coefficient is negative or not finite")
	ErrIllPosed          = errors.New("problem has no Dirichlet part and no reaction, so its solution is not unique")
	ErrBoundaryCondition = errors.New("unusable boundary condition")
	ErrRegion            = errors.New("region has no diffusion coefficient")
	ErrOutside           = errors.New("point outside the mesh")
)

// Reasons shared with the other packages of the library, one value each:
// ErrNotFinite is mesh.ErrNotFinite and estimate.ErrNotFinite, so that
// errors.Is(err, fem.ErrNotFinite) holds whichever stage met a NaN, and
// ErrArgument is mesh.ErrArgument, estimate.ErrArgument and
// adapt.ErrArgument.
var (
	ErrArgument  = mesh.ErrArgument
	ErrNotFinite = mesh.ErrNotFinite
	ErrLength    = mesh.ErrLength

	// ErrNotConverged: the linear solver reached its iteration limit, or
	// stagnated, before meeting its tolerance.
	ErrNotConverged = sentinel.NotConverged

	// ErrGoal: a goal functional that cannot be used on the mesh (see
	// Goal); the error that wraps it names the goal and the reason.
	ErrGoal = sentinel.Goal
)

// DataError reports bad problem data found where it was evaluated: at a
// triangle (Triangle ≥ 0), on a boundary tag, or in a region. Fields that do
// not apply are -1.
type DataError struct {
	Triangle int
	Tag      int
	Region   int
	X, Y     float64 // point of evaluation, when AtPoint
	AtPoint  bool    // whether X, Y locate the problem within the triangle
	Err      error
}

// Error describes the error with its location.
func (e *DataError) Error() string {
	s := "fem:"
	switch {
	case e.Triangle >= 0 && e.AtPoint:
		s += fmt.Sprintf(" triangle %d at (%g, %g):", e.Triangle, e.X, e.Y)
	case e.Triangle >= 0:
		s += fmt.Sprintf(" triangle %d:", e.Triangle)
	case e.Tag >= 0:
		s += fmt.Sprintf(" boundary tag %d:", e.Tag)
	case e.Region >= 0:
		s += fmt.Sprintf(" region %d:", e.Region)
	}
	return s + " " + e.Err.Error()
}

// Unwrap returns the reason, for errors.Is and errors.As.
func (e *DataError) Unwrap() error { return e.Err }

func atTriangle(k int, x, y float64, err error) error {
	return &DataError{Triangle: k, Tag: -1, Region: -1, X: x, Y: y, AtPoint: true, Err: err}
}

func atPiece(k int, err error) error {
	return &DataError{Triangle: k, Tag: -1, Region: -1, Err: err}
}

func atTag(tag int32, err error) error {
	return &DataError{Triangle: -1, Tag: int(tag), Region: -1, Err: err}
}

func atRegion(r int32, err error) error {
	return &DataError{Triangle: -1, Tag: -1, Region: int(r), Err: err}
}
