package sparse

import (
	"math"
	"math/rand/v2"
	"testing"
)

// newRand returns the fixed-seed generator all tests use.
func newRand() *rand.Rand { return rand.New(rand.NewPCG(1, 1)) }

// laplacian2D returns the 5-point finite difference Laplacian (4 on the
// diagonal, -1 for each grid neighbour) on an nx×ny grid with Dirichlet
// boundary, assembled through FromTriplets.
func laplacian2D(tb testing.TB, nx, ny int) *CSR {
	tb.Helper()
	n := nx * ny
	ti := make([]int32, 0, 5*n)
	tj := make([]int32, 0, 5*n)
	tv := make([]float64, 0, 5*n)
	add := func(i, j int, v float64) {
		ti = append(ti, int32(i))
		tj = append(tj, int32(j))
		tv = append(tv, v)
	}
	for y := range ny {
		for x := range nx {
			k := y*nx + x
			add(k, k, 4)
			if x > 0 {
				add(k, k-1, -1)
			}
			if x < nx-1 {
				add(k, k+1, -1)
			}
			if y > 0 {
				add(k, k-nx, -1)
			}
			if y < ny-1 {
				add(k, k+nx, -1)
			}
		}
	}
	m, err := FromTriplets(n, n, ti, tj, tv)
	if err != nil {
		tb.Fatal(err)
	}
	return m
}

// randomTriplets returns about density*rows*cols random triplets with
// values in [-1, 1), including some duplicates.
func randomTriplets(rnd *rand.Rand, rows, cols int, density float64) (ti, tj []int32, tv []float64) {
	k := int(density * float64(rows*cols))
	for range k {
		ti = append(ti, int32(rnd.IntN(rows)))
		tj = append(tj, int32(rnd.IntN(cols)))
		tv = append(tv, 2*rnd.Float64()-1)
	}
	return ti, tj, tv
}

// randomSPD returns A = BᵀB + shift·I for a random sparse n×n B, built as
// triplets: for each row of B, every pair of its entries contributes to A.
func randomSPD(tb testing.TB, rnd *rand.Rand, n int, density, shift float64) *CSR {
	tb.Helper()
	bi, bj, bv := randomTriplets(rnd, n, n, density)
	b, err := FromTriplets(n, n, bi, bj, bv)
	if err != nil {
		tb.Fatal(err)
	}
	var ti, tj []int32
	var tv []float64
	for r := range b.Rows {
		lo, hi := b.RowPtr[r], b.RowPtr[r+1]
		for p := lo; p < hi; p++ {
			for q := lo; q < hi; q++ {
				ti = append(ti, b.Col[p])
				tj = append(tj, b.Col[q])
				tv = append(tv, b.Val[p]*b.Val[q])
			}
		}
	}
	for i := range n {
		ti = append(ti, int32(i))
		tj = append(tj, int32(i))
		tv = append(tv, shift)
	}
	a, err := FromTriplets(n, n, ti, tj, tv)
	if err != nil {
		tb.Fatal(err)
	}
	return a
}

// relDiff returns ||a - b||₂ / ||b||₂ (or ||a - b||₂ if b = 0).
func relDiff(a, b []float64) float64 {
	var d, n float64
	for i := range a {
		d += (a[i] - b[i]) * (a[i] - b[i])
		n += b[i] * b[i]
	}
	if n == 0 {
		return math.Sqrt(d)
	}
	return math.Sqrt(d / n)
}

// randomVec returns a vector of n values in [-1, 1).
func randomVec(rnd *rand.Rand, n int) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = 2*rnd.Float64() - 1
	}
	return v
}

// mustPanic fails the test unless f panics.
func mustPanic(t *testing.T, name string, f func()) {
	t.Helper()
	defer func() {
		if recover() == nil {
			t.Errorf("%s: no panic", name)
		}
	}()
	f()
}
