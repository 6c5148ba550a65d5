package parallel

import (
	"errors"
	"runtime"
	"testing"
)

func TestFor(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	for _, procs := range []int{1, 2, 5} {
		runtime.GOMAXPROCS(procs)
		for _, n := range []int{0, 1, 7, 1000, 10001} {
			seen := make([]int, n)
			if err := For(n, 10, func(lo, hi int) error {
				for i := lo; i < hi; i++ {
					seen[i]++
				}
				return nil
			}); err != nil {
				t.Fatal(err)
			}
			for i, c := range seen {
				if c != 1 {
					t.Fatalf("procs %d n %d: index %d visited %d times", procs, n, i, c)
				}
			}
		}
		// The error of the lowest failing chunk is returned.
		e1, e2 := errors.New("low"), errors.New("high")
		err := For(1000, 1, func(lo, hi int) error {
			if lo == 0 {
				return e1
			}
			return e2
		})
		if err != e1 {
			t.Fatalf("procs %d: got %v, want the lowest chunk's error", procs, err)
		}
	}
}
