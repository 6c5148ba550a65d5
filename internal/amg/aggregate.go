package amg

import (
	"math"
	"runtime"
	"slices"

	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// Aggregate labels used during aggregation.
const (
	free     = -1 // not yet in an aggregate
	isolated = -2 // no nonzero off-diagonal entry: left out of the coarse space
)

// connections holds the strong connections of a matrix and the data of
// its filtered matrix A_F.
type connections struct {
	// strong[k] reports whether the stored entry k = (i, j), i ≠ j, is a
	// strong connection.
	strong []bool
	// diagF[i] = a_ii + Σ_{j≠i weak} a_ij, the diagonal of A_F.
	diagF []float64
	// valF holds the values of the filtered matrix A_F in the structure
	// of the matrix: a_ij for a strong connection, diagF[i] on the
	// diagonal, zero for a weak entry. When every weak entry of the
	// matrix is zero, A_F is the matrix itself and valF is its Val (not a
	// copy); else valF is valFMem.
	valF, valFMem []float64
	// gershgorin is max_i Σ_j |a^F_ij| / a_ii, a bound of ρ(D⁻¹A_F).
	gershgorin float64
}

// strength finds the strong connections of a: the stored entry (i, j),
// i ≠ j, is strong when
//
//	|a_ij| ≥ θ √(a_ii a_jj),
//
// tested as a_ij² ≥ θ² a_ii a_jj to avoid the square root. Explicit zeros
// are never strong (θ > 0). The diagonal diag must be positive. For a
// symmetric a the relation is symmetric. The rows are split over
// goroutines; each row's results are independent of the split. The
// arrays of c are reused (see resize) and its fields set. The values of
// A_F are written out only if a weak entry is nonzero; else valF is a's
// Val itself. That is the case of the finest level of the adaptive L-shape
// loop's P1 matrices (newest-vertex bisections of right isosceles
// triangles), whose weak entries are explicit zeros: the edges opposite a
// right angle.
func strength(c *connections, a *sparse.CSR, diag []float64, theta float64) {
	c.strong, c.diagF = resize(c.strong, a.NNZ()), resize(c.diagF, a.Rows)
	t2 := theta * theta
	nw := max(1, runtime.GOMAXPROCS(0))
	gersh := make([]float64, nw)
	lumped := make([]bool, nw) // a chunk has a nonzero weak entry
	strong, diagF := c.strong, c.diagF
	rowPtr, col, val := a.RowPtr, a.Col, a.Val
	chunks(a.Rows, a.RowPtr, func(ch, lo, hi int) {
		g := 0.0
		nz := false
		for i := lo; i < hi; i++ {
			di := t2 * diag[i]
			lump, abs := 0.0, 0.0
			for k := rowPtr[i]; k < rowPtr[i+1]; k++ {
				j := col[k]
				v := val[k]
				s := int(j) != i && v*v >= di*diag[j] && v != 0
				strong[k] = s
				switch {
				case s:
					abs += math.Abs(v)
				case int(j) != i:
					lump += v
					nz = nz || v != 0
				}
			}
			diagF[i] = diag[i] + lump
			g = max(g, (abs+math.Abs(diagF[i]))/diag[i])
		}
		gersh[ch] = g
		lumped[ch] = nz
	})
	c.gershgorin = slices.Max(gersh)
	if !slices.Contains(lumped, true) {
		// Every weak entry is zero: a_ij on the strong entries, zero on
		// the weak ones and diagF[i] = a_ii on the diagonal are a's own
		// values, bit for bit.
		c.valF = a.Val
		return
	}
	c.valFMem = resize(c.valFMem, a.NNZ())
	valF := c.valFMem
	chunks(a.Rows, a.RowPtr, func(_, lo, hi int) {
		for i := lo; i < hi; i++ {
			for k := rowPtr[i]; k < rowPtr[i+1]; k++ {
				switch {
				case strong[k]:
					valF[k] = val[k]
				case int(col[k]) != i:
					valF[k] = 0
				default:
					valF[k] = diagF[i]
				}
			}
		}
	})
	c.valF = valF
}

// aggregate partitions the nodes (rows) of a into aggregates by the greedy
// algorithm of Vaněk, Mandel and Brezina (1996) on the graph of strong
// connections, visiting nodes in ascending order. It returns agg, where
// agg[i] ≥ 0 is the aggregate of node i and agg[i] == isolated marks a node
// whose off-diagonal entries are all zero (a Dirichlet row), and the number
// of aggregates. Aggregates are numbered in the order they are created.
//
//   - Pass 1: a free node i with at least one strong neighbour, all of
//     them free, becomes the root of a new aggregate made of i and its
//     strong neighbours.
//   - Pass 2: each node still free joins the pass-1 aggregate to which it
//     has the strongest connection |a_ij| (the first in column order among
//     equals): among its strong connections, or, for a node that has none
//     but is coupled (weakly), among all its connections. Only pass-1
//     membership counts, so aggregates grow by one layer at most.
//   - Pass 3: a node still free (for a symmetric strength graph only a
//     weakly coupled node none of whose neighbours is in a pass-1 aggregate)
//     becomes the root of a new aggregate with its free strong neighbours.
//
// Weakly coupled nodes are kept in the coarse space because their error is
// not necessarily reduced by smoothing alone: θ bounds each connection,
// not their sum. Only decoupled rows, which the smoother solves exactly,
// are left out. Every pass is linear in the number of stored entries.
// The scratch arrays (agg among them) are those of ws, reused.
func aggregate(a *sparse.CSR, strong []bool, ws *workspace) (agg []int32, nagg int) {
	n := a.Rows
	rowPtr, col, val := a.RowPtr, a.Col, a.Val
	ws.agg, ws.hasStrong, ws.join = resize(ws.agg, n), resize(ws.hasStrong, n), resize(ws.join, n)
	agg, hasStrong, join := ws.agg, ws.hasStrong, ws.join
	chunks(n, rowPtr, func(_, lo, hi int) {
		for i := lo; i < hi; i++ {
			agg[i] = isolated
			hasStrong[i] = false
			for k := rowPtr[i]; k < rowPtr[i+1]; k++ {
				if strong[k] {
					hasStrong[i] = true
					agg[i] = free
					break
				}
				if int(col[k]) != i && val[k] != 0 {
					agg[i] = free
				}
			}
		}
	})
	// Pass 1: roots whose strong neighbourhood is free.
	c := int32(0)
	for i := range n {
		if agg[i] != free || !hasStrong[i] {
			continue
		}
		ok := true
		for k := rowPtr[i]; k < rowPtr[i+1]; k++ {
			if strong[k] && agg[col[k]] != free {
				ok = false
				break
			}
		}
		if !ok {
			continue
		}
		agg[i] = c
		for k := rowPtr[i]; k < rowPtr[i+1]; k++ {
			if strong[k] {
				agg[col[k]] = c
			}
		}
		c++
	}
	// Pass 2: attach the remaining nodes to a pass-1 aggregate. The
	// choices are made in parallel and stored in join, then applied, so
	// that only pass-1 members count.
	chunks(n, rowPtr, func(_, lo, hi int) {
		for i := lo; i < hi; i++ {
			join[i] = -1
			if agg[i] != free {
				continue
			}
			best, bestV := int32(-1), 0.0
			for k := rowPtr[i]; k < rowPtr[i+1]; k++ {
				if !strong[k] && (hasStrong[i] || int(col[k]) == i) {
					continue
				}
				if g := agg[col[k]]; g >= 0 {
					if v := math.Abs(val[k]); v > bestV {
						best, bestV = g, v
					}
				}
			}
			join[i] = best
		}
	})
	for i, g := range join {
		if g >= 0 {
			agg[i] = g
		}
	}
	// Pass 3: new aggregates of whatever is left.
	for i := range n {
		if agg[i] != free {
			continue
		}
		agg[i] = c
		for k := rowPtr[i]; k < rowPtr[i+1]; k++ {
			if strong[k] && agg[col[k]] == free {
				agg[col[k]] = c
			}
		}
		c++
	}
	return agg, int(c)
}
