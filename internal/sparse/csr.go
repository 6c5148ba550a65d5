package sparse

import (
	"fmt"
	"math"
	"runtime"
	"slices"

	"github.com/posteriori-fem/posteriori/internal/parallel"

	"gonum.org/v1/gonum/mat"
)

// parallelRows is the row count above which MulVec splits its work over
// several goroutines. Below it the cost of starting goroutines outweighs
// the gain.
const parallelRows = 20000

// minRowsPerWorker bounds the number of goroutines MulVec uses, so that each
// one gets a worthwhile share of rows.
const minRowsPerWorker = 10000

// CSR is a sparse matrix in compressed sparse row form.
//
// Row i holds the column indices Col[RowPtr[i]:RowPtr[i+1]], strictly
// ascending, and the matching values Val[RowPtr[i]:RowPtr[i+1]]. RowPtr has
// length Rows+1 with RowPtr[0] = 0 and RowPtr[Rows] = len(Col) = len(Val).
// Entries that are not stored are zero; stored entries may hold an explicit
// zero. Indices are int32, so Rows, Cols and the number of stored entries
// must each fit in an int32. Validate checks these rules; the other methods
// assume them.
//
// A CSR is safe for concurrent use by several readers. It implements
// gonum's mat.Matrix, so it can be passed to functions of the gonum
// library that accept one (gonum reads it entry by entry through At, which
// is slow; use Dense to convert small matrices instead).
type CSR struct {
	Rows, Cols int       // matrix dimensions
	RowPtr     []int32   // row start offsets into Col and Val, len Rows+1
	Col        []int32   // column index of each stored entry
	Val        []float64 // value of each stored entry
}

var _ mat.Matrix = (*CSR)(nil)

// Dims returns the number of rows and columns.
func (m *CSR) Dims() (r, c int) { return m.Rows, m.Cols }

// At returns the entry (i, j), which is zero if it is not stored. It uses a
// binary search within row i. Like At of gonum's matrices it panics with
// mat.ErrRowAccess or mat.ErrColAccess if i or j is out of range.
func (m *CSR) At(i, j int) float64 {
	if uint(i) >= uint(m.Rows) {
		panic(mat.ErrRowAccess)
	}
	if uint(j) >= uint(m.Cols) {
		panic(mat.ErrColAccess)
	}
	if k := m.Index(i, j); k >= 0 {
		return m.Val[k]
	}
	return 0
}

// T returns the transpose of m as a gonum mat.Transpose view; no data are
// copied.
func (m *CSR) T() mat.Matrix { return mat.Transpose{Matrix: m} }

// NNZ returns the number of stored entries, explicit zeros included.
func (m *CSR) NNZ() int { return len(m.Val) }

// Index returns the position in Val (and Col) of the entry (i, j), or -1 if
// that entry is not stored or (i, j) lies outside the matrix. It is meant
// for adding values into a fixed sparsity pattern: m.Val[m.Index(i, j)] += v.
func (m *CSR) Index(i, j int) int {
	if uint(i) >= uint(m.Rows) || uint(j) >= uint(m.Cols) {
		return -1
	}
	lo, hi := int(m.RowPtr[i]), int(m.RowPtr[i+1])
	k, ok := slices.BinarySearch(m.Col[lo:hi], int32(j))
	if !ok {
		return -1
	}
	return lo + k
}

// MulVec computes dst = m x.
//
// Each row's products are summed in ascending column order by a single
// goroutine. For matrices with more than 20000 rows the rows are split,
// balanced by stored entries, over up to runtime.GOMAXPROCS(0) goroutines;
// because each row is still summed the same way the result is bit-identical
// whatever GOMAXPROCS is.
//
// MulVec panics if len(x) != Cols, len(dst) != Rows, or dst and x share
// their first element: these are programmer errors. dst must not overlap x
// at all; partial overlaps are not detected.
func (m *CSR) MulVec(dst, x []float64) {
	if len(x) != m.Cols {
		panic(fmt.Sprintf("sparse: MulVec: len(x) = %d, want %d", len(x), m.Cols))
	}
	if len(dst) != m.Rows {
		panic(fmt.Sprintf("sparse: MulVec: len(dst) = %d, want %d", len(dst), m.Rows))
	}
	if m.Rows == 0 {
		return
	}
	if len(x) > 0 && &dst[0] == &x[0] {
		panic("sparse: MulVec: dst aliases x")
	}
	nw := runtime.GOMAXPROCS(0)
	if lim := m.Rows / minRowsPerWorker; nw > lim {
		nw = lim
	}
	if m.Rows <= parallelRows || nw < 2 {
		m.mulRows(dst, x, 0, m.Rows)
		return
	}
	b := parallel.ByWeight(nil, nw, m.RowPtr[:m.Rows+1])
	parallel.Run(nw, func(w int) { m.mulRows(dst, x, b[w], b[w+1]) })
}

// mulRows computes rows lo..hi-1 of dst = m x.
func (m *CSR) mulRows(dst, x []float64, lo, hi int) {
	rp := m.RowPtr[lo : hi+1]
	col, val := m.Col, m.Val
	out := dst[lo:hi]
	for i := range out {
		s, e := rp[i], rp[i+1]
		cs := col[s:e]
		vs := val[s:e]
		vs = vs[:len(cs)]
		var sum float64
		for k, c := range cs {
			sum += vs[k] * x[c]
		}
		out[i] = sum
	}
}

// Diagonal stores the diagonal entries m(i,i), i < min(Rows, Cols), in dst
// and returns it; entries that are not stored give 0. If dst is nil a new
// slice is allocated. Diagonal panics if dst is not nil and has the wrong
// length.
func (m *CSR) Diagonal(dst []float64) []float64 {
	n := min(m.Rows, m.Cols)
	if dst == nil {
		dst = make([]float64, n)
	} else if len(dst) != n {
		panic(fmt.Sprintf("sparse: Diagonal: len(dst) = %d, want %d", len(dst), n))
	}
	for i := range dst {
		if k := m.Index(i, i); k >= 0 {
			dst[i] = m.Val[k]
		} else {
			dst[i] = 0
		}
	}
	return dst
}

// Validate checks that m obeys the CSR rules described on the type:
// non-negative dimensions that fit in an int32, consistent slice lengths,
// non-decreasing row pointers starting at 0, column indices in range and
// strictly ascending within each row, and finite values. It returns nil or
// an error wrapping ErrDims or ErrStructure, or an *EntryError wrapping
// ErrIndex, ErrStructure or ErrNotFinite that names the entry.
func (m *CSR) Validate() (err error) {
	defer inContext("Validate", &err)
	if m.Rows < 0 || m.Cols < 0 || m.Rows > math.MaxInt32 || m.Cols > math.MaxInt32 {
		return fmt.Errorf("%w: dimensions %dx%d", ErrDims, m.Rows, m.Cols)
	}
	if len(m.RowPtr) != m.Rows+1 {
		return fmt.Errorf("%w: len(RowPtr) = %d, want Rows+1 = %d", ErrStructure, len(m.RowPtr), m.Rows+1)
	}
	if len(m.Col) != len(m.Val) {
		return fmt.Errorf("%w: len(Col) = %d but len(Val) = %d", ErrStructure, len(m.Col), len(m.Val))
	}
	if m.RowPtr[0] != 0 {
		return fmt.Errorf("%w: RowPtr[0] = %d, want 0", ErrStructure, m.RowPtr[0])
	}
	if int(m.RowPtr[m.Rows]) != len(m.Col) {
		return fmt.Errorf("%w: RowPtr[%d] = %d, want len(Col) = %d", ErrStructure, m.Rows, m.RowPtr[m.Rows], len(m.Col))
	}
	for i := range m.Rows {
		if m.RowPtr[i+1] < m.RowPtr[i] {
			return fmt.Errorf("%w: RowPtr decreases at row %d", ErrStructure, i)
		}
	}
	for i := range m.Rows {
		prev := int32(-1)
		for k := m.RowPtr[i]; k < m.RowPtr[i+1]; k++ {
			c := m.Col[k]
			if c < 0 || int(c) >= m.Cols {
				return &EntryError{Row: i, Col: int(c), Err: fmt.Errorf("%w: column outside [0,%d)", ErrIndex, m.Cols)}
			}
			if c <= prev {
				return &EntryError{Row: i, Col: int(c), Err: fmt.Errorf("%w: column not after %d in row", ErrStructure, prev)}
			}
			prev = c
			if v := m.Val[k]; math.IsNaN(v) || math.IsInf(v, 0) {
				return &EntryError{Row: i, Col: int(c), Err: fmt.Errorf("%w: value %g", ErrNotFinite, v)}
			}
		}
	}
	return nil
}

// Dense returns m as a new gonum mat.Dense. A matrix with no rows or no
// columns gives an empty mat.Dense (gonum does not allow zero dimensions in
// mat.NewDense). Dense allocates Rows*Cols values and is meant for small
// matrices, tests and debugging.
func (m *CSR) Dense() *mat.Dense {
	if m.Rows == 0 || m.Cols == 0 {
		return &mat.Dense{}
	}
	d := mat.NewDense(m.Rows, m.Cols, nil)
	for i := range m.Rows {
		for k := m.RowPtr[i]; k < m.RowPtr[i+1]; k++ {
			d.Set(i, int(m.Col[k]), m.Val[k])
		}
	}
	return d
}
