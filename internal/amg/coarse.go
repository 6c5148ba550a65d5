package amg

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// maxDense is the largest coarsest level that is factorised densely. A
// coarsest level with more unknowns (possible only when MaxLevels or a
// large CoarseSize stops the coarsening early) is smoothed instead of
// solved exactly. The factorisation costs n³/3 multiply-adds and n² words
// of memory.
const maxDense = 2000

// pivotTol is the relative size below which a pivot of the dense Cholesky
// factorisation counts as zero: a pivot s of row i with
// s ≤ pivotTol·a_ii is dropped (see cholesky).
const pivotTol = 1e-10

// cholesky is the dense Cholesky factorisation A = L Lᵀ of the coarsest
// matrix, with L stored row by row in the full n × n array l.
//
// A pivot that vanishes to rounding (s ≤ pivotTol·a_ii) is dropped: the
// row and column of L are set to zero and the unknown is fixed at zero in
// the solve. For a positive semi-definite A, such as the coarse operator of
// a pure Neumann problem whose constants span the null space, this gives
// the symmetric generalised inverse G = L̃⁻ᵀ E L̃⁻¹ (L̃ is L with a unit
// pivot in each dropped place, E the identity with zeros there), for which
// A G b = b for every b in the range of A: the exact solution of every
// consistent system. For a positive definite A nothing is dropped and G is
// A⁻¹.
type cholesky struct {
	n    int
	l    []float64 // row-major lower triangle of L; dropped pivots hold 0
	null []bool    // dropped pivots
}

// factor computes the Cholesky factorisation of the symmetric positive
// (semi-)definite matrix a, read from its lower triangle. It fails, with
// an error wrapping sparse.ErrNotPositive, if a pivot is negative beyond
// rounding, which means a is indefinite. The arrays of dst are reused
// (a new factorisation if dst is nil).
func factor(dst *cholesky, a *sparse.CSR) (*cholesky, error) {
	n := a.Rows
	c := dst
	if c == nil {
		c = new(cholesky)
	}
	c.n, c.l, c.null = n, resize(c.l, n*n), resize(c.null, n)
	clear(c.l)
	clear(c.null)
	l := c.l
	for i := range n {
		for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
			if j := int(a.Col[k]); j <= i {
				l[i*n+j] = a.Val[k]
			}
		}
	}
	for i := range n {
		ri := l[i*n : i*n+i+1]
		for j := range i + 1 {
			rj := l[j*n : j*n+j]
			s := ri[j]
			for k, v := range rj {
				s -= ri[k] * v
			}
			if j < i {
				if c.null[j] {
					ri[j] = 0
				} else {
					ri[j] = s / l[j*n+j]
				}
				continue
			}
			orig := l[i*n+i] // a_ii: the diagonal is the last entry of row i to be overwritten
			switch {
			case s > pivotTol*orig:
				ri[i] = math.Sqrt(s)
			case s >= -math.Sqrt(pivotTol)*orig:
				clear(ri)
				c.null[i] = true
			default:
				return nil, &sparse.EntryError{Row: i, Col: i, Err: fmt.Errorf("%w: coarsest matrix is indefinite: pivot %g of row %d (diagonal %g)", sparse.ErrNotPositive, s, i, orig)}
			}
		}
	}
	return c, nil
}

// solve sets x = G b (G = A⁻¹ for a positive definite A): forward
// substitution with L by rows, then backward substitution with Lᵀ by
// columns of Lᵀ, that is, rows of L, so that both sweeps read l
// contiguously. Unknowns of dropped pivots are set to zero. It does not
// allocate; x and b must not alias.
func (c *cholesky) solve(x, b []float64) {
	n, l := c.n, c.l
	x = x[:n]
	for i := range n {
		if c.null[i] {
			x[i] = 0
			continue
		}
		ri := l[i*n : i*n+i]
		s := b[i]
		for k, v := range ri {
			s -= v * x[k]
		}
		x[i] = s / l[i*n+i]
	}
	for i := n - 1; i >= 0; i-- {
		if c.null[i] {
			x[i] = 0
			continue
		}
		xi := x[i] / l[i*n+i]
		x[i] = xi
		ri := l[i*n : i*n+i]
		for k, v := range ri {
			x[k] -= v * xi
		}
	}
}
