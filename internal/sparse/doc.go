// Package sparse provides compressed sparse row (CSR) matrices and a
// preconditioned conjugate gradient (CG) solver for the symmetric positive
// definite systems that finite element discretisations produce, sized for
// 10⁶–10⁷ unknowns on a small multi-core machine.
//
// # Storage
//
// A CSR matrix with Rows rows stores its nonzero pattern in three slices.
// Row i owns the half-open range RowPtr[i]:RowPtr[i+1] of Col and Val;
// within it the column indices are strictly ascending and Val holds the
// matching values. For the matrix
//
//	[ 4 1 0 ]
//	[ 1 3 0 ]
//	[ 0 0 2 ]
//
// the slices are RowPtr = [0 2 4 5], Col = [0 1 0 1 2] and
// Val = [4 1 1 3 2]. Indices are int32 to halve the index memory traffic of
// a matrix-vector product; dimensions and the number of stored entries must
// therefore fit in an int32. FromTriplets assembles a CSR from coordinate
// (row, column, value) triplets, summing duplicates in input order, and
// CSR.Validate checks the structural rules of a hand-built one.
//
// *CSR implements gonum's mat.Matrix interface, and CSR.Dense converts to a
// gonum mat.Dense, so small matrices can be checked against dense
// algorithms of the gonum library.
//
// # Conventions
//
// Mistakes in how a function is called that a correct program never makes,
// such as vector lengths that disagree with a matrix in CSR.MulVec or an
// index out of range in CSR.At, panic. Problems with data, which a program
// should handle, are returned as errors. Every error message starts with
// "sparse:", and every error wraps one of the sentinel errors (ErrDims,
// ErrIndex, ErrNotFinite, ErrNotPositive, ErrStructure, ErrSettings,
// ErrNotConverged, ErrBreakdown), so it can be matched with errors.Is.
// Errors about a particular matrix entry are *EntryError values carrying
// the row and column, for errors.As.
//
// Results are deterministic: CSR.MulVec sums each row in column order on a
// single goroutine, whatever the number of goroutines used, and CG's inner
// products are sums of fixed blocks, each summed in a fixed order on one
// goroutine, added in block order. Repeated runs give bit-identical
// answers for any GOMAXPROCS.
//
// # Conjugate gradients
//
// CG implements the preconditioned conjugate gradient method of Hestenes
// and Stiefel in the form given by Saad (Algorithm 9.1). With
// preconditioner M and initial guess x₀ it sets r₀ = b - A x₀, z₀ = M⁻¹ r₀,
// p₀ = z₀ and iterates
//
//	αₖ   = (rₖ·zₖ) / (pₖ·A pₖ)
//	xₖ₊₁ = xₖ + αₖ pₖ
//	rₖ₊₁ = rₖ - αₖ A pₖ
//	zₖ₊₁ = M⁻¹ rₖ₊₁
//	βₖ   = (rₖ₊₁·zₖ₊₁) / (rₖ·zₖ)
//	pₖ₊₁ = zₖ₊₁ + βₖ pₖ
//
// It stops at the first k with
//
//	‖rₖ‖₂ ≤ Tol · ‖b‖₂
//
// (the unpreconditioned residual in the Euclidean norm, so the test does
// not depend on the preconditioner). Because the recursively updated rₖ
// drifts from the true residual b - A xₖ in floating point, the test is
// then repeated with the true residual; if that fails, the iteration
// restarts from it. Rounding sets a floor under the attainable residual,
// of order u κ(A) relative (u = 2⁻⁵³); a true residual that stagnates
// within it is a convergence at the floor (CGResult.AtFloor), not an error
// (CGSettings.Tol gives the bound and its sources). CGResult.Residual
// always reports the true relative residual ‖b - A x‖₂ / ‖b‖₂ of the
// returned x.
//
// Two preconditioners are provided: Identity (none) and Jacobi (the
// diagonal of A). Others can be supplied through the Preconditioner
// interface, and matrix-free operators through Operator.
//
// # References
//
//   - M. R. Hestenes and E. Stiefel, Methods of conjugate gradients for
//     solving linear systems, J. Res. Nat. Bur. Standards 49(6):409–436,
//     1952.
//   - Y. Saad, Iterative Methods for Sparse Linear Systems, 2nd ed., SIAM,
//     2003 (§3.4 on sparse storage, §6.7 and §9.2 on CG and preconditioned
//     CG).
package sparse
