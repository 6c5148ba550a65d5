package amg

import (
	"cmp"
	"math"
	"runtime"
	"slices"

	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// powerIterations is the number of steps of the power method used to
// estimate the largest eigenvalue of D⁻¹A_F (for ω) and of D⁻¹A (for the
// Chebyshev smoother). The Rayleigh quotient is a lower bound of λ_max;
// see the package documentation for the measurements behind six.
const powerIterations = 6

// powerBlock is the number of rows of a block of the power method: the
// inner products are summed block by block, each block by one goroutine,
// and the block sums in block order, so that the estimate does not depend
// on how the blocks are split over goroutines.
const powerBlock = 4096

// powerRho estimates the largest eigenvalue of D⁻¹M, for the symmetric
// positive semi-definite matrix M with the structure of a and the values
// val, and the positive diagonal d = diag with reciprocals invDiag, by
// iters steps of the power method v ← D⁻¹M v started from a fixed
// pseudo-random vector; it returns the last Rayleigh quotient
// (v, M v)/(v, D v), a lower bound that converges to λ_max. Each step is
// one pass over the matrix and the vectors, fused, split over goroutines
// by blocks of powerBlock rows (see powerBlock), so the estimate is
// deterministic. Its vectors are those of ws, reused (a new workspace if
// ws is nil).
func powerRho(ws *workspace, a *sparse.CSR, val, diag, invDiag []float64, iters int) float64 {
	n := len(diag)
	if n == 0 {
		return 0
	}
	if ws == nil {
		ws = new(workspace)
	}
	ws.pv, ws.pw = resize(ws.pv, n), resize(ws.pw, n)
	v, w := ws.pv, ws.pw
	seed := uint64(0x9E3779B97F4A7C15)
	for i := range v {
		// xorshift64*: a fixed pseudo-random start rich in every mode.
		seed ^= seed >> 12
		seed ^= seed << 25
		seed ^= seed >> 27
		v[i] = float64(seed*2685821657736338717>>11)/(1<<53) - 0.5
	}
	nb := (n + powerBlock - 1) / powerBlock
	ws.psums = resize(ws.psums, nb)
	sums := ws.psums // per block: (v, M v), (M v, D⁻¹ M v)
	nw := max(1, min(runtime.GOMAXPROCS(0), n/setupGrain, nb))
	// The blocks of each goroutine, balanced by entries.
	blockPtr := make([]int32, nb+1)
	for blk := range nb + 1 {
		blockPtr[blk] = a.RowPtr[min(n, blk*powerBlock)]
	}
	bounds := parallel.ByWeight(nil, nw, blockPtr)
	vdv := 0.0 // (v, D v), sequential (once)
	for i, d := range diag {
		vdv += v[i] * d * v[i]
	}
	lambda := 0.0
	for range iters {
		// One pass: w ← D⁻¹ M v, (v, M v), and (w, D w) = (Mv, D⁻¹ M v),
		// which is (v, D v) of the next step. The Rayleigh quotient does
		// not depend on the scale of v, so v is only rescaled to keep it
		// far from overflow.
		parallel.Run(nw, func(c int) {
			for blk := bounds[c]; blk < bounds[c+1]; blk++ {
				lo, hi := blk*powerBlock, min(n, (blk+1)*powerBlock)
				sums[blk] = powerStep(a.RowPtr[lo:hi+1], a.Col, val, invDiag[lo:hi], v, w[lo:hi], v[lo:hi])
			}
		})
		vmv, nrm := 0.0, 0.0
		for _, s := range sums {
			vmv += s[0]
			nrm += s[1]
		}
		if !(vdv > 0) || !(nrm > 0) {
			return lambda
		}
		lambda = vmv / vdv
		vdv = nrm
		if nrm > 1e200 || nrm < 1e-200 {
			s := 1 / math.Sqrt(nrm)
			for i := range w {
				w[i] *= s
			}
			vdv = 1
		}
		v, w = w, v
	}
	return lambda
}

// powerStep is the pass of powerRho over one block of rows: with rp the
// block's row offsets, it sets ws = D⁻¹ M v for the rows of the block (vs
// and invDiag being the block's part of v and of D⁻¹) and returns
// ((vs, M v), (M v, D⁻¹ M v)) summed over the block.
func powerStep(rp, col []int32, val, invDiag, v, ws, vs []float64) [2]float64 {
	vmv, nrm := 0.0, 0.0
	ws, vs = ws[:len(invDiag)], vs[:len(invDiag)]
	rp = rp[:len(invDiag)+1]
	for i, inv := range invDiag {
		cs := col[rp[i]:rp[i+1]]
		vals := val[rp[i]:rp[i+1]]
		vals = vals[:len(cs)]
		s := 0.0
		for q, j := range cs {
			s += vals[q] * v[j]
		}
		vmv += vs[i] * s
		wi := s * inv
		ws[i] = wi
		nrm += s * wi
	}
	return [2]float64{vmv, nrm}
}

// filteredRho returns the estimate ρ of the spectral radius of D⁻¹A_F
// used for the prolongator: the power-method estimate (powerRho), or the
// Gershgorin bound if that is smaller, or if the power method fails.
func filteredRho(ws *workspace, a *sparse.CSR, diag, invDiag []float64, c *connections) float64 {
	rho := c.gershgorin
	if p := powerRho(ws, a, c.valF, diag, invDiag, powerIterations); p > 0 && p < rho {
		rho = p
	}
	return rho
}

// prolongator returns the smoothed prolongator
//
//	P = (I − ω D⁻¹ A_F) P̂,   ω = 4 / (3 ρ),
//
// with D = diag(a), A_F the filtered matrix, P̂ the tentative prolongator of
// the aggregation agg (P̂_{i,agg[i]} = 1: the constants on each aggregate,
// the near null space of a scalar diffusion operator; rows of isolated
// nodes are empty) and ρ the estimate of the spectral radius of D⁻¹A_F of
// filteredRho.
//
// Row i of P is formed directly from row i of a: the term of entry (i, j),
// j = i or j strong, goes to column agg[j] with the value
// δ_ij − ω a^F_ij / a_ii; terms for the same aggregate are summed in
// column order of a. Rows are computed in parallel, each independently of
// the split, and written straight into the result: dst, with its arrays
// reused (a new matrix if dst is nil).
func prolongator(dst, a *sparse.CSR, diag []float64, c *connections, agg []int32, nagg int, rho float64) (*sparse.CSR, error) {
	omega := 0.0
	if rho > 0 {
		omega = 4 / (3 * rho)
	}
	// row writes the columns and values of row i of P, unsorted, into cols
	// and vals, which must be long enough, and returns their number.
	row := func(i int, cols []int32, vals []float64) int {
		n := 0
		w := omega / diag[i]
		for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
			j := int(a.Col[k])
			var v float64
			switch {
			case j == i:
				v = 1 - w*c.diagF[i]
			case c.strong[k]:
				v = -w * c.valF[k]
			default:
				continue
			}
			g := agg[j]
			if g < 0 {
				continue
			}
			q := 0
			for q < n && cols[q] != g {
				q++
			}
			if q == n {
				cols[q], vals[q] = g, v
				n++
			} else {
				vals[q] += v
			}
		}
		return n
	}
	maxRow := 0
	for i := range a.Rows {
		maxRow = max(maxRow, int(a.RowPtr[i+1]-a.RowPtr[i]))
	}
	count := func(_, lo, hi int, rowLen []int32) {
		cols, vals := make([]int32, maxRow), make([]float64, maxRow)
		for i := lo; i < hi; i++ {
			rowLen[i] = int32(row(i, cols, vals))
		}
	}
	put := func(_, lo, hi int, p *sparse.CSR) {
		var buf []colVal
		for i := lo; i < hi; i++ {
			s, e := p.RowPtr[i], p.RowPtr[i+1]
			row(i, p.Col[s:e], p.Val[s:e])
			buf = sortPairs(p.Col[s:e], p.Val[s:e], buf)
		}
	}
	return fill(dst, a.Rows, nagg, a.RowPtr, count, put)
}

// colVal is a column index with its value.
type colVal struct {
	col int32
	val float64
}

// sortPairs sorts cols ascending, permuting vals alike, through the
// scratch buf, which it returns (grown if needed) for reuse. The columns
// must be distinct.
func sortPairs(cols []int32, vals []float64, buf []colVal) []colVal {
	buf = buf[:0]
	for j, c := range cols {
		buf = append(buf, colVal{c, vals[j]})
	}
	slices.SortFunc(buf, func(x, y colVal) int { return cmp.Compare(x.col, y.col) })
	for j, p := range buf {
		cols[j], vals[j] = p.col, p.val
	}
	return buf
}
