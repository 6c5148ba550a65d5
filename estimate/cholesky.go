package estimate

import "math"

// cholesky overwrites the lower triangle of the symmetric n×n matrix a
// (row major, stride n) with its Cholesky factor L, a = L Lᵀ, storing the
// reciprocals 1/L_jj on the diagonal so that cholSolve does not divide,
// and reports whether a is safely positive definite: every pivot above tol
// times the largest diagonal entry of a (tol = 0: every pivot positive).
// It costs n³/6 multiply-adds and n square roots and divisions.
func cholesky(a []float64, n int, tol float64) bool {
	dmax := 0.0
	for i := range n {
		dmax = max(dmax, a[i*n+i])
	}
	for j := range n {
		rj := a[j*n : j*n+j+1 : j*n+j+1] // row j up to the diagonal
		d := rj[j]
		for _, v := range rj[:j] {
			d -= v * v
		}
		if !(d > tol*dmax) {
			return false
		}
		inv := 1 / math.Sqrt(d)
		rj[j] = inv
		for i := j + 1; i < n; i++ {
			ri := a[i*n : i*n+j+1 : i*n+j+1]
			s := ri[j]
			for k, v := range rj[:j] {
				s -= ri[k] * v
			}
			ri[j] = s * inv
		}
	}
	return true
}

// cholSolve solves L Lᵀ x = b with the factor from cholesky; x may be b.
func cholSolve(a []float64, n int, b, x []float64) {
	b, x = b[:n], x[:n]
	for i := range n {
		ri := a[i*n : i*n+i+1 : i*n+i+1]
		s := b[i]
		for k, v := range ri[:i] {
			s -= v * x[k]
		}
		x[i] = s * ri[i]
	}
	for i := n - 1; i >= 0; i-- {
		s := x[i]
		for k := i + 1; k < n; k++ {
			s -= a[k*n+i] * x[k]
		}
		x[i] = s * a[i*n+i]
	}
}
