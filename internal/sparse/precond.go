package sparse

import (
	"fmt"
	"math"
)

// Preconditioner applies the inverse of a symmetric positive definite
// approximation M of the system matrix: dst = M⁻¹ r. CG calls Apply once per
// iteration with len(dst) = len(r) = n; dst and r never alias. Apply must
// not retain the slices.
type Preconditioner interface {
	Apply(dst, r []float64)
}

// Identity is the trivial preconditioner M = I: CG with Identity is plain,
// unpreconditioned conjugate gradients. CG recognises Identity (and
// *Identity) and then skips the copy and the extra work vector.
type Identity struct{}

// Apply copies r into dst. It panics if the lengths differ.
func (Identity) Apply(dst, r []float64) {
	if len(dst) != len(r) {
		panic(fmt.Sprintf("sparse: Identity.Apply: len(dst) = %d, len(r) = %d", len(dst), len(r)))
	}
	copy(dst, r)
}

// Jacobi is the diagonal (Jacobi) preconditioner M = diag(A). It stores
// the reciprocals of the diagonal entries, so Apply is one multiplication
// per unknown. Build it with NewJacobi.
type Jacobi struct{ inv []float64 }

// NewJacobi returns the Jacobi preconditioner of the square matrix m.
// It returns an error wrapping ErrDims if m is not square, and an
// *EntryError naming the row if a diagonal entry is missing, zero or
// negative (wrapping ErrNotPositive), or NaN or infinite, or so small that
// its reciprocal overflows (wrapping ErrNotFinite).
func NewJacobi(m *CSR) (_ *Jacobi, err error) {
	defer inContext("NewJacobi", &err)
	if m.Rows != m.Cols {
		return nil, fmt.Errorf("%w: Jacobi needs a square matrix, have %dx%d", ErrDims, m.Rows, m.Cols)
	}
	return jacobiOf(m.Diagonal(nil))
}

// NewJacobiDiag returns the Jacobi preconditioner of a matrix whose
// diagonal entries are diag, for a caller that has them at hand (and a
// buffer to spare): it overwrites diag with their reciprocals and keeps
// it, so it allocates nothing but the Jacobi value. Its errors are those
// of NewJacobi for the diagonal entries.
func NewJacobiDiag(diag []float64) (_ *Jacobi, err error) {
	defer inContext("NewJacobiDiag", &err)
	return jacobiOf(diag)
}

// jacobiOf checks the diagonal entries d and replaces them with their
// reciprocals.
func jacobiOf(d []float64) (*Jacobi, error) {
	for i, v := range d {
		switch {
		case math.IsNaN(v) || math.IsInf(v, 0):
			return nil, &EntryError{Row: i, Col: i, Err: fmt.Errorf("%w: diagonal entry of row %d is %g", ErrNotFinite, i, v)}
		case v <= 0:
			return nil, &EntryError{Row: i, Col: i, Err: fmt.Errorf("%w: diagonal entry of row %d is %g", ErrNotPositive, i, v)}
		}
		r := 1 / v
		if math.IsInf(r, 0) {
			return nil, &EntryError{Row: i, Col: i, Err: fmt.Errorf("%w: reciprocal of diagonal entry %g of row %d overflows", ErrNotFinite, v, i)}
		}
		d[i] = r
	}
	return &Jacobi{inv: d}, nil
}

// Len returns the number of unknowns the preconditioner is built for. CG
// uses it to report a size mismatch as ErrDims instead of panicking.
func (p *Jacobi) Len() int { return len(p.inv) }

// Apply sets dst[i] = r[i] / A(i,i). It panics if len(dst) or len(r) differs
// from Len.
func (p *Jacobi) Apply(dst, r []float64) {
	if len(dst) != len(p.inv) || len(r) != len(p.inv) {
		panic(fmt.Sprintf("sparse: Jacobi.Apply: len(dst) = %d, len(r) = %d, want %d", len(dst), len(r), len(p.inv)))
	}
	inv := p.inv
	r = r[:len(inv)]
	dst = dst[:len(inv)]
	for i, w := range inv {
		dst[i] = w * r[i]
	}
}
