package fem

import (
	"gonum.org/v1/gonum/mat"

	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// Matrix is the sparse matrix of an assembled system, in compressed sparse
// row form with int32 indices.
//
// Row i holds the column indices Col[RowPtr[i]:RowPtr[i+1]], strictly
// ascending, and the matching values Val[RowPtr[i]:RowPtr[i+1]]. RowPtr has
// length Rows+1 with RowPtr[0] = 0 and RowPtr[Rows] = len(Col) = len(Val).
// Entries that are not stored are zero; stored entries may hold an explicit
// zero. Validate checks these rules; the other methods assume them.
//
// A Matrix is safe for concurrent use by several readers. It implements
// gonum's mat.Matrix, so it can be passed to the functions of the gonum
// library that accept one (gonum reads it entry by entry through At, which
// is slow; Dense converts small matrices instead).
type Matrix struct {
	Rows, Cols int       // matrix dimensions
	RowPtr     []int32   // row start offsets into Col and Val, len Rows+1
	Col        []int32   // column index of each stored entry
	Val        []float64 // value of each stored entry
}

var _ mat.Matrix = (*Matrix)(nil)

// csr returns m as the sparse package's matrix, sharing its arrays: the
// two types have the same fields.
func (m *Matrix) csr() *sparse.CSR { return (*sparse.CSR)(m) }

// Dims returns the number of rows and columns.
func (m *Matrix) Dims() (r, c int) { return m.Rows, m.Cols }

// At returns the entry (i, j), which is zero if it is not stored, by a
// binary search within row i. Like At of gonum's matrices it panics with
// mat.ErrRowAccess or mat.ErrColAccess if i or j is out of range.
func (m *Matrix) At(i, j int) float64 { return m.csr().At(i, j) }

// T returns the transpose of m as a gonum mat.Transpose view; no data are
// copied.
func (m *Matrix) T() mat.Matrix { return mat.Transpose{Matrix: m} }

// NNZ returns the number of stored entries, explicit zeros included.
func (m *Matrix) NNZ() int { return len(m.Val) }

// Index returns the position in Val (and Col) of the entry (i, j), or -1
// if that entry is not stored or (i, j) lies outside the matrix:
// m.Val[m.Index(i, j)] += v adds into the fixed sparsity pattern.
func (m *Matrix) Index(i, j int) int { return m.csr().Index(i, j) }

// MulVec computes dst = m x. Rows are split over GOMAXPROCS goroutines for
// large matrices; each row is summed in its stored order, so the result
// does not depend on GOMAXPROCS. It costs one pass over the stored
// entries. MulVec panics if len(x) != Cols, len(dst) != Rows, or dst and x
// share their first element (programmer errors); dst must not overlap x.
func (m *Matrix) MulVec(dst, x []float64) { m.csr().MulVec(dst, x) }

// Diagonal stores the diagonal entries m(i, i), i < min(Rows, Cols), in
// dst and returns it; entries that are not stored give 0. A nil dst
// allocates; a dst of the wrong length panics.
func (m *Matrix) Diagonal(dst []float64) []float64 { return m.csr().Diagonal(dst) }

// Validate checks the rules stated on the type, and that the values are
// finite. The error names the offending entry.
func (m *Matrix) Validate() error { return m.csr().Validate() }

// Dense returns m as a new gonum mat.Dense (an empty one for a matrix
// without rows or columns). It allocates Rows·Cols values and is meant for
// small matrices, tests and debugging.
func (m *Matrix) Dense() *mat.Dense { return m.csr().Dense() }
