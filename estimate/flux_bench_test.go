package estimate

import (
	"math"
	"runtime"
	"strconv"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// BenchmarkFluxRecovery measures the flux recovery estimator per triangle
// on uniform meshes of the unit square with about 1e4, 1e5 and 1e6
// triangles, for an interpolated smooth function (no solve: only the
// estimator is timed), beside one product with the P1 stiffness matrix of
// the same mesh (spmv), the unit of cost of the loop's solver. It reports
// the CG iterations of the projection too, and the bytes that the first
// call with a nil dst allocates (the timed calls reuse dst).
func BenchmarkFluxRecovery(b *testing.B) {
	_, p := sine()
	for _, n := range []int{1e4, 1e5, 1e6} {
		k := int(math.Ceil(math.Sqrt(float64(n) / 2)))
		m, err := mesh.Rectangle(0, 0, 1, 1, k, k)
		if err != nil {
			b.Fatal(err)
		}
		nt := float64(m.NumTriangles())
		for _, deg := range []int{1, 2} {
			s, _ := fem.NewSpace(m, deg)
			u, _ := fem.Interpolate(s, func(x, y float64) float64 { return math.Sin(3*x) * math.Cos(2*y) })
			b.Run("P"+strconv.Itoa(deg)+"/n="+strconv.Itoa(n), func(b *testing.B) {
				// The first call, with a nil dst, allocates dst's scratch
				// (reported as alloc-B/triangle); the timed calls reuse it,
				// as the adaptive loop does from step to step.
				var ms0, ms1 runtime.MemStats
				runtime.ReadMemStats(&ms0)
				in, err := (FluxRecovery{}).Estimate(nil, u, p)
				if err != nil {
					b.Fatal(err)
				}
				runtime.ReadMemStats(&ms1)
				for b.Loop() {
					var err error
					if in, err = (FluxRecovery{}).Estimate(in, u, p); err != nil {
						b.Fatal(err)
					}
				}
				b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/nt, "ns/triangle")
				b.ReportMetric(float64(ms1.TotalAlloc-ms0.TotalAlloc)/nt, "alloc-B/triangle")
				_, st, err := FluxRecovery{}.Flux(u, p)
				if err != nil {
					b.Fatal(err)
				}
				b.ReportMetric(float64(st.Iterations), "iterations")
			})
		}
		b.Run("spmv/n="+strconv.Itoa(n), func(b *testing.B) {
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
