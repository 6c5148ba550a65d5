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
// goroutines; each row's results are independent of the split.
func strength(a *sparse.CSR, diag []float64, theta float64) connections {
	c := connections{strong: make([]bool, a.NNZ()), diagF: make([]float64, a.Rows)}
	t2 := theta * theta
	gersh := make([]float64, max(1, runtime.GOMAXPROCS(0)))
	chunks(a.Rows, func(ch, lo, hi int) {
		g := 0.0
		for i := lo; i < hi; i++ {
			di := t2 * diag[i]
			lump, abs := 0.0, 0.0
			for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
				j := a.Col[k]
				v := a.Val[k]
				s := int(j) != i && v*v >= di*diag[j] && v != 0
				c.strong[k] = s
				switch {
				case s:
					abs += math.Abs(v)
				case int(j) != i:
					lump += v
				}
			}
			c.diagF[i] = diag[i] + lump
			g = max(g, (abs+math.Abs(c.diagF[i]))/diag[i])
		}
		gersh[ch] = g
	})
	c.gershgorin = slices.Max(gersh)
	return c
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
func aggregate(a *sparse.CSR, strong []bool) (agg []int32, nagg int) {
	n := a.Rows
	agg = make([]int32, n)
	hasStrong := make([]bool, n)
	for i := range n {
		agg[i] = isolated
		for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
			if strong[k] {
				hasStrong[i] = true
				agg[i] = free
				break
			}
			if int(a.Col[k]) != i && a.Val[k] != 0 {
				agg[i] = free
			}
		}
	}
	// Pass 1: roots whose strong neighbourhood is free.
	c := int32(0)
	for i := range n {
		if agg[i] != free || !hasStrong[i] {
			continue
		}
		ok := true
		for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
			if strong[k] && agg[a.Col[k]] != free {
				ok = false
				break
			}
		}
		if !ok {
			continue
		}
		agg[i] = c
		for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
			if strong[k] {
				agg[a.Col[k]] = c
			}
		}
		c++
	}
	// Pass 2: attach the remaining nodes to a pass-1 aggregate. The
	// assignments are collected first so that only pass-1 members count.
	join := make([]int32, 0, n/4)
	who := make([]int32, 0, n/4)
	for i := range n {
		if agg[i] != free {
			continue
		}
		best, bestV := int32(-1), 0.0
		for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
			if !strong[k] && (hasStrong[i] || int(a.Col[k]) == i) {
				continue
			}
			if g := agg[a.Col[k]]; g >= 0 {
				if v := math.Abs(a.Val[k]); v > bestV {
					best, bestV = g, v
				}
			}
		}
		if best >= 0 {
			who = append(who, int32(i))
			join = append(join, best)
		}
	}
	for q, i := range who {
		agg[i] = join[q]
	}
	// Pass 3: new aggregates of whatever is left.
	for i := range n {
		if agg[i] != free {
			continue
		}
		agg[i] = c
		for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
			if strong[k] && agg[a.Col[k]] == free {
				agg[a.Col[k]] = c
			}
		}
		c++
	}
	return agg, int(c)
}
