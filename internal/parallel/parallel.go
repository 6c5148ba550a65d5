// Package parallel splits index ranges over goroutines so that results do
// not depend on the number of goroutines: each index is handled by exactly
// one call, and callers write results per index and combine them in index
// order.
package parallel

import (
	"runtime"
	"sync"
	"sync/atomic"
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

// Dynamic calls fn on the chunks [k·grain, min((k+1)·grain, n)) covering
// [0, n), handed out in increasing order to up to GOMAXPROCS goroutines as
// each finishes its previous chunk, and waits: for work whose cost per
// index varies, where the equal split of For leaves one goroutine idle.
// Each worker calls start once before its first chunk, for its own
// scratch space. It returns the first error of start, else the error of
// the lowest chunk that failed (chunks are handed out in order, so that
// chunk has run); after an error no new chunk is started. With one worker, everything runs
// on the calling goroutine.
func Dynamic[S any](n, grain int, start func() (S, error), fn func(s S, lo, hi int) error) error {
	if n <= 0 {
		return nil
	}
	grain = max(grain, 1)
	chunks := (n + grain - 1) / grain
	workers := max(1, min(runtime.GOMAXPROCS(0), chunks))
	errs := make([]error, chunks)
	startErrs := make([]error, workers)
	var next atomic.Int64
	var failed atomic.Bool
	work := func(w int) {
		s, err := start()
		if err != nil {
			failed.Store(true)
			startErrs[w] = err
			return
		}
		for !failed.Load() {
			k := int(next.Add(1) - 1)
			if k >= chunks {
				return
			}
			if err := fn(s, k*grain, min((k+1)*grain, n)); err != nil {
				errs[k] = err
				failed.Store(true)
			}
		}
	}
	if workers == 1 {
		work(0)
	} else {
		var wg sync.WaitGroup
		for w := range workers {
			wg.Go(func() { work(w) })
		}
		wg.Wait()
	}
	for _, err := range startErrs {
		if err != nil {
			return err
		}
	}
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return nil
}
