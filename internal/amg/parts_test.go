package amg

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// randomSparse returns a reproducible rows × cols matrix with about
// density·rows·cols stored entries, some of them explicit zeros.
func randomSparse(rows, cols int, density float64, seed uint64) *sparse.CSR {
	r := rand.New(rand.NewPCG(seed, 3))
	m := &sparse.CSR{Rows: rows, Cols: cols, RowPtr: make([]int32, rows+1)}
	for i := range rows {
		for j := range cols {
			if r.Float64() < density {
				v := 2*r.Float64() - 1
				if r.IntN(10) == 0 {
					v = 0
				}
				m.Col = append(m.Col, int32(j))
				m.Val = append(m.Val, v)
			}
		}
		m.RowPtr[i+1] = int32(len(m.Col))
	}
	return m
}

// denseEqual reports the largest difference between m and d, and fails if
// m is not a valid CSR.
func denseDiff(t *testing.T, m *sparse.CSR, d mat.Matrix) float64 {
	t.Helper()
	if err := m.Validate(); err != nil {
		t.Fatal(err)
	}
	var diff mat.Dense
	diff.Sub(m.Dense(), d)
	return mat.Norm(&diff, math.Inf(1))
}

// TestMul compares mul with gonum's dense product (the reference), and
// transpose with gonum's transpose.
func TestMul(t *testing.T) {
	for s, dims := range [][3]int{{1, 1, 1}, {7, 5, 9}, {40, 60, 30}, {300, 200, 250}} {
		a := randomSparse(dims[0], dims[1], 0.1, uint64(2*s))
		b := randomSparse(dims[1], dims[2], 0.1, uint64(2*s+1))
		c, err := mul(a, b)
		if err != nil {
			t.Fatal(err)
		}
		var want mat.Dense
		want.Mul(a.Dense(), b.Dense())
		if d := denseDiff(t, c, &want); d > 1e-13 {
			t.Errorf("%v: |a·b − gonum| = %g", dims, d)
		}
		if d := denseDiff(t, transpose(a), a.Dense().T()); d != 0 {
			t.Errorf("%v: |aᵀ − gonum| = %g", dims, d)
		}
	}
}

// TestSymmetrize checks that both symmetrisations give (a + aᵀ)/2, with
// gonum's dense arithmetic as the reference, and bit-for-bit symmetric
// results: the in-place one for a structurally symmetric a with rounding
// asymmetry, the general one for a structurally asymmetric a.
func TestSymmetrize(t *testing.T) {
	a := randomSparse(50, 50, 0.1, 5)
	structural := symmetrize(a) // symmetric pattern, values symmetric
	for k := range structural.Val {
		structural.Val[k] *= 1 + 1e-15*float64(k%3) // rounding-size asymmetry
	}
	for name, m := range map[string]*sparse.CSR{"asymmetric pattern": a, "symmetric pattern": structural} {
		var want mat.Dense
		want.Add(m.Dense(), m.Dense().T())
		want.Scale(0.5, &want)
		c := &sparse.CSR{Rows: m.Rows, Cols: m.Cols, RowPtr: m.RowPtr, Col: m.Col, Val: slices.Clone(m.Val)}
		inPlace := symmetrizeInPlace(c)
		if inPlace != (name == "symmetric pattern") {
			t.Errorf("%s: symmetrizeInPlace = %v", name, inPlace)
		}
		if !inPlace {
			c = symmetrize(c)
		}
		if d := denseDiff(t, c, &want); d > 1e-15 {
			t.Errorf("%s: |sym − gonum| = %g", name, d)
		}
		for i := range c.Rows {
			for k := c.RowPtr[i]; k < c.RowPtr[i+1]; k++ {
				if c.Val[k] != c.At(int(c.Col[k]), i) {
					t.Fatalf("%s: not symmetric at (%d,%d)", name, i, c.Col[k])
				}
			}
		}
	}
}

// laplace1D returns the 1D Laplacian tridiag(−1, 2, −1) of n nodes whose
// first and last rows and columns are replaced by identity rows, the
// eliminated entries kept as explicit zeros, as fem.Assemble does for
// Dirichlet nodes.
func laplace1D(n int) *sparse.CSR {
	m := &sparse.CSR{Rows: n, Cols: n, RowPtr: make([]int32, n+1)}
	for i := range n {
		for j := max(0, i-1); j <= min(n-1, i+1); j++ {
			v := -1.0
			switch {
			case i == j && (i == 0 || i == n-1):
				v = 1
			case i == j:
				v = 2
			case i == 0 || i == n-1 || j == 0 || j == n-1:
				v = 0
			}
			m.Col = append(m.Col, int32(j))
			m.Val = append(m.Val, v)
		}
		m.RowPtr[i+1] = int32(len(m.Col))
	}
	return m
}

// TestAggregate1D checks the greedy aggregation on the 1D Laplacian with
// Dirichlet ends against the result derived by hand from the three passes:
// node 1 is the first root ({1,2}), then every third node ({3,4,5},
// {6,7,8}, {9,10,11}); node 12, whose neighbour 11 is taken, joins the
// last aggregate in pass 2; the Dirichlet nodes 0 and 13 are isolated.
func TestAggregate1D(t *testing.T) {
	a := laplace1D(14)
	diag := a.Diagonal(nil)
	agg, nagg := aggregate(a, strength(a, diag, DefaultTheta).strong)
	want := []int32{isolated, 0, 0, 1, 1, 1, 2, 2, 2, 3, 3, 3, 3, isolated}
	if nagg != 4 || !slices.Equal(agg, want) {
		t.Errorf("agg = %v (%d), want %v (4)", agg, nagg, want)
	}
}

// TestCholesky compares the dense factorisation with gonum's Cholesky
// solve on a random SPD matrix, and checks the semi-definite case on the
// singular 1D Neumann Laplacian (null space: the constants): the solution
// of a consistent system satisfies A x = b, and the generalised inverse is
// symmetric.
func TestCholesky(t *testing.T) {
	n := 60
	r := randomSparse(n, n, 0.2, 9)
	var spd mat.SymDense
	spd.SymOuterK(1, r.Dense())
	for i := range n {
		spd.SetSym(i, i, spd.At(i, i)+1)
	}
	a := &sparse.CSR{Rows: n, Cols: n, RowPtr: make([]int32, n+1)}
	for i := range n {
		for j := range n {
			a.Col = append(a.Col, int32(j))
			a.Val = append(a.Val, spd.At(i, j))
		}
		a.RowPtr[i+1] = int32(len(a.Col))
	}
	c, err := factor(a)
	if err != nil {
		t.Fatal(err)
	}
	b := randomVector(n, 1)
	x := make([]float64, n)
	c.solve(x, b)
	var ch mat.Cholesky
	if !ch.Factorize(&spd) {
		t.Fatal("gonum: not SPD")
	}
	var want mat.VecDense
	if err := ch.SolveVecTo(&want, mat.NewVecDense(n, b)); err != nil {
		t.Fatal(err)
	}
	if e := maxRelDiff(x, want.RawVector().Data); e > 1e-12 {
		t.Errorf("SPD: differs from gonum by %g", e)
	}

	// Singular: the 1D Laplacian with natural boundary conditions.
	m := 40
	l := &sparse.CSR{Rows: m, Cols: m, RowPtr: make([]int32, m+1)}
	for i := range m {
		for j := max(0, i-1); j <= min(m-1, i+1); j++ {
			v := -1.0
			if i == j {
				v = 2
				if i == 0 || i == m-1 {
					v = 1
				}
			}
			l.Col = append(l.Col, int32(j))
			l.Val = append(l.Val, v)
		}
		l.RowPtr[i+1] = int32(len(l.Col))
	}
	c, err = factor(l)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Contains(c.null, true) {
		t.Fatal("singular matrix: no dropped pivot")
	}
	b, y := randomVector(m, 2), randomVector(m, 3)
	for _, v := range [][]float64{b, y} { // make consistent: zero sum
		s := 0.0
		for _, e := range v {
			s += e
		}
		for i := range v {
			v[i] -= s / float64(m)
		}
	}
	gb, gy, res := make([]float64, m), make([]float64, m), make([]float64, m)
	c.solve(gb, b)
	c.solve(gy, y)
	l.MulVec(res, gb)
	if e := maxRelDiff(res, b); e > 1e-12 {
		t.Errorf("singular: |A G b − b| = %g relative", e)
	}
	if d := math.Abs(dot(y, gb)-dot(gy, b)) / math.Sqrt(dot(gb, b)*dot(gy, y)); d > 1e-12 {
		t.Errorf("singular: G not symmetric, %g", d)
	}
}

// TestChebyshevPolynomial checks the Chebyshev smoother against the
// closed form of its error propagation: m steps on A x = 0 map an
// eigenvector v of D⁻¹A with eigenvalue λ to p(λ) v, where
//
//	p(λ) = T_m((θ − λ)/δ) / T_m(θ/δ),
//
// T_m the Chebyshev polynomial of the first kind, θ and δ the centre and
// half-width of the smoothing interval (Saad, Iterative Methods for Sparse
// Linear Systems, 2nd ed., §12.1.1). The matrix is tridiag(−c, 1, −c),
// whose eigenvectors sin(kπ(i+1)/(n+1)) and eigenvalues
// 1 − 2c cos(kπ/(n+1)) are classical; with unit diagonal D⁻¹A = A.
func TestChebyshevPolynomial(t *testing.T) {
	const n, c = 2100, 0.45 // more than maxDense: a smoother-only level
	a := &sparse.CSR{Rows: n, Cols: n, RowPtr: make([]int32, n+1)}
	for i := range n {
		for j := max(0, i-1); j <= min(n-1, i+1); j++ {
			v := -c
			if i == j {
				v = 1
			}
			a.Col = append(a.Col, int32(j))
			a.Val = append(a.Val, v)
		}
		a.RowPtr[i+1] = int32(len(a.Col))
	}
	cheb := func(m int, x float64) float64 {
		if math.Abs(x) <= 1 {
			return math.Cos(float64(m) * math.Acos(x))
		}
		return math.Copysign(1, x) * math.Cosh(float64(m)*math.Acosh(math.Abs(x))) * math.Pow(math.Copysign(1, x), float64(m-1))
	}
	for _, m := range []int{1, 2, 3, 5} {
		h, err := New(a, Settings{MaxLevels: 1, Smoother: Chebyshev, Smoothing: m})
		if err != nil {
			t.Fatal(err)
		}
		lv := &h.levels[0]
		if lv.chol != nil {
			t.Fatal("level is solved, not smoothed")
		}
		lo, hi := lv.lmax/chebyshevRatio, lv.lmax
		theta, delta := (hi+lo)/2, (hi-lo)/2
		zero := make([]float64, n)
		for _, k := range []int{1, 300, 1000, 1700, 2100} {
			x := make([]float64, n)
			for i := range x {
				x[i] = math.Sin(float64(k) * math.Pi * float64(i+1) / float64(n+1))
			}
			lambda := 1 - 2*c*math.Cos(float64(k)*math.Pi/float64(n+1))
			want := cheb(m, (theta-lambda)/delta) / cheb(m, theta/delta)
			x0 := slices.Clone(x)
			h.post(lv, x, zero)
			for i := range x {
				if math.Abs(x[i]-want*x0[i]) > 1e-12 {
					t.Fatalf("m = %d, k = %d: x[%d] = %g, want %g·%g", m, k, i, x[i], want, x0[i])
				}
			}
		}
	}
}

// randomVector returns a reproducible vector with entries uniform in
// [-1, 1).
func randomVector(n int, seed uint64) []float64 {
	r := rand.New(rand.NewPCG(seed, 7))
	v := make([]float64, n)
	for i := range v {
		v[i] = 2*r.Float64() - 1
	}
	return v
}

func dot(x, y []float64) float64 {
	s := 0.0
	for i := range x {
		s += x[i] * y[i]
	}
	return s
}

// maxRelDiff returns max|x − y| / max|y|.
func maxRelDiff(x, y []float64) float64 {
	d, m := 0.0, 0.0
	for i := range x {
		d = max(d, math.Abs(x[i]-y[i]))
		m = max(m, math.Abs(y[i]))
	}
	return d / m
}
