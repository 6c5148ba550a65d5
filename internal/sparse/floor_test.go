package sparse

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// stiffness1D returns the P1 stiffness matrix and load vector of
// −(a u')' = 1 on n+1 elements with u = 0 at both ends (n unknowns): the
// element lengths fall geometrically from 1 to grade, and a is 1 on even
// and contrast on odd elements. Its condition number grows with both.
func stiffness1D(tb testing.TB, n int, grade, contrast float64) (*CSR, []float64) {
	tb.Helper()
	var ti, tj []int32
	var tv []float64
	b := make([]float64, n)
	for e := range n + 1 {
		h := math.Pow(grade, float64(e)/float64(n))
		a := 1.0
		if e%2 == 1 {
			a = contrast
		}
		k := a / h
		l, r := e-1, e
		if l >= 0 {
			ti, tj, tv = append(ti, int32(l)), append(tj, int32(l)), append(tv, k)
			b[l] += h / 2
		}
		if r < n {
			ti, tj, tv = append(ti, int32(r)), append(tj, int32(r)), append(tv, k)
			b[r] += h / 2
		}
		if l >= 0 && r < n {
			ti, tj, tv = append(ti, int32(l), int32(r)), append(tj, int32(r), int32(l)), append(tv, -k, -k)
		}
	}
	m, err := FromTriplets(n, n, ti, tj, tv)
	if err != nil {
		tb.Fatal(err)
	}
	return m, b
}

// roundingLevel against its definition on a 2×2 matrix: for
// A = [2 −1; −1 2], x = (1, 2), b = (0, 3), |b| + |A||x| = (4, 8) and each
// row holds 2 entries, so φ_k = γ_{3+k} √80.
func TestRoundingLevel(t *testing.T) {
	t.Parallel()
	a, err := FromTriplets(2, 2, []int32{0, 0, 1, 1}, []int32{0, 1, 0, 1}, []float64{2, -1, -1, 2})
	if err != nil {
		t.Fatal(err)
	}
	const tol = 1e-15 // arithmetic check, relative
	for _, k := range []int{0, 5} {
		j := float64(3+k) * 0x1p-53
		want := j / (1 - j) * math.Sqrt(80)
		got, ok := roundingLevel(a, []float64{0, 3}, []float64{1, 2}, k)
		if !ok || math.Abs(got-want) > tol*want {
			t.Errorf("k = %d: φ = %g, %v, want %g", k, got, ok, want)
		}
	}
	if _, ok := roundingLevel(&noisyOperator{a: a}, []float64{0, 3}, []float64{1, 2}, 0); ok {
		t.Error("an operator other than *CSR gave a rounding level")
	}
}

// Systems whose rounding floor lies above the default tolerance: CG with
// the default settings stops at the floor without an error, and what it
// returns is as good as a direct solve. Seven runs, each checked against
// gonum (reference library): its Cholesky solution, whose residual (a
// backward stable method: Higham 2002, Theorem 10.4, from memory) is the
// attainable level, and its SVD, for κ₂(A) and ‖A⁻¹‖₂.
//
//   - The residual is at most twice that of the Cholesky solution (the
//     ratios were 0.60 to 1.17; the band is ours).
//   - ‖x − x_chol‖₂ ≤ ‖A⁻¹‖₂ (‖b − A x‖₂ + ‖b − A x_chol‖₂), since
//     A (x − x_chol) is the difference of the residuals (a theorem, with
//     1% for the rounding of the residuals themselves).
//   - Floor ≤ γ_{m+1+k} (1 + √m κ₂(A)) for m = 3 entries per row and k at
//     most the iterations (the bound of CGSettings.Tol).
func TestCGFloor(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name            string
		n               int
		grade, contrast float64
		floor           bool // whether the floor lies above the default Tol (from the run)
	}{
		{"graded", 200, 1e-6, 1, false},
		{"graded, contrast 1e3", 300, 1e-6, 1e3, false},
		{"contrast 1e8", 200, 1, 1e8, true},
		{"graded, contrast 1e8", 200, 1e-6, 1e8, true},
		{"graded 1e-8, contrast 1e4", 400, 1e-8, 1e4, true},
		{"graded 1e-4, contrast 1e6", 100, 1e-4, 1e6, true},
		{"graded 1e-3, contrast 1e4", 200, 1e-3, 1e4, true},
	} {
		a, b := stiffness1D(t, tc.n, tc.grade, tc.contrast)
		var svd mat.SVD
		if !svd.Factorize(a.Dense(), mat.SVDNone) {
			t.Fatal("gonum SVD failed")
		}
		sv := svd.Values(nil)
		cond, invNorm := sv[0]/sv[len(sv)-1], 1/sv[len(sv)-1]
		want := choleskySolve(t, a, b)
		r := make([]float64, tc.n)
		q := make([]float64, tc.n)
		bnorm := math.Sqrt(dot(b, b))
		rChol := math.Sqrt(trueResidual(a, b, want, r, q))

		pre, err := NewJacobi(a)
		if err != nil {
			t.Fatal(err)
		}
		x := make([]float64, tc.n)
		res, err := CG(a, b, x, pre, CGSettings{})
		if err != nil || !res.Converged || res.AtFloor != tc.floor {
			t.Errorf("%s: %+v, %v", tc.name, res, err)
			continue
		}
		rx := math.Sqrt(trueResidual(a, b, x, r, q))
		t.Logf("%s: κ₂ %.3g, %d iterations, residual %.3g (Cholesky %.3g), floor %.3g", tc.name, cond, res.Iterations, res.Residual, rChol/bnorm, res.Floor)
		if math.Abs(rx/bnorm-res.Residual) > 1e-3*res.Residual {
			t.Errorf("%s: Residual %g, true %g", tc.name, res.Residual, rx/bnorm)
		}
		if !tc.floor {
			if res.Residual > DefaultTol {
				t.Errorf("%s: residual %g above Tol", tc.name, res.Residual)
			}
			continue
		}
		if res.Residual > 2*rChol/bnorm {
			t.Errorf("%s: residual %g, more than twice the Cholesky solution's %g", tc.name, res.Residual, rChol/bnorm)
		}
		var d2, w2 float64
		for i := range x {
			d2 += (x[i] - want[i]) * (x[i] - want[i])
			w2 += want[i] * want[i]
		}
		if bound := 1.01 * invNorm * (rx + rChol); math.Sqrt(d2) > bound {
			t.Errorf("%s: ‖x − x_chol‖ = %g > ‖A⁻¹‖(‖r‖ + ‖r_chol‖) = %g", tc.name, math.Sqrt(d2), bound)
		}
		const m = 3
		j := float64(m+1+res.Iterations) * 0x1p-53
		if bound := j / (1 - j) * (1 + math.Sqrt(m)*cond); !(res.Floor > 0 && res.Floor <= bound && res.Residual <= res.Floor) {
			t.Errorf("%s: residual %g, floor %g, bound γ(1 + √m κ) = %g", tc.name, res.Residual, res.Floor, bound)
		}
	}
}

// noisyOperator is A x with its first entry perturbed by a relative 1e-6
// that changes from call to call: an inexact matrix-free product.
type noisyOperator struct {
	a     *CSR
	calls int
}

func (o *noisyOperator) Dims() (int, int) { return o.a.Dims() }

func (o *noisyOperator) MulVec(dst, x []float64) {
	o.a.MulVec(dst, x)
	o.calls++
	dst[0] *= 1 + 1e-6*math.Sin(float64(o.calls))
}

// driftingJacobi is Jacobi that also changes A[0][0] by a relative 1e-7
// at each application: an operator that does not stay fixed.
type driftingJacobi struct {
	a *CSR
	j *Jacobi
}

func (d driftingJacobi) Apply(dst, r []float64) {
	d.a.Val[0] *= 1 + 1e-7
	d.j.Apply(dst, r)
}

// Genuine non-convergence stays an error: an inconsistent singular system,
// an inexact operator and an operator that changes during the solve, whose
// residuals stagnate far above any rounding level.
func TestCGGenuineFailure(t *testing.T) {
	t.Parallel()
	// The 1D Laplacian with natural conditions at both ends is singular
	// (the constants); b has a component along them.
	const n = 50
	var ti, tj []int32
	var tv []float64
	for e := range int32(n - 1) {
		ti = append(ti, e, e+1, e, e+1)
		tj = append(tj, e, e+1, e+1, e)
		tv = append(tv, 1, 1, -1, -1)
	}
	sing, err := FromTriplets(n, n, ti, tj, tv)
	if err != nil {
		t.Fatal(err)
	}
	b := make([]float64, n)
	for i := range b {
		b[i] = 1 + math.Sin(float64(i))
	}
	pre, _ := NewJacobi(sing)
	res, err := CG(sing, b, make([]float64, n), pre, CGSettings{})
	if !errors.Is(err, ErrNotConverged) || res.Converged || res.AtFloor {
		t.Errorf("singular: %+v, %v", res, err)
	}

	lap := laplacian2D(t, 20, 20)
	rhs := randomVec(newRand(), lap.Rows)
	res, err = CG(&noisyOperator{a: lap}, rhs, make([]float64, lap.Rows), nil, CGSettings{})
	if !errors.Is(err, ErrNotConverged) || res.AtFloor || !strings.Contains(err.Error(), "stagnated") {
		t.Errorf("inexact operator: %+v, %v", res, err)
	}
	jac, _ := NewJacobi(lap)
	res, err = CG(lap, rhs, make([]float64, lap.Rows), driftingJacobi{lap, jac}, CGSettings{})
	if !errors.Is(err, ErrNotConverged) || res.AtFloor || !(res.Residual > 100*res.Floor) {
		t.Errorf("changing operator: %+v, %v", res, err)
	}
	t.Log(err)
}
