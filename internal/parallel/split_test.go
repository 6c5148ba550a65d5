package parallel

import (
	"math/rand/v2"
	"sync/atomic"
	"testing"
)

// ByWeight's bounds are those of the definition in its doc comment,
// computed here by a linear scan, for random weights (zeros included, so
// that empty ranges occur) and a prefix that does not start at zero; Even's
// are ⌊n·w/parts⌋. Both reuse dst when it has room.
func TestSplit(t *testing.T) {
	rnd := rand.New(rand.NewPCG(1, 1))
	for _, n := range []int{0, 1, 7, 1000} {
		prefix := make([]int32, n+1)
		prefix[0] = 5
		for i := range n {
			prefix[i+1] = prefix[i] + int32(rnd.IntN(3))*int32(rnd.IntN(10))
		}
		for _, parts := range []int{1, 2, 3, 8} {
			got := ByWeight(nil, parts, prefix)
			prev := 0
			total := int64(prefix[n] - prefix[0])
			for w := 1; w < parts; w++ {
				target := total * int64(w) / int64(parts)
				i := prev
				for i < n && int64(prefix[i]-prefix[0]) < target {
					i++
				}
				if got[w] != i {
					t.Fatalf("n %d, parts %d: ByWeight bound %d = %d, want %d", n, parts, w, got[w], i)
				}
				prev = i
			}
			if len(got) != parts+1 || got[0] != 0 || got[parts] != n {
				t.Fatalf("n %d, parts %d: ByWeight = %v", n, parts, got)
			}
			even := Even(make([]int, 0, 9), parts, n)
			for w := range parts + 1 {
				if even[w] != n*w/parts {
					t.Fatalf("n %d, parts %d: Even = %v", n, parts, even)
				}
			}
		}
	}
	buf := make([]int, 4)
	if b := Even(buf, 3, 10); &b[0] != &buf[0] {
		t.Error("Even allocated although dst had room")
	}
	if b := ByWeight(buf, 3, []int64{0, 1, 2}); &b[0] != &buf[0] {
		t.Error("ByWeight allocated although dst had room")
	}
}

// Run calls every part exactly once.
func TestRun(t *testing.T) {
	for _, n := range []int{0, 1, 2, 5} {
		seen := make([]int32, n)
		Run(n, func(w int) { atomic.AddInt32(&seen[w], 1) })
		for w, c := range seen {
			if c != 1 {
				t.Fatalf("n %d: part %d ran %d times", n, w, c)
			}
		}
	}
}
