package mesh

import (
	"math"
	"strconv"
	"testing"
)

// BenchmarkRefine bisects a quarter of the triangles (every fourth, about
// what Dörfler marking with θ = 0.5 selects on the meshes of an adaptive
// run) of uniform L-shape meshes of 1e4, 1e5 and 1e6 triangles, with the
// closure and the new topology.
func BenchmarkRefine(b *testing.B) {
	for _, n := range []int{1e4, 1e5, 1e6} {
		b.Run("n="+strconv.Itoa(n), func(b *testing.B) {
			m, err := LShape(int(math.Ceil(math.Sqrt(float64(n) / 6))))
			if err != nil {
				b.Fatal(err)
			}
			marked := make([]bool, m.NumTriangles())
			for k := range marked {
				marked[k] = k%4 == 0
			}
			var sink *Mesh
			for b.Loop() {
				f, _, err := m.Refine(marked)
				if err != nil {
					b.Fatal(err)
				}
				sink = f
			}
			_ = sink
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(m.NumTriangles()), "ns/triangle")
		})
	}
}

// BenchmarkNew builds the topology of uniform L-shape meshes from arrays.
func BenchmarkNew(b *testing.B) {
	for _, n := range []int{1e4, 1e5, 1e6} {
		b.Run("n="+strconv.Itoa(n), func(b *testing.B) {
			m, err := LShape(int(math.Ceil(math.Sqrt(float64(n) / 6))))
			if err != nil {
				b.Fatal(err)
			}
			a := Arrays{X: m.X, Tri: m.Tri, Region: m.Region}
			for b.Loop() {
				if _, _, err := New(a); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(m.NumTriangles()), "ns/triangle")
		})
	}
}

// BenchmarkWritePNG draws graded L-shape meshes of 2e5 and 1e6 triangles
// (gradedLShape) coloured by a field on a log scale, 800 pixels wide, as
// the examples draw mesh.png, and encodes the PNG.
func BenchmarkWritePNG(b *testing.B) {
	for _, n := range []int{2e5, 1e6} {
		b.Run("n="+strconv.Itoa(n), func(b *testing.B) {
			m := gradedLShape(b, n)
			opt := &PictureOptions{Width: 800, Cell: cornerField(m), Log: true, Label: "η_T", Title: "bench"}
			var size int
			for b.Loop() {
				var w countWriter
				if err := WritePNG(&w, m, opt); err != nil {
					b.Fatal(err)
				}
				size = int(w)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(m.NumTriangles()), "ns/triangle")
			b.ReportMetric(float64(size), "bytes/picture")
			b.ReportMetric(float64(m.NumTriangles()), "triangles")
		})
	}
}

// countWriter counts the bytes written to it.
type countWriter int

func (w *countWriter) Write(p []byte) (int, error) { *w += countWriter(len(p)); return len(p), nil }
