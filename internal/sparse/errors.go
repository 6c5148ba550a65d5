package sparse

import (
	"errors"
	"fmt"
	"strings"
)

// Sentinel errors. Every error returned by this package wraps one of these,
// so callers can test for a failure class with errors.Is.
var (
	// ErrDims reports mismatched dimensions or vector lengths, or negative
	// sizes.
	ErrDims = errors.New("sparse: dimension mismatch")

	// ErrIndex reports a row or column index outside the matrix.
	ErrIndex = errors.New("sparse: index out of range")

	// ErrNotFinite reports a NaN or infinite value where a finite one is
	// required.
	ErrNotFinite = errors.New("sparse: value not finite")

	// ErrNotPositive reports a diagonal entry that is zero or negative where
	// a positive one is required (for example by NewJacobi).
	ErrNotPositive = errors.New("sparse: value not positive")

	// ErrStructure reports a CSR whose storage arrays are inconsistent:
	// wrong lengths, decreasing row pointers or column indices that are not
	// strictly ascending within a row.
	ErrStructure = errors.New("sparse: malformed structure")

	// ErrSettings reports invalid CGSettings.
	ErrSettings = errors.New("sparse: invalid settings")

	// ErrNotConverged reports that CG reached its iteration limit, or
	// stagnated, before meeting the tolerance. The CGResult returned with it
	// describes the last iterate, which is left in x.
	ErrNotConverged = errors.New("sparse: not converged")

	// ErrBreakdown reports that CG could not continue: a curvature p·Ap or
	// a preconditioned inner product r·M⁻¹r was not positive, or a NaN or
	// infinity appeared. This means the operator or the preconditioner is
	// not symmetric positive definite, or the data are bad.
	ErrBreakdown = errors.New("sparse: breakdown")
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
		reason = strings.TrimPrefix(e.Err.Error(), "sparse: ")
	}
	return fmt.Sprintf("sparse: entry (%d,%d): %s", e.Row, e.Col, reason)
}

// Unwrap returns the reason, for errors.Is and errors.As.
func (e *EntryError) Unwrap() error { return e.Err }
