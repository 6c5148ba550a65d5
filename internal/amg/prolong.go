package amg

import (
	"math"

	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// filteredKernel computes w = A_F v for the filtered matrix A_F of a,
// without forming it: a^F_ij = a_ij for strong connections, a^F_ii =
// diagF_i, and zero elsewhere. A_F has the row sums of a, since the weak
// connections are lumped into its diagonal.
type filteredKernel struct {
	a    *sparse.CSR
	c    *connections
	v, w []float64
}

func (k *filteredKernel) rows(lo, hi int) {
	a, v, strong := k.a, k.v, k.c.strong
	for i := lo; i < hi; i++ {
		s := k.c.diagF[i] * v[i]
		for q := a.RowPtr[i]; q < a.RowPtr[i+1]; q++ {
			if strong[q] {
				s += a.Val[q] * v[a.Col[q]]
			}
		}
		k.w[i] = s
	}
}

// powerIterations is the number of steps of the power method used to
// estimate the largest eigenvalue of D⁻¹A_F (for ω) and of D⁻¹A (for the
// Chebyshev smoother). The Rayleigh quotient is a lower bound; six steps
// from a random start give about 90–95% of λ_max on the test matrices,
// and more steps did not reduce the CG iteration counts.
const powerIterations = 6

// powerRho estimates the largest eigenvalue of D⁻¹M, for a symmetric
// positive semi-definite M, given by mulVec(w, v) setting w = M v, and
// positive d = diag, by iters steps of the
// power method v ← D⁻¹M v started from a fixed pseudo-random vector; it
// returns the last Rayleigh quotient (v, M v)/(v, D v), a lower bound that
// converges to λ_max. Each step is one product, which must not depend on
// GOMAXPROCS, and one sequential pass over the vectors, so the estimate is
// deterministic.
func powerRho(mulVec func(w, v []float64), diag []float64, iters int) float64 {
	n := len(diag)
	if n == 0 {
		return 0
	}
	v := make([]float64, n)
	w := make([]float64, n)
	seed := uint64(0x9E3779B97F4A7C15)
	for i := range v {
		// xorshift64*: a fixed pseudo-random start rich in every mode.
		seed ^= seed >> 12
		seed ^= seed << 25
		seed ^= seed >> 27
		v[i] = float64(seed*2685821657736338717>>11)/(1<<53) - 0.5
	}
	lambda := 0.0
	diag = diag[:n]
	for range iters {
		mulVec(w, v)
		// One pass: the Rayleigh quotient of v, and w ← D⁻¹ M v with its
		// squared D-norm. The Rayleigh quotient does not depend on the
		// scale of v, so v is only rescaled to keep it far from overflow.
		vmv, vdv, nrm := 0.0, 0.0, 0.0
		for i, d := range diag {
			vi, wi := v[i], w[i]
			vmv += vi * wi
			vdv += vi * d * vi
			wi /= d
			w[i] = wi
			nrm += wi * d * wi
		}
		if !(vdv > 0) || !(nrm > 0) {
			return lambda
		}
		lambda = vmv / vdv
		if nrm > 1e200 || nrm < 1e-200 {
			s := 1 / math.Sqrt(nrm)
			for i := range w {
				w[i] *= s
			}
		}
		v, w = w, v
	}
	return lambda
}

// prolongator returns the smoothed prolongator
//
//	P = (I − ω D⁻¹ A_F) P̂,   ω = 4 / (3 ρ),
//
// with D = diag(a), A_F the filtered matrix, P̂ the tentative prolongator of
// the aggregation agg (P̂_{i,agg[i]} = 1: the constants on each aggregate,
// the near null space of a scalar diffusion operator; rows of isolated
// nodes are empty) and ρ the power-method estimate of the spectral radius
// of D⁻¹A_F (the Gershgorin bound if that is smaller, or if the power
// method fails). It returns P and ρ.
//
// Row i of P is formed directly from row i of a: the term of entry (i, j),
// j = i or j strong, goes to column agg[j] with the value
// δ_ij − ω a^F_ij / a_ii; terms for the same aggregate are summed in
// column order of a. Rows are computed in parallel, each independently of
// the split, and written straight into the result.
func prolongator(a *sparse.CSR, diag []float64, c *connections, agg []int32, nagg int) (*sparse.CSR, float64, error) {
	rho := c.gershgorin
	fk := &filteredKernel{a: a, c: c}
	var t team
	mv := func(w, v []float64) {
		fk.v, fk.w = v, w
		t.run(fk, a.Rows, a.RowPtr)
	}
	if p := powerRho(mv, diag, powerIterations); p > 0 && p < rho {
		rho = p
	}
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
				v = -w * a.Val[k]
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
	count := func(lo, hi int, rowLen []int32) {
		cols, vals := make([]int32, maxRow), make([]float64, maxRow)
		for i := lo; i < hi; i++ {
			rowLen[i] = int32(row(i, cols, vals))
		}
	}
	put := func(lo, hi int, p *sparse.CSR) {
		for i := lo; i < hi; i++ {
			s, e := p.RowPtr[i], p.RowPtr[i+1]
			row(i, p.Col[s:e], p.Val[s:e])
			sortPairs(p.Col[s:e], p.Val[s:e])
		}
	}
	p, err := fill(a.Rows, nagg, count, put)
	return p, rho, err
}

// sortPairs sorts the short slice cols ascending by insertion, permuting
// vals alike.
func sortPairs(cols []int32, vals []float64) {
	vals = vals[:len(cols)]
	for j := 1; j < len(cols); j++ {
		c, v := cols[j], vals[j]
		l := j
		for ; l > 0 && cols[l-1] > c; l-- {
			cols[l], vals[l] = cols[l-1], vals[l-1]
		}
		cols[l], vals[l] = c, v
	}
}
