// Package parallel splits index ranges over goroutines so that results do
// not depend on the number of goroutines: each index is handled by exactly
// one call, and callers write results per index and combine them in index
// order.
package parallel

import (
	"runtime"
	"sync"
)

// For calls fn on consecutive chunks [lo, hi) covering [0, n), on up to
// GOMAXPROCS goroutines, with chunks of at least grain indices, and waits.
// It returns the error of the lowest chunk that failed; a chunk stops at its
// first error, other chunks run to their end. With one chunk, fn runs on the
// calling goroutine.
func For(n, grain int, fn func(lo, hi int) error) error {
	if n <= 0 {
		return nil
	}
	workers := max(1, min(runtime.GOMAXPROCS(0), n/max(grain, 1)))
	if workers == 1 {
		return fn(0, n)
	}
	chunk := (n + workers - 1) / workers
	errs := make([]error, workers)
	var wg sync.WaitGroup
	for w := range workers {
		lo, hi := w*chunk, min((w+1)*chunk, n)
		if lo >= hi {
			continue
		}
		wg.Add(1)
		go func() {
			defer wg.Done()
			errs[w] = fn(lo, hi)
		}()
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return nil
}
