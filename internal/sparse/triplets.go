package sparse

import (
	"fmt"
	"math"
)

// FromTriplets builds a rows×cols CSR matrix from coordinate triplets: entry
// k adds tv[k] at (ti[k], tj[k]). This is the usual way to assemble a finite
// element matrix, each element contributing its local entries.
//
// Triplets with the same (row, col) are summed in input order, so the result
// is deterministic, bit for bit, for a given input. Every distinct position
// becomes a stored entry, even if its sum is zero; positions with no triplet
// are not stored.
//
// The triplets are ordered by a stable two-pass counting (radix) sort, by
// column and then by row, in O(nnz + rows + cols) time and without hash maps.
// Besides the result it needs two temporary int32 slices of length nnz and
// one of length max(rows, cols)+1.
//
// FromTriplets returns an error wrapping ErrDims if rows or cols is negative
// or too large for int32 indexing, or if the three slices differ in length
// or hold more than math.MaxInt32 triplets; and an *EntryError wrapping
// ErrIndex or ErrNotFinite for a triplet out of range or with a NaN or
// infinite value or whose duplicates sum to an infinity.
func FromTriplets(rows, cols int, ti, tj []int32, tv []float64) (_ *CSR, err error) {
	defer inContext("FromTriplets", &err)
	if rows < 0 || cols < 0 || rows > math.MaxInt32-1 || cols > math.MaxInt32-1 {
		return nil, fmt.Errorf("%w: dimensions %dx%d", ErrDims, rows, cols)
	}
	if len(ti) != len(tv) || len(tj) != len(tv) {
		return nil, fmt.Errorf("%w: triplet slices have lengths %d, %d, %d", ErrDims, len(ti), len(tj), len(tv))
	}
	if len(tv) > math.MaxInt32 {
		return nil, fmt.Errorf("%w: %d triplets exceed int32 indexing", ErrDims, len(tv))
	}
	r32, c32 := int32(rows), int32(cols)
	for k, v := range tv {
		i, j := ti[k], tj[k]
		if i < 0 || i >= r32 || j < 0 || j >= c32 {
			return nil, &EntryError{Row: int(i), Col: int(j),
				Err: fmt.Errorf("%w: triplet %d outside %dx%d matrix", ErrIndex, k, rows, cols)}
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, &EntryError{Row: int(i), Col: int(j),
				Err: fmt.Errorf("%w: triplet %d has value %g", ErrNotFinite, k, v)}
		}
	}

	n := len(tv)
	count := make([]int32, max(rows, cols)+1)
	// Pass 1: stable counting sort of triplet numbers by column.
	byCol := make([]int32, n)
	for _, j := range tj {
		count[j+1]++
	}
	for c := 1; c <= cols; c++ {
		count[c] += count[c-1]
	}
	for k, j := range tj {
		byCol[count[j]] = int32(k)
		count[j]++
	}
	// Pass 2: stable counting sort by row of the column-sorted sequence.
	// Within a row, triplets are then ordered by column, and triplets with
	// equal (row, col) keep their input order.
	clear(count)
	for _, i := range ti {
		count[i+1]++
	}
	for r := 1; r <= rows; r++ {
		count[r] += count[r-1]
	}
	order := make([]int32, n)
	for _, k := range byCol {
		i := ti[k]
		order[count[i]] = k
		count[i]++
	}
	byCol = nil

	// Count distinct positions per row, then fill.
	m := &CSR{Rows: rows, Cols: cols, RowPtr: make([]int32, rows+1)}
	prevI, prevJ := int32(-1), int32(-1)
	nnz := 0
	for _, k := range order {
		i, j := ti[k], tj[k]
		if i != prevI || j != prevJ {
			m.RowPtr[i+1]++
			nnz++
			prevI, prevJ = i, j
		}
	}
	for r := 1; r <= rows; r++ {
		m.RowPtr[r] += m.RowPtr[r-1]
	}
	m.Col = make([]int32, nnz)
	m.Val = make([]float64, nnz)
	pos := -1
	prevI, prevJ = -1, -1
	for _, k := range order {
		i, j := ti[k], tj[k]
		if i != prevI || j != prevJ {
			pos++
			m.Col[pos] = j
			m.Val[pos] = tv[k]
			prevI, prevJ = i, j
		} else {
			m.Val[pos] += tv[k]
			if math.IsInf(m.Val[pos], 0) {
				return nil, &EntryError{Row: int(i), Col: int(j),
					Err: fmt.Errorf("%w: sum of duplicate triplets overflows", ErrNotFinite)}
			}
		}
	}
	return m, nil
}
