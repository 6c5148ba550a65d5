package sparse

import "math"

// unitRoundoff is u = 2⁻⁵³, the unit roundoff of float64 arithmetic.
const unitRoundoff = 0x1p-53

// roundingLevel returns
//
//	φ_k = ‖ γ_{mᵢ+1+k} (|b| + |A| |x|)ᵢ ‖₂,   γ_j = j u / (1 − j u),
//
// with mᵢ the number of entries stored in row i of a: for k = 0 the bound
// on the rounding error of the computed residual fl(b − A x) in each
// component (Higham 2002, §3.5: fl(A x) = (A + ΔA) x with |ΔA| ≤ γ_m |A|,
// and one subtraction more), and for k > 0 also the drift of the true
// residual from the recursively updated one over k iterations, near the
// solution where the updates are small: each rounded update
// x_{j+1} = fl(x_j + α_j p_j) moves b − A x_{j+1} by up to u |A| |x_{j+1}|
// (Greenbaum 1997). See CGSettings.Tol. It reports ok = false for an
// operator that is not a *CSR, whose entries CG cannot see. The rows are
// visited in order on one goroutine, so φ does not depend on GOMAXPROCS.
func roundingLevel(a Operator, b, x []float64, k int) (phi float64, ok bool) {
	m, ok := a.(*CSR)
	if !ok {
		return 0, false
	}
	// Scaled sum of squares (as the reference BLAS dnrm2 does), so that φ
	// overflows only if it is itself beyond the range of float64.
	scale, ssq := 0.0, 1.0
	for i := range m.Rows {
		lo, hi := m.RowPtr[i], m.RowPtr[i+1]
		w := math.Abs(b[i])
		for k := lo; k < hi; k++ {
			w += math.Abs(m.Val[k] * x[m.Col[k]])
		}
		j := float64(int(hi-lo)+1+k) * unitRoundoff
		g := j / (1 - j) * w
		if g == 0 {
			continue
		}
		if scale < g {
			ssq = 1 + ssq*(scale/g)*(scale/g)
			scale = g
		} else {
			ssq += (g / scale) * (g / scale)
		}
	}
	return scale * math.Sqrt(ssq), true
}
