package amg

import (
	"runtime"

	"github.com/posteriori-fem/posteriori/internal/spare"
	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// resize is spare.ResizeRoom: the hierarchy's arrays are reused by Reset
// for the next, larger matrix of an adaptive loop.
func resize[T any](s []T, n int) []T { return spare.ResizeRoom(s, n) }

// resizeCSR returns m (a new matrix if m is nil) as a rows × cols matrix
// with room for nnz entries, reusing its arrays (see resize). RowPtr,
// Col and Val are not cleared.
func resizeCSR(m *sparse.CSR, rows, cols, nnz int) *sparse.CSR {
	if m == nil {
		m = new(sparse.CSR)
	}
	m.Rows, m.Cols = rows, cols
	m.RowPtr = resize(m.RowPtr, rows+1)
	m.Col = resize(m.Col, nnz)
	m.Val = resize(m.Val, nnz)
	return m
}

// workspace holds the scratch arrays of New that no level keeps: each
// level's are dead when the next level is built, so one set, sized by the
// finest level, serves all levels, and a Hierarchy keeps it for Reset.
// The parts used concurrently (the power method beside the aggregation)
// are disjoint.
type workspace struct {
	diag      []float64   // a_ii of the level being built
	conn      connections // strength of connection
	agg, join []int32     // aggregation
	hasStrong []bool
	pv, pw    []float64    // vectors of the power method
	psums     [][2]float64 // block sums of the power method
	ap        *sparse.CSR  // A·P
	acc       [][]slot     // per goroutine: accumulator of a product
	tnext     [][]int32    // per range of a transpose: counts, then positions
}

// perWorker returns s with at least GOMAXPROCS elements.
func perWorker[T any](s []T) []T {
	return resize(s, max(1, runtime.GOMAXPROCS(0), len(s)))
}
