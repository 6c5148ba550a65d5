package estimate

import "errors"

// Reasons package estimate rejects its input, for errors.Is. Errors from
// package fem (bad problem data) are wrapped and match fem's values.
var (
	ErrArgument  = errors.New("invalid argument")
	ErrNotFinite = errors.New("value is NaN or infinite")
	ErrLength    = errors.New("lengths do not match")
	ErrTooFew    = errors.New("too few points to fit a rate")
)

// Reasons the equilibrated estimator declines a problem, for errors.Is.
var (
	ErrUnsupported = errors.New("problem not supported by this estimator")
	ErrFriedrichs  = errors.New("no Friedrichs constant known: set Equilibrated.Friedrichs")
)
