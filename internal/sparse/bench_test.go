package sparse

import (
	"fmt"
	"math"
	"testing"
)

// sink keeps benchmark results alive.
var sink float64

// BenchmarkMulVec measures CSR.MulVec on the 5-point Laplacian with about
// 1e4, 1e5 and 1e6 rows and reports the time per row.
func BenchmarkMulVec(b *testing.B) {
	for _, n := range []int{1e4, 1e5, 1e6} {
		side := int(math.Round(math.Sqrt(float64(n))))
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			m := laplacian2D(b, side, side)
			x := randomVec(newRand(), m.Cols)
			y := make([]float64, m.Rows)
			b.SetBytes(int64(m.NNZ()*12 + m.Rows*(4+8+8)))
			b.ResetTimer()
			for range b.N {
				m.MulVec(y, x)
			}
			b.StopTimer()
			sink += y[0]
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(m.Rows), "ns/row")
		})
	}
}

// BenchmarkFromTriplets measures assembly of the 5-point Laplacian on a
// 1000×1000 grid from its 5e6 triplets.
func BenchmarkFromTriplets(b *testing.B) {
	m := laplacian2D(b, 1000, 1000)
	var ti, tj []int32
	var tv []float64
	for i := range m.Rows {
		for k := m.RowPtr[i]; k < m.RowPtr[i+1]; k++ {
			ti = append(ti, int32(i))
			tj = append(tj, m.Col[k])
			tv = append(tv, m.Val[k])
		}
	}
	b.ResetTimer()
	for range b.N {
		r, err := FromTriplets(m.Rows, m.Cols, ti, tj, tv)
		if err != nil {
			b.Fatal(err)
		}
		sink += r.Val[0]
	}
}

// BenchmarkCG measures a Jacobi-preconditioned solve of the 5-point
// Laplacian on a 300×300 grid to the default tolerance.
func BenchmarkCG(b *testing.B) {
	m := laplacian2D(b, 300, 300)
	pre, err := NewJacobi(m)
	if err != nil {
		b.Fatal(err)
	}
	rhs := randomVec(newRand(), m.Rows)
	x := make([]float64, m.Rows)
	iters := 0
	b.ResetTimer()
	for range b.N {
		clear(x)
		res, err := CG(m, rhs, x, pre, CGSettings{})
		if err != nil {
			b.Fatal(err)
		}
		iters = res.Iterations
	}
	b.StopTimer()
	sink += x[0]
	b.ReportMetric(float64(iters), "iters")
}
