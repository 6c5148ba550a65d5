package estimate

import (
	"errors"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Reasons package estimate rejects its input, for errors.Is. Errors from
// package fem (bad problem data) are wrapped and match fem's values.
// ErrArgument, ErrNotFinite and ErrLength are the values of package mesh
// (and fem), shared across the library: errors.Is(err, fem.ErrNotFinite)
// holds for a NaN met in estimation as for one met in assembly.
var (
	ErrArgument  = mesh.ErrArgument
	ErrNotFinite = mesh.ErrNotFinite
	ErrLength    = mesh.ErrLength
	ErrTooFew    = errors.New("too few points to fit a rate")

	// ErrGoal is fem.ErrGoal: a goal functional that cannot be used on the
	// mesh.
	ErrGoal = fem.ErrGoal
)

// Reasons the equilibrated estimator declines a problem, for errors.Is.
var (
	ErrUnsupported = errors.New("problem not supported by this estimator")
)
