package adapt

import (
	"math"
	"sync"

	"github.com/posteriori-fem/posteriori/internal/spare"
)

// Marker selects triangles for refinement from squared error indicators
// eta2[T] = η_T², one per triangle.
//
// The markers of this package rank triangles in one order, the marking
// order: T precedes S when
//
//	η_T² > η_S²,  or  η_T² = η_S² and T < S
//
// (η² descending, index ascending). It is a strict total order, so "the k
// largest indicators" names one set, the first k triangles in this order,
// whatever the algorithm or the pivots that find it.
//
// Mark writes the marks into dst, one per triangle (true: refine), and
// returns it. dst is resized to len(eta2), reusing its storage where the
// capacity suffices, and every entry is overwritten; a nil dst allocates.
// An empty eta2 gives an empty (non-nil) mask and no error. On error Mark
// returns nil and writes nothing into dst.
//
// Implementations are safe for concurrent use: Mark keeps no state
// between calls, and its result depends only on the marker and eta2, not
// on GOMAXPROCS or on earlier calls.
type Marker interface {
	Mark(dst []bool, eta2 []float64) ([]bool, error)
}

var (
	_ Marker = Dorfler{}
	_ Marker = Maximum{}
	_ Marker = Fraction{}
)

// precedes reports whether triangle i, with squared indicator a, precedes
// triangle j, with squared indicator b, in the marking order.
func precedes(a float64, i int32, b float64, j int32) bool {
	return a > b || (a == b && i < j)
}

// resize returns dst with length n and every entry false.
func resize(dst []bool, n int) []bool {
	if dst == nil {
		return make([]bool, n)
	}
	dst = spare.Resize(dst, n)
	clear(dst)
	return dst
}

// markIndex sets dst[i] for every i in idx.
func markIndex(dst []bool, idx []int32) {
	for _, i := range idx {
		dst[i] = true
	}
}

// maxLen is the most indicators a selecting marker accepts.
const maxLen = math.MaxInt32

// indexPool recycles the index slices of Dorfler and Fraction, so that a
// marker called once per adaptive step does not allocate once per step.
var indexPool sync.Pool // of *[]int32

// getIndex returns an empty index slice of capacity at least n. Give it
// back with putIndex.
func getIndex(n int) *[]int32 {
	if p, ok := indexPool.Get().(*[]int32); ok && cap(*p) >= n {
		*p = (*p)[:0]
		return p
	}
	s := make([]int32, 0, n)
	return &s
}

func putIndex(p *[]int32) { indexPool.Put(p) }
