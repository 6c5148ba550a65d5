package amg

import (
	"fmt"
	"math"
	"runtime"
	"slices"

	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// setupGrain is the least number of rows a goroutine of the setup phase
// (products, prolongator rows) is given; smaller matrices are handled on
// the calling goroutine.
const setupGrain = 8192

// chunks splits [0, n) into at most GOMAXPROCS consecutive ranges of at
// least setupGrain indices (one range if n is small), balanced by the row
// offsets rowPtr[0..n] if rowPtr is not nil (by indices otherwise), and
// calls fn(c, lo, hi) for range c on its own goroutine, then waits. It
// returns the number of ranges. The ranges depend on GOMAXPROCS, so
// callers must make the result of each index independent of the range it
// falls in; they then combine the per-range results in range order.
func chunks(n int, rowPtr []int32, fn func(c, lo, hi int)) int {
	nw := max(1, min(runtime.GOMAXPROCS(0), n/setupGrain))
	if nw == 1 {
		fn(0, 0, n)
		return 1
	}
	bounds := splitRows(n, nw, rowPtr)
	parallel.Run(nw, func(c int) { fn(c, bounds[c], bounds[c+1]) })
	return nw
}

// splitRows returns the bounds of nw consecutive ranges of [0, n)
// balanced by the row offsets rowPtr[0..n], or by rows if rowPtr is nil.
func splitRows(n, nw int, rowPtr []int32) []int {
	if rowPtr == nil {
		return parallel.Even(nil, nw, n)
	}
	return parallel.ByWeight(nil, nw, rowPtr[:n+1])
}

// fill builds a rows × cols CSR whose row lengths are known: count(c, lo,
// hi, rowLen) stores the lengths of rows lo..hi-1 in rowLen[lo:hi], and
// put(c, lo, hi, m) writes the columns and values of those rows at
// m.RowPtr[i]. Both run in parallel over row ranges: count's balanced by
// work, offsets that estimate the work of the rows (such as the row
// offsets of the matrix the rows are computed from; nil balances by
// rows), put's by the entries of the result; c is the number of the range
// (below GOMAXPROCS), for per-goroutine scratch. Each row is computed
// independently of the ranges, and written straight into the result, so
// there is no copy and no over-allocation. The result is m, with its
// arrays reused (see resizeCSR), or a new matrix if m is nil. fill fails
// if the number of entries does not fit in an int32.
func fill(m *sparse.CSR, rows, cols int, work []int32, count func(c, lo, hi int, rowLen []int32), put func(c, lo, hi int, m *sparse.CSR)) (*sparse.CSR, error) {
	m = resizeCSR(m, rows, cols, 0)
	m.RowPtr[0] = 0
	chunks(rows, work, func(c, lo, hi int) { count(c, lo, hi, m.RowPtr[1:]) })
	nnz := 0
	for i := range rows {
		nnz += int(m.RowPtr[i+1])
		if nnz > math.MaxInt32 {
			return nil, fmt.Errorf("amg: %w: matrix has more than %d entries", sparse.ErrDims, math.MaxInt32)
		}
		m.RowPtr[i+1] = int32(nnz)
	}
	m.Col = resize(m.Col, nnz)
	m.Val = resize(m.Val, nnz)
	chunks(rows, m.RowPtr, func(c, lo, hi int) { put(c, lo, hi, m) })
	return m, nil
}

// mul returns the sparse product a·b (Gustavson's row-wise algorithm), in
// two passes over the rows of a: a symbolic one that counts the distinct
// columns of each row of the product, and a numeric one. The result is
// dst with its arrays reused (a new matrix if dst is nil); ws holds the
// scratch arrays of each goroutine (a new workspace if nil).
//
// Row i of the product is Σ_k a_ik (row k of b). It is accumulated in a
// dense array indexed by column, each slot holding a marker, the last row
// that touched the column (so that no slot is cleared between rows), and
// the partial sum, side by side, so that a term costs one cache line; the
// touched columns are then sorted and gathered. Every entry is summed in
// the order of the terms (k ascending, then the entries of row k of b
// ascending), on a single goroutine, so the result does not depend on how
// rows are split over goroutines. The cost is twice the number of
// multiplications, Σ_i Σ_{k in row i} nnz(row k of b), plus sorting the
// output rows. Explicit zeros of the structure are kept.
func mul(dst, a, b *sparse.CSR, ws *workspace) (*sparse.CSR, error) {
	if a.Cols != b.Rows {
		panic(fmt.Sprintf("amg: mul: %dx%d times %dx%d", a.Rows, a.Cols, b.Rows, b.Cols))
	}
	if ws == nil {
		ws = new(workspace)
	}
	ws.acc = perWorker(ws.acc)
	accumulator := func(c int) []slot {
		acc := resize(ws.acc[c], b.Cols)
		ws.acc[c] = acc
		for j := range acc {
			acc[j].mark = -1
		}
		return acc
	}
	aRow, aCol, aVal := a.RowPtr, a.Col, a.Val
	bRow, bCol, bVal := b.RowPtr, b.Col, b.Val
	count := func(c, lo, hi int, rowLen []int32) {
		acc := accumulator(c)
		for i := lo; i < hi; i++ {
			c := int32(0)
			for ka := aRow[i]; ka < aRow[i+1]; ka++ {
				k := aCol[ka]
				for _, j := range bCol[bRow[k]:bRow[k+1]] {
					if acc[j].mark != int32(i) {
						acc[j].mark = int32(i)
						c++
					}
				}
			}
			rowLen[i] = c
		}
	}
	put := func(c, lo, hi int, m *sparse.CSR) {
		acc := accumulator(c)
		for i := lo; i < hi; i++ {
			row := m.Col[m.RowPtr[i]:m.RowPtr[i+1]]
			q := 0
			for ka := aRow[i]; ka < aRow[i+1]; ka++ {
				k, av := aCol[ka], aVal[ka]
				bc := bCol[bRow[k]:bRow[k+1]]
				bv := bVal[bRow[k]:bRow[k+1]]
				bv = bv[:len(bc)]
				for t, j := range bc {
					s := &acc[j]
					if s.mark != int32(i) {
						s.mark = int32(i)
						row[q] = j
						q++
						s.val = av * bv[t]
					} else {
						s.val += av * bv[t]
					}
				}
			}
			slices.Sort(row)
			vals := m.Val[m.RowPtr[i]:m.RowPtr[i+1]]
			for t, j := range row {
				vals[t] = acc[j].val
			}
		}
	}
	return fill(dst, a.Rows, b.Cols, a.RowPtr, count, put)
}

// slot is an entry of the dense accumulator of mul: the partial sum of a
// column and the last row that touched it.
type slot struct {
	mark int32
	val  float64
}

// maxTransposeChunks bounds the number of row ranges of transpose, each of
// which keeps a count per column of a.
const maxTransposeChunks = 8

// transpose returns aᵀ. Entries are distributed by a counting sort over
// the columns of a, in parallel: the rows of a are split into ranges, each
// range counts its entries per column, the counts give every range its
// place in each row of the result (ranges in order), and then each range
// copies its entries there, visiting its rows in ascending order. The
// rows of the result are therefore sorted, and the result is the same
// whatever the split. It is linear in Rows + NNZ + (ranges · Cols). The
// result is dst with its arrays reused (a new matrix if dst is nil); ws
// holds the counts of the ranges (a new workspace if nil).
func transpose(dst, a *sparse.CSR, ws *workspace) *sparse.CSR {
	if ws == nil {
		ws = new(workspace)
	}
	t := resizeCSR(dst, a.Cols, a.Rows, a.NNZ())
	nw := max(1, min(runtime.GOMAXPROCS(0), maxTransposeChunks, a.Rows/setupGrain))
	bounds := splitRows(a.Rows, nw, a.RowPtr)
	ws.tnext = resize(ws.tnext, max(nw, len(ws.tnext)))
	next := ws.tnext[:nw] // per range: its count, then its next position, per column
	parallel.Run(nw, func(c int) {
		cnt := resize(next[c], a.Cols)
		clear(cnt)
		for _, j := range a.Col[a.RowPtr[bounds[c]]:a.RowPtr[bounds[c+1]]] {
			cnt[j]++
		}
		next[c] = cnt
	})
	pos := int32(0)
	for j := range a.Cols {
		t.RowPtr[j] = pos
		for c := range nw {
			n := next[c][j]
			next[c][j] = pos
			pos += n
		}
	}
	t.RowPtr[a.Cols] = pos
	parallel.Run(nw, func(c int) {
		nx := next[c]
		for i := bounds[c]; i < bounds[c+1]; i++ {
			for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
				j := a.Col[k]
				q := nx[j]
				nx[j]++
				t.Col[q] = int32(i)
				t.Val[q] = a.Val[k]
			}
		}
	})
	return t
}

// symmetrize returns (a + aᵀ)/2 for a square a whose asymmetry is only
// rounding. Entry (i, j) and entry (j, i) of the result are computed as
// (a_ij + a_ji)/2 and (a_ji + a_ij)/2, which are equal in floating point,
// so the result is exactly symmetric. The pattern is the union of the
// patterns of a and aᵀ.
func symmetrize(a *sparse.CSR) *sparse.CSR {
	t := transpose(nil, a, nil)
	s := &sparse.CSR{Rows: a.Rows, Cols: a.Cols, RowPtr: make([]int32, a.Rows+1)}
	s.Col = make([]int32, 0, a.NNZ())
	s.Val = make([]float64, 0, a.NNZ())
	for i := range a.Rows {
		p, pe := a.RowPtr[i], a.RowPtr[i+1]
		q, qe := t.RowPtr[i], t.RowPtr[i+1]
		for p < pe || q < qe {
			switch {
			case q == qe || (p < pe && a.Col[p] < t.Col[q]):
				s.Col = append(s.Col, a.Col[p])
				s.Val = append(s.Val, a.Val[p]/2)
				p++
			case p == pe || t.Col[q] < a.Col[p]:
				s.Col = append(s.Col, t.Col[q])
				s.Val = append(s.Val, t.Val[q]/2)
				q++
			default:
				s.Col = append(s.Col, a.Col[p])
				s.Val = append(s.Val, (a.Val[p]+t.Val[q])/2)
				p++
				q++
			}
		}
		s.RowPtr[i+1] = int32(len(s.Col))
	}
	return s
}

// symmetrizeInPlace replaces a by (a + aᵀ)/2 in place when the pattern of
// the square matrix a is symmetric, and reports whether it was. Row i is
// visited in ascending order; its entry (i, j), j > i, is matched with the
// entry (j, i), which for a symmetric pattern is the next not yet matched
// entry left of the diagonal in row j (next[j]), and both get the same
// value (a_ij + a_ji)/2. If a mismatch is found the matrix is left partly
// averaged, which symmetrize then completes correctly (the average of two
// equal values is that value).
func symmetrizeInPlace(a *sparse.CSR) bool {
	next := slices.Clone(a.RowPtr[:a.Rows])
	for i := range a.Rows {
		for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
			j := a.Col[k]
			if int(j) <= i {
				continue
			}
			q := next[j]
			if q >= a.RowPtr[j+1] || int(a.Col[q]) != i {
				return false
			}
			v := (a.Val[k] + a.Val[q]) / 2
			a.Val[k], a.Val[q] = v, v
			next[j]++
		}
	}
	for j := range a.Rows {
		if q := next[j]; q < a.RowPtr[j+1] && int(a.Col[q]) < j {
			return false // an entry (j, i), i < j, without (i, j)
		}
	}
	return true
}

// galerkin returns the Galerkin coarse operator pᵀ·a·p, given r = pᵀ,
// made exactly symmetric (see symmetrizeInPlace and symmetrize). It
// computes a·p first, into ws.ap, then r·(a·p), into dst (see mul).
func galerkin(dst, a, p, r *sparse.CSR, ws *workspace) (*sparse.CSR, error) {
	ap, err := mul(ws.ap, a, p, ws)
	if err != nil {
		return nil, err
	}
	ws.ap = ap
	c, err := mul(dst, r, ap, ws)
	if err != nil {
		return nil, err
	}
	if symmetrizeInPlace(c) {
		return c, nil
	}
	return symmetrize(c), nil
}
