package estimate

import (
	"math"
	"strconv"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// BenchmarkEstimate measures each estimator per triangle on uniform meshes
// of the unit square with 1e4, 1e5 and 1e6 triangles, for an interpolated
// smooth function (no solve: only the estimator is timed).
func BenchmarkEstimate(b *testing.B) {
	_, p := sine()
	for _, deg := range []int{1, 2} {
		for _, n := range []int{1e4, 1e5, 1e6} {
			k := int(math.Ceil(math.Sqrt(float64(n) / 2)))
			m, err := mesh.Rectangle(0, 0, 1, 1, k, k)
			if err != nil {
				b.Fatal(err)
			}
			s, _ := fem.NewSpace(m, deg)
			u, _ := fem.Interpolate(s, func(x, y float64) float64 { return math.Sin(3*x) * math.Cos(2*y) })
			for _, tc := range estimators {
				b.Run(tc.name+"/P"+strconv.Itoa(deg)+"/n="+strconv.Itoa(n), func(b *testing.B) {
					var in *Indicators
					for b.Loop() {
						var err error
						if in, err = tc.est.Estimate(in, u, p); err != nil {
							b.Fatal(err)
						}
					}
					b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(m.NumTriangles()), "ns/triangle")
				})
			}
		}
	}
}
