package estimate

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// luFactor and luSolve solve what gonum's LU solves, on random systems and
// on saddle-point systems with a zero block (which need the pivoting), and
// luFactor reports a singular matrix.
func TestLUSmallAgainstGonum(t *testing.T) {
	t.Parallel()
	const tol = 1e-11 // rounding, relative to max |x|; the systems have condition numbers up to about 1e3
	r := rand.New(rand.NewPCG(14, 2))
	for _, c := range []struct {
		name   string
		n, sad int // order, and the order of the zero block at the end
		nrhs   int
	}{
		{"one", 1, 0, 1}, {"random 7", 7, 0, 3}, {"random 30", 30, 0, 1},
		{"saddle 11 (6 + 5)", 11, 5, 8}, {"saddle 26 (19 + 7)", 26, 7, 1},
	} {
		n := c.n
		a := make([]float64, n*n)
		nb := n - c.sad
		for i := range n {
			for j := range n {
				switch {
				case i >= nb && j >= nb:
				case i < nb && j < nb:
					a[i*n+j] = r.Float64() - 0.5
					if i == j {
						a[i*n+j] += float64(n)
					}
				default:
					a[i*n+j] = r.Float64() - 0.5
				}
			}
		}
		b := make([]float64, n*c.nrhs)
		for i := range b {
			b[i] = r.NormFloat64()
		}
		var want mat.Dense
		if err := want.Solve(mat.NewDense(n, n, append([]float64(nil), a...)), mat.NewDense(n, c.nrhs, append([]float64(nil), b...))); err != nil {
			t.Fatalf("%s: gonum: %v", c.name, err)
		}
		piv := make([]int, n)
		if !luFactor(a, n, piv) {
			t.Fatalf("%s: reported singular", c.name)
		}
		luSolve(a, n, piv, b, c.nrhs)
		scale := mat.Norm(&want, math.Inf(1))
		for i := range n {
			for k := range c.nrhs {
				if d := math.Abs(b[i*c.nrhs+k] - want.At(i, k)); d > tol*scale {
					t.Errorf("%s: x[%d][%d] = %.17g, gonum %.17g", c.name, i, k, b[i*c.nrhs+k], want.At(i, k))
				}
			}
		}
	}
	sing := []float64{1, 2, 3, 2, 4, 6, 0, 1, 1} // second row twice the first
	if luFactor(sing, 3, make([]int, 3)) {
		t.Error("a singular matrix was factorised")
	}
}

// The reference tables of the P2 path against closed forms: ∫_T̂ div̂ φ̂_i
// is the flux of φ̂_i through ∂T̂ (Gauss), which the DOFs make 1 for the
// moment j = 0 of each edge and 0 for the others; ∫_T λ_i q̂_m / |T| is
// 2 α!β!γ!/(α+β+γ+2)! for λ_0^α λ_1^β λ_2^γ (classical closed form); the
// mass tables are symmetric, and the DOFs of λ_m e_c sum over m to those
// of e_c, which has zero higher moments on the edges.
func TestRT2Reference(t *testing.T) {
	t.Parallel()
	const tol = 1e-13 // rounding of tables of order one
	ref := rt2Ref()
	for i := range 15 {
		want := 0.0
		if i < 9 && i%3 == 0 {
			want = 1
		}
		if d := math.Abs(ref.div[0][i] - want); d > tol {
			t.Errorf("∫ div φ̂_%d = %.17g, want %g", i, ref.div[0][i], want)
		}
	}
	fact := func(k int) float64 { return math.Gamma(float64(k) + 1) }
	pows := [6][2]int{{0, 0}, {1, 0}, {0, 1}, {2, 0}, {1, 1}, {0, 2}} // q̂_m = x̂^a ŷ^b, x̂ = λ_1, ŷ = λ_2
	for i := range 3 {
		for m, p := range pows {
			e := [3]int{0, p[0], p[1]}
			e[i]++
			want := 2 * fact(e[0]) * fact(e[1]) * fact(e[2]) / fact(e[0]+e[1]+e[2]+2)
			if d := math.Abs(ref.lamq[i][m] - want); d > tol {
				t.Errorf("∫ λ_%d q̂_%d / |T| = %.17g, want %.17g", i, m, ref.lamq[i][m], want)
			}
		}
	}
	for kl := range 3 {
		for i := range 15 {
			for j := range i {
				if d := math.Abs(ref.mass[kl][i][j] - ref.mass[kl][j][i]); d > tol {
					t.Errorf("mass table %d not symmetric at (%d, %d)", kl, i, j)
				}
			}
		}
	}
	for c := range 2 {
		for i := range 9 {
			s := ref.ldof[0][c][i] + ref.ldof[1][c][i] + ref.ldof[2][c][i]
			if i%3 != 0 && math.Abs(s) > tol {
				t.Errorf("e_%d: moment %d of edge %d = %.3g, want 0", c, i%3, i/3, s)
			}
		}
	}
}
