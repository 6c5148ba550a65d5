package estimate

import (
	"math"
	"runtime"
	"strconv"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// BenchmarkEquilibrated measures the equilibrated estimator per triangle on
// uniform meshes of the unit square with about 1e4, 1e5 and 1e6 triangles,
// for an interpolated smooth function (no solve: only the estimator is
// timed; the residual r_a of the interpolant is not zero, so the algebraic
// term is computed too), beside one product with the P1 stiffness matrix
// of the same mesh (spmv), the unit of cost of the loop's solver. P1 takes
// the P1 path of Equilibrated, P2 the P2 path.
func BenchmarkEquilibrated(b *testing.B) {
	_, p := sine()
	// square builds the mesh inside each sub-benchmark, so that a -bench
	// filter skips the sizes it does not select.
	square := func(b *testing.B, n int) *mesh.Mesh {
		k := int(math.Ceil(math.Sqrt(float64(n) / 2)))
		m, err := mesh.Rectangle(0, 0, 1, 1, k, k)
		if err != nil {
			b.Fatal(err)
		}
		return m
	}
	for _, n := range []int{1e4, 1e5, 1e6} {
		for _, deg := range []int{1, 2} {
			b.Run("P"+strconv.Itoa(deg)+"/n="+strconv.Itoa(n), func(b *testing.B) {
				m := square(b, n)
				nt := float64(m.NumTriangles())
				s, _ := fem.NewSpace(m, deg)
				u, _ := fem.Interpolate(s, func(x, y float64) float64 { return math.Sin(3*x) * math.Cos(2*y) })
				// The memory of one estimate: the bytes allocated with a nil
				// dst (with a reused dst, its scratch keeps the arrays).
				var ms0, ms1 runtime.MemStats
				runtime.ReadMemStats(&ms0)
				in, err := (Equilibrated{}).Estimate(nil, u, p)
				if err != nil {
					b.Fatal(err)
				}
				runtime.ReadMemStats(&ms1)
				for b.Loop() {
					var err error
					if in, err = (Equilibrated{}).Estimate(in, u, p); err != nil {
						b.Fatal(err)
					}
				}
				b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/nt, "ns/triangle")
				b.ReportMetric(float64(ms1.TotalAlloc-ms0.TotalAlloc)/nt, "alloc-B/triangle")
			})
		}
		b.Run("spmv/n="+strconv.Itoa(n), func(b *testing.B) {
			m := square(b, n)
			nt := float64(m.NumTriangles())
			s, _ := fem.NewSpace(m, 1)
			sys, err := fem.Assemble(s, p)
			if err != nil {
				b.Fatal(err)
			}
			x := make([]float64, s.NumDOF())
			y := make([]float64, s.NumDOF())
			for i := range x {
				x[i] = float64(i%7) - 3
			}
			for b.Loop() {
				sys.A.MulVec(y, x)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/nt, "ns/triangle")
		})
	}
}
