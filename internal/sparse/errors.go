package sparse

import (
	"errors"
	"fmt"
	"strings"

	"github.com/posteriori-fem/posteriori/internal/sentinel"
)

// Sentinel errors. Every error returned by this package wraps one of these,
// so callers can test for a failure class with errors.Is. Their texts carry
// no package prefix; the errors that wrap them start with "sparse: ".
var (
	// ErrDims reports mismatched dimensions or vector lengths, or negative
	// sizes.
	ErrDims = errors.New("dimension mismatch")

	// ErrIndex reports a row or column index outside the matrix.
	ErrIndex = errors.New("index out of range")

	// ErrNotFinite reports a NaN or infinite value where a finite one is
	// required.
	// It is the library's shared value (sentinel.NotFinite), so that
	// errors.Is(err, fem.ErrNotFinite) holds for a NaN the solver meets.
	ErrNotFinite = sentinel.NotFinite

	// ErrNotPositive reports a diagonal entry that is zero or negative where
	// a positive one is required (for example by NewJacobi).
	ErrNotPositive = errors.New("value not positive")

	// ErrStructure reports a CSR whose storage arrays are inconsistent:
	// wrong lengths, decreasing row pointers or column indices that are not
	// strictly ascending within a row.
	ErrStructure = errors.New("malformed structure")

	// ErrSettings reports invalid CGSettings.
	ErrSettings = errors.New("invalid settings")

	// ErrNotConverged reports that CG reached its iteration limit, or
	// stagnated, before meeting the tolerance. The CGResult returned with it
	// describes the last iterate, which is left in x.
	// It is the library's shared value, fem.ErrNotConverged.
	ErrNotConverged = sentinel.NotConverged

	// ErrBreakdown reports that CG could not continue: a curvature p·Ap or
	// a preconditioned inner product r·M⁻¹r was not positive, or a NaN or
	// infinity appeared. This means the operator or the preconditioner is
	// not symmetric positive definite, or the data are bad.
	ErrBreakdown = errors.New("breakdown")
)

// EntryError locates a failure at the matrix entry (Row, Col). Err carries
// the reason and wraps one of the sentinel errors, so both
// errors.As(err, &entryErr) and errors.Is(err, ErrIndex) (say) work.
type EntryError struct {
	Row, Col int   // location of the offending entry
	Err      error // reason; wraps a sentinel error
}

// Error formats the error as "sparse: entry (Row,Col): reason".
func (e *EntryError) Error() string {
	reason := "unknown error"
	if e.Err != nil {
		reason = e.Err.Error()
	}
	return fmt.Sprintf("sparse: entry (%d,%d): %s", e.Row, e.Col, reason)
}

// Unwrap returns the reason, for errors.Is and errors.As.
func (e *EntryError) Unwrap() error { return e.Err }

// inContext puts "sparse: <where>: " in front of *err, unless it is nil,
// saying the package once: an EntryError's own "sparse: " is dropped.
func inContext(where string, err *error) {
	if *err != nil {
		*err = &contextError{where: where, err: *err}
	}
}

// contextError is an error of this package with the name of the function
// that returned it; it unwraps to the error.
type contextError struct {
	where string
	err   error
}

func (e *contextError) Error() string {
	return "sparse: " + e.where + ": " + strings.TrimPrefix(e.err.Error(), "sparse: ")
}

func (e *contextError) Unwrap() error { return e.err }
