package parallel

import (
	"slices"
	"sync"
)

// Even returns the bounds b[0] = 0 ≤ b[1] ≤ … ≤ b[parts] = n of parts
// consecutive ranges of [0, n) with about equal numbers of indices:
// b[w] = ⌊n·w/parts⌋. It stores them in dst if dst has room for parts+1
// values (so that a caller can split without allocating) and allocates
// otherwise.
func Even(dst []int, parts, n int) []int {
	b := bounds(dst, parts)
	for w := 1; w < parts; w++ {
		b[w] = n * w / parts
	}
	b[parts] = n
	return b
}

// ByWeight returns the bounds b[0] = 0 ≤ b[1] ≤ … ≤ b[parts] = n of parts
// consecutive ranges of [0, n), n = len(prefix)−1, balanced by the weights
// whose running sums are prefix (nondecreasing; prefix[0] need not be
// zero), such as the row offsets of a CSR matrix, which balance rows by
// stored entries: b[w] is the first i ≥ b[w−1] with
//
//	prefix[i] − prefix[0] ≥ ⌊(prefix[n] − prefix[0])·w/parts⌋,
//
// found by binary search, so the cost is O(parts · log n). It stores the
// bounds in dst if dst has room for parts+1 values and allocates
// otherwise.
func ByWeight[I ~int32 | ~int64 | ~int](dst []int, parts int, prefix []I) []int {
	b := bounds(dst, parts)
	n := len(prefix) - 1
	base := int64(prefix[0])
	total := int64(prefix[n]) - base
	for w := 1; w < parts; w++ {
		target := base + total*int64(w)/int64(parts)
		i, _ := slices.BinarySearch(prefix[b[w-1]:n], I(target))
		b[w] = b[w-1] + i
	}
	b[parts] = n
	return b
}

// bounds returns dst[:parts+1] with dst[0] = 0, or a new slice if dst is
// too short.
func bounds(dst []int, parts int) []int {
	if parts < 1 {
		panic("parallel: fewer than one part")
	}
	if cap(dst) < parts+1 {
		dst = make([]int, parts+1)
	}
	b := dst[:parts+1]
	b[0] = 0
	return b
}

// Run calls fn(0), …, fn(n−1), each on its own goroutine except fn(0),
// which runs on the calling goroutine, and waits for all of them. The
// caller decides what part w covers, typically the range [b[w], b[w+1])
// of Even or ByWeight.
func Run(n int, fn func(w int)) {
	var wg sync.WaitGroup
	for w := 1; w < n; w++ {
		wg.Go(func() { fn(w) })
	}
	if n > 0 {
		fn(0)
	}
	wg.Wait()
}
