package estimate

import (
	"math"
	"math/rand/v2"
	"strconv"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
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
			benchEstimators(b, estimators, "/P"+strconv.Itoa(deg)+"/n="+strconv.Itoa(n), u, p)
		}
	}
}

// BenchmarkEstimateAdaptive measures the P1 estimators per triangle on
// meshes numbered as refinement numbers them (a coarse L-shape refined at
// random, children and midpoints appended, so that neighbours are far apart
// in memory), of at least 1e4, 1e5 and 1e6 triangles, for the L-shape
// problem (a = 1, f = 0, Dirichlet boundary): the case of the adaptive loop.
func BenchmarkEstimateAdaptive(b *testing.B) {
	ex, p := known.LShape()
	r := rand.New(rand.NewPCG(1, 1))
	m, err := mesh.LShape(2)
	if err != nil {
		b.Fatal(err)
	}
	for _, n := range []int{1e4, 1e5, 1e6} {
		for m.NumTriangles() < n {
			marks := make([]bool, m.NumTriangles())
			for k := range marks {
				marks[k] = r.IntN(3) == 0
			}
			if m, _, err = m.Refine(marks); err != nil {
				b.Fatal(err)
			}
		}
		s, _ := fem.NewSpace(m, 1)
		u, _ := fem.Interpolate(s, ex.U)
		benchEstimators(b, estimators[:2], "/n="+strconv.Itoa(n), u, p)
	}
}

// benchEstimators runs one sub-benchmark per estimator of list, named by
// the estimator's name and suffix, and reports the time per triangle.
func benchEstimators(b *testing.B, list []struct {
	name string
	est  Estimator
}, suffix string, u *fem.Function, p *fem.Problem) {
	nt := float64(u.Space.Mesh.NumTriangles())
	for _, tc := range list {
		b.Run(tc.name+suffix, func(b *testing.B) {
			var in *Indicators
			for b.Loop() {
				var err error
				if in, err = tc.est.Estimate(in, u, p); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/nt, "ns/triangle")
		})
	}
}
