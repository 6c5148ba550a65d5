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
		d := a[j*n+j]
		for k := range j {
			d -= a[j*n+k] * a[j*n+k]
		}
		if !(d > tol*dmax) {
			return false
		}
		inv := 1 / math.Sqrt(d)
		a[j*n+j] = inv
		for i := j + 1; i < n; i++ {
			s := a[i*n+j]
			for k := range j {
				s -= a[i*n+k] * a[j*n+k]
			}
			a[i*n+j] = s * inv
		}
	}
	return true
}

// cholSolve solves L Lᵀ x = b with the factor from cholesky; x may be b.
func cholSolve(a []float64, n int, b, x []float64) {
	for i := range n {
		s := b[i]
		for k := range i {
			s -= a[i*n+k] * x[k]
		}
		x[i] = s * a[i*n+i]
	}
	for i := n - 1; i >= 0; i-- {
		s := x[i]
		for k := i + 1; k < n; k++ {
			s -= a[k*n+i] * x[k]
		}
		x[i] = s * a[i*n+i]
	}
}
