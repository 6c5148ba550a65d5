// Package sentinel holds the error values that several packages of the
// library share, one value per meaning, so that errors.Is matches
// whichever package met the problem: mesh, fem, estimate, adapt and
// internal/sparse re-export them under their own names, as os.ErrNotExist
// is fs.ErrNotExist (mesh.ErrNotFinite, fem.ErrNotFinite and
// estimate.ErrNotFinite are one value).
//
// Like every sentinel of the library, their texts are lower-case phrases
// of their meaning with no package prefix; the error that wraps one names
// the package and the location.
package sentinel

import "errors"

var (
	// NotFinite reports a NaN or infinite value where a finite one is
	// required: a coordinate, problem data, a solution value, a matrix
	// entry.
	NotFinite = errors.New("value is NaN or infinite")

	// Argument reports an unusable argument: a nil pointer, a parameter
	// out of its range, an unknown option.
	Argument = errors.New("invalid argument")

	// Length reports arrays or slices whose lengths do not match each
	// other or the mesh.
	Length = errors.New("lengths do not match")

	// NotConverged reports an iterative solver that reached its iteration
	// limit, or stagnated, before meeting its tolerance.
	NotConverged = errors.New("not converged")

	// Goal reports a goal functional that cannot be used on the mesh: a
	// mean whose weight integrates to zero (a box outside the domain, a
	// region no triangle carries), a flux through a tag that no boundary
	// edge carries.
	Goal = errors.New("unusable goal functional")
)
