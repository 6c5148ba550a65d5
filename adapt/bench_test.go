package adapt

import (
	"cmp"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// Indicators shaped like an adaptive run: near a singularity η_T² grows
// like a negative power of the distance, here r^-1.5 with r uniform in
// (10⁻⁶, 1), a heavy tail; and, for contrast, uniform values.
var benchShapes = []struct {
	name string
	draw func(r *rand.Rand) float64
}{
	{"heavy", func(r *rand.Rand) float64 { return math.Pow(1e-6+(1-1e-6)*r.Float64(), -1.5) }},
	{"uniform", func(r *rand.Rand) float64 { return r.Float64() }},
}

var benchSizes = []struct {
	name string
	n    int
}{{"1e4", 1e4}, {"1e5", 1e5}, {"1e6", 1e6}}

var sink []bool

// benchMarking runs mark on each shape and size and reports ns/triangle.
func benchMarking(b *testing.B, mark func(dst []bool, eta2 []float64) []bool) {
	for _, s := range benchShapes {
		for _, z := range benchSizes {
			b.Run(fmt.Sprintf("%s/n=%s", s.name, z.name), func(b *testing.B) {
				r := rand.New(rand.NewPCG(1, 1))
				eta2 := make([]float64, z.n)
				for i := range eta2 {
					eta2[i] = s.draw(r)
				}
				dst := mark(nil, eta2) // warms the index pool
				iters := 0
				for b.Loop() {
					dst = mark(dst, eta2)
					iters++
				}
				sink = dst
				b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(iters)/float64(z.n), "ns/triangle")
			})
		}
	}
}

// BenchmarkDorfler is Dorfler{Theta: 0.5}.Mark, by selection.
func BenchmarkDorfler(b *testing.B) {
	m := Dorfler{Theta: 0.5}
	benchMarking(b, func(dst []bool, eta2 []float64) []bool {
		dst, err := m.Mark(dst, eta2)
		if err != nil {
			b.Fatal(err)
		}
		return dst
	})
}

// BenchmarkDorflerSort is the same marking by sorting: all indices sorted
// in the marking order, then the shortest prefix whose (float64) sum
// reaches θ·total. The index slice is allocated once, as Dorfler's is
// pooled.
func BenchmarkDorflerSort(b *testing.B) {
	var idx []int32
	benchMarking(b, func(dst []bool, eta2 []float64) []bool {
		idx = sortDorfler(idx, eta2, 0.5)
		dst = resize(dst, len(eta2))
		markIndex(dst, idx)
		return dst
	})
}

// sortDorfler returns, in idx's storage, the triangles of the Dörfler set
// found by sorting.
func sortDorfler(idx []int32, eta2 []float64, theta float64) []int32 {
	idx = idx[:0]
	total := 0.0
	for i, v := range eta2 {
		total += v
		idx = append(idx, int32(i))
	}
	slices.SortFunc(idx, func(i, j int32) int {
		if c := cmp.Compare(eta2[j], eta2[i]); c != 0 {
			return c
		}
		return cmp.Compare(i, j)
	})
	bound := theta * total
	sum := 0.0
	for k, i := range idx {
		if eta2[i] == 0 {
			return idx[:k]
		}
		if sum += eta2[i]; sum >= bound {
			return idx[:k+1]
		}
	}
	return idx
}
