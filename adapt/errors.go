package adapt

import (
	"errors"
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Reasons a marker rejects its input, for errors.Is. On any error Mark
// returns a nil mask and leaves the caller's dst as it was.
//
// Like every sentinel of this library, their texts carry no package
// prefix; the errors that wrap them start with "adapt: ".
var (
	// ErrTheta: the marker's parameter (Dorfler.Theta, Maximum.Theta or
	// Fraction.F) is outside its range or NaN. The returned error wraps it
	// and names the parameter and its range.
	ErrTheta = errors.New("marking parameter out of range")

	// ErrIndicator: some η_T² is negative, NaN or ±Inf. It comes wrapped in
	// an *IndicatorError that names the triangle.
	ErrIndicator = errors.New("indicator is negative, NaN or infinite")

	// ErrTooMany: more than 2³¹−1 indicators (triangle indices are int32
	// throughout the library). Only markers that select (Dorfler, Fraction)
	// have this limit.
	ErrTooMany = errors.New("more than 2^31-1 indicators")
)

// Reasons Run rejects its input or stops, for errors.Is.
var (
	// ErrSettings: settings or a problem that cannot run: no stop rule, a
	// negative budget, a budget below the initial mesh, a bad degree, a
	// missing mesh or problem data.
	ErrSettings = errors.New("invalid settings")

	// ErrArgument: an argument of Run that is not part of the settings is
	// unusable, such as a nil context.
	// It is the value of mesh.ErrArgument, shared across the library.
	ErrArgument = mesh.ErrArgument

	// ErrMethod: a caller's Solver, Estimator or Marker returned a result
	// that does not fit the step: a solution with the wrong number of
	// values, no indicators or the wrong number of them, or a mask of the
	// wrong length. The StepError's Stage says which.
	ErrMethod = errors.New("method returned a result that does not fit the step")

	// ErrGoal: Method.Goal cannot be used on the problem's mesh (a weight
	// that integrates to zero, a flux tag that no boundary edge carries).
	// It is the value of fem.ErrGoal, shared across the library.
	ErrGoal = fem.ErrGoal
)

// IndicatorError reports the first invalid squared indicator, in index
// order. Err is ErrIndicator for errors made by this package.
type IndicatorError struct {
	Triangle int     // index of the triangle, into eta2
	Value    float64 // the offending η_T²
	Err      error
}

// Error reads "adapt: triangle 17: indicator -1: negative"; the last part
// is "negative", "not a number" or "infinite".
func (e *IndicatorError) Error() string {
	return fmt.Sprintf("adapt: triangle %d: indicator %v: %s", e.Triangle, e.Value, e.reason())
}

// Unwrap returns Err, so that errors.Is(err, ErrIndicator) holds.
func (e *IndicatorError) Unwrap() error { return e.Err }

func (e *IndicatorError) reason() string {
	switch v := e.Value; {
	case math.IsNaN(v):
		return "not a number"
	case math.IsInf(v, 0):
		return "infinite"
	case v < 0:
		return "negative"
	case e.Err != nil:
		return e.Err.Error()
	}
	return "invalid"
}

// valid reports whether v is an admissible η_T²: finite and ≥ 0 (−0 counts
// as zero).
func valid(v float64) bool { return v >= 0 && v <= math.MaxFloat64 }

// indicatorErr is the error for the invalid value eta2[i].
func indicatorErr(i int, v float64) error {
	return &IndicatorError{Triangle: i, Value: v, Err: ErrIndicator}
}

// thetaErr is the error for a parameter out of range; want describes the
// range, e.g. "0 < θ ≤ 1".
func thetaErr(name string, v float64, want string) error {
	return fmt.Errorf("adapt: %w: %s = %v, want %s", ErrTheta, name, v, want)
}

// sizeErr is the error for more indicators than int32 can index.
func sizeErr(n int) error {
	return fmt.Errorf("adapt: %w: got %d", ErrTooMany, n)
}
