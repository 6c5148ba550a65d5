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

// countWriter counts the bytes written to it.
type countWriter struct{ n int64 }

func (w *countWriter) Write(p []byte) (int, error) { w.n += int64(len(p)); return len(p), nil }

// fileFixture returns a uniform L-shape mesh of about n triangles with the
// fields the examples write: a smooth solution u (linear, or quadratic
// with its edge values when p2), and two cell fields eta and err.
func fileFixture(n int, p2 bool) (*Mesh, *Data) {
	m, err := LShape(int(math.Ceil(math.Sqrt(float64(n) / 6))))
	if err != nil {
		panic(err)
	}
	f := func(x, y float64) float64 { return math.Sin(3*x) * math.Cos(2*y) }
	u := make([]float64, m.NumVertices())
	for i := range u {
		u[i] = f(m.Vertex(i))
	}
	eta := make([]float64, m.NumTriangles())
	e2 := make([]float64, m.NumTriangles())
	for k := range eta {
		a, b, c := m.Tri[3*k], m.Tri[3*k+1], m.Tri[3*k+2]
		x := (m.X[2*a] + m.X[2*b] + m.X[2*c]) / 3
		y := (m.X[2*a+1] + m.X[2*b+1] + m.X[2*c+1]) / 3
		eta[k] = m.Area(k) * math.Abs(f(x, y))
		e2[k] = 0.7 * eta[k] * (1 + 0.1*math.Sin(float64(k)))
	}
	d := &Data{Point: map[string][]float64{"u": u}, Cell: map[string][]float64{"eta": eta, "err": e2}}
	if p2 {
		ev := make([]float64, m.NumEdges())
		for e := range ev {
			a, b := m.Edge[2*e], m.Edge[2*e+1]
			ev[e] = f(0.5*(m.X[2*a]+m.X[2*b]), 0.5*(m.X[2*a+1]+m.X[2*b+1]))
		}
		d.Edge = map[string][]float64{"u": ev}
	}
	return m, d
}

// BenchmarkWriteFiles writes the files of the examples (WriteVTU in its
// default encoding, WriteJSON) for fileFixture meshes of 1e4, 1e5 and 1e6
// triangles, with a linear and a quadratic solution, to a writer that
// only counts, and reports the size per triangle.
func BenchmarkWriteFiles(b *testing.B) {
	for _, n := range []int{1e4, 1e5, 1e6} {
		for _, p2 := range []bool{false, true} {
			m, d := fileFixture(n, p2)
			deg := "P1"
			if p2 {
				deg = "P2"
			}
			for _, format := range []string{"vtu", "json"} {
				b.Run(format+"/"+deg+"/n="+strconv.Itoa(n), func(b *testing.B) {
					var w countWriter
					for b.Loop() {
						w.n = 0
						var err error
						if format == "vtu" {
							err = WriteVTU(&w, m, d, nil)
						} else {
							err = WriteJSON(&w, m, d)
						}
						if err != nil {
							b.Fatal(err)
						}
					}
					nt := float64(m.NumTriangles())
					b.ReportMetric(float64(w.n)/nt, "bytes/triangle")
					b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/nt, "ns/triangle")
				})
			}
		}
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
				size = int(w.n)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(m.NumTriangles()), "ns/triangle")
			b.ReportMetric(float64(size), "bytes/picture")
			b.ReportMetric(float64(m.NumTriangles()), "triangles")
		})
	}
}
