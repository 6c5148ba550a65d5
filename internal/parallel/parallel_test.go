package parallel

import (
	"errors"
	"runtime"
	"sync/atomic"
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

// Dynamic covers every index exactly once, calls start once per worker,
// and returns the error of the lowest failing chunk, whatever GOMAXPROCS.
func TestDynamic(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	for _, procs := range []int{1, 2, 5} {
		runtime.GOMAXPROCS(procs)
		for _, n := range []int{0, 1, 7, 1000, 10001} {
			seen := make([]int32, n)
			var starts atomic.Int32
			err := Dynamic(n, 10, func() (int, error) { starts.Add(1); return 0, nil }, func(_ int, lo, hi int) error {
				for i := lo; i < hi; i++ {
					atomic.AddInt32(&seen[i], 1)
				}
				return nil
			})
			if err != nil {
				t.Fatal(err)
			}
			for i, c := range seen {
				if c != 1 {
					t.Fatalf("procs %d, n %d: index %d seen %d times", procs, n, i, c)
				}
			}
			if n > 0 && (starts.Load() < 1 || int(starts.Load()) > procs) {
				t.Errorf("procs %d, n %d: %d starts", procs, n, starts.Load())
			}
		}
		errLow, errHigh := errors.New("low"), errors.New("high")
		err := Dynamic(1000, 10, func() (int, error) { return 0, nil }, func(_ int, lo, hi int) error {
			switch lo {
			case 300:
				return errLow
			case 700:
				return errHigh
			}
			return nil
		})
		if err != errLow {
			t.Errorf("procs %d: error %v, want the lowest failing chunk's", procs, err)
		}
		errStart := errors.New("start")
		if err := Dynamic(100, 10, func() (int, error) { return 0, errStart }, func(int, int, int) error { return nil }); err != errStart {
			t.Errorf("procs %d: error %v, want start's", procs, err)
		}
	}
}
