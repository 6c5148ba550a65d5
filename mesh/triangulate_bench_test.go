package mesh

import (
	"math"
	"strconv"
	"testing"
)

// BenchmarkTriangulate meshes the plate with a 16-gon hole (plateDomain)
// with a size bound H chosen for about 1e3, 1e4 and 1e5 triangles, from
// the points to the labelled Mesh (New included).
func BenchmarkTriangulate(b *testing.B) {
	for _, n := range []int{1e3, 1e4, 1e5} {
		b.Run("n="+strconv.Itoa(n), func(b *testing.B) {
			d := plateDomain()
			o := Options{H: math.Sqrt(4.8 * plateArea / float64(n))}
			var sink *Mesh
			for b.Loop() {
				m, _, err := Triangulate(d, o)
				if err != nil {
					b.Fatal(err)
				}
				sink = m
			}
			b.ReportMetric(float64(sink.NumTriangles()), "triangles")
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(sink.NumTriangles()), "ns/triangle")
		})
	}
}
