// Package quadrature provides numerical integration rules for triangles and
// line segments, as used by the finite element assembly and the error
// estimators of this module.
//
// # Triangles
//
// [ForTriangle] returns a symmetric rule of a requested polynomial degree.
// The rules are those of
//
//	D. A. Dunavant, "High degree efficient symmetrical Gaussian quadrature
//	rules for the triangle", Int. J. Numer. Methods Eng. 21 (1985) 1129–1148,
//
// for degrees 1, 2, 4, 5, 6, 8, 9 and 10. Dunavant's degree 3 and degree 7
// rules contain a negative weight and are not stored: a request for degree 3
// is served by the degree 4 rule and a request for degree 7 by the degree 8
// rule. All stored rules have positive weights and interior points. The
// tabulated values were polished from Dunavant's published 15-digit values
// by a Gauss–Newton iteration on the moment equations (internal/gen) and are
// stored with full float64 precision.
//
// Points are given in barycentric coordinates (λ0, λ1, λ2) with respect to
// the triangle's vertices v0, v1, v2, so a point is λ0 v0 + λ1 v1 + λ2 v2.
// The weights sum to 1; to integrate f over a triangle T compute
//
//	∫_T f ≈ |T| Σ_k W[k] f(x_k),
//
// where |T| is the area of T.
//
// # Line segments
//
// [GaussLegendre] returns the n-point Gauss–Legendre rule on the unit interval
// [0, 1], computed by Newton iteration on the three-term Legendre recurrence,
// and [ForLine] selects the rule with the fewest points for a given degree.
// Nodes lie in (0, 1) in ascending order and the weights sum to 1; to
// integrate over a segment of length L, map the nodes affinely and multiply
// the weights by L.
//
// # Sharing
//
// All functions return shared, read-only values that are built once per
// process. Callers must not modify the returned rules or their slices; copy
// them if a modified rule is needed. The functions are safe for concurrent
// use.
//
// # Errors
//
// Requests outside the supported range return an error wrapping [ErrDegree];
// test for it with errors.Is. No function in this package panics on bad
// input.
package quadrature

import "errors"

// ErrDegree is wrapped by every error returned for a requested degree or
// number of points outside the supported range. Use errors.Is to detect it.
var ErrDegree = errors.New("unsupported degree or number of points")
