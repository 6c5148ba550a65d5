package fem

import (
	"strconv"
	"testing"

	"github.com/posteriori-fem/posteriori/mesh"
)

// benchMesh returns a uniform mesh of the unit square with about n
// triangles.
func benchMesh(b *testing.B, n int) *mesh.Mesh {
	b.Helper()
	k := 1
	for 2*k*k < n {
		k++
	}
	m, err := mesh.Rectangle(0, 0, 1, 1, k, k)
	if err != nil {
		b.Fatal(err)
	}
	return m
}

func BenchmarkAssemble(b *testing.B) {
	for _, deg := range []int{1, 2} {
		for _, n := range []int{1e4, 1e5, 1e6} {
			b.Run("P"+strconv.Itoa(deg)+"/n="+strconv.Itoa(n), func(b *testing.B) {
				m := benchMesh(b, n)
				s, _ := NewSpace(m, deg)
				p := &Problem{F: func(x, y float64) float64 { return x * y }, Dirichlet: map[int32]Func{mesh.SideLeft: nil}}
				b.ResetTimer()
				var sink *System
				for b.Loop() {
					sys, err := Assemble(s, p)
					if err != nil {
						b.Fatal(err)
					}
					sink = sys
				}
				_ = sink
				b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(m.NumTriangles()), "ns/triangle")
			})
		}
	}
}
