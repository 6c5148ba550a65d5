package adapt

import "math/bits"

// Selection in the marking order (see precedes): a quickselect on an array
// of int32 triangle indices, after Hoare (1961, "Algorithm 65: Find"),
// with pivots drawn by a pseudo-random generator of fixed seed. Because
// the order is strict and total, the set that a selection finds does not
// depend on the pivots; the generator only keeps the expected cost linear
// whatever the input looks like (sorted, reversed, all equal).

// pivotRand is a splitmix64 generator (Steele, Lea and Flood, "Fast
// splittable pseudorandom number generators", OOPSLA 2014). Each selection
// starts from the same seed, so a run is reproducible to the swap.
type pivotRand struct{ s uint64 }

func newPivotRand() pivotRand { return pivotRand{s: 0x5eed_0f_ad_a97_1e5} }

func (r *pivotRand) next() uint64 {
	r.s += 0x9e3779b97f4a7c15
	z := r.s
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// intn returns a number in [0, n), n > 0, by Lemire's multiply-shift
// (the slight bias is irrelevant for choosing pivots).
func (r *pivotRand) intn(n int) int {
	hi, _ := bits.Mul64(r.next(), uint64(n))
	return int(hi)
}

// pivot returns a position in [lo, hi): for windows of three or more, the
// median in the marking order of three random positions.
func pivot(eta2 []float64, idx []int32, lo, hi int, r *pivotRand) int {
	n := hi - lo
	a := lo + r.intn(n)
	if n < 3 {
		return a
	}
	b, c := lo+r.intn(n), lo+r.intn(n)
	before := func(p, q int) bool { return precedes(eta2[idx[p]], idx[p], eta2[idx[q]], idx[q]) }
	if before(b, a) {
		a, b = b, a
	}
	// a precedes b (or a == b).
	if before(c, b) {
		if before(c, a) {
			return a
		}
		return c
	}
	return b
}

// partition rearranges idx[lo:hi], hi > lo, around the element at position
// pv and returns its new position p: afterwards idx[lo:p] precede idx[p]
// and idx[p+1:hi] follow it in the marking order. Positions outside
// [lo, hi) are not touched.
func partition(eta2 []float64, idx []int32, lo, hi, pv int) int {
	idx[lo], idx[pv] = idx[pv], idx[lo]
	pi := idx[lo]
	pval := eta2[pi]
	i, j := lo+1, hi-1
	for {
		for i <= j && precedes(eta2[idx[i]], idx[i], pval, pi) {
			i++
		}
		for i <= j && !precedes(eta2[idx[j]], idx[j], pval, pi) {
			j--
		}
		if i > j {
			break
		}
		// idx[i] follows the pivot and idx[j] precedes it.
		idx[i], idx[j] = idx[j], idx[i]
		i++
		j--
	}
	// Now idx[lo+1:i] precede the pivot and idx[i:hi] follow it.
	p := i - 1
	idx[lo], idx[p] = idx[p], idx[lo]
	return p
}

// selectFirst rearranges idx so that idx[:k], in some order, are the first
// k of idx in the marking order, 0 ≤ k ≤ len(idx). Expected cost O(len(idx)).
func selectFirst(eta2 []float64, idx []int32, k int) {
	lo, hi := 0, len(idx)
	// Invariant: idx[:lo] precede all of idx[lo:], idx[hi:] follow all of
	// idx[:hi], and lo ≤ k ≤ hi. Done when the boundary k is at either end
	// of the window.
	r := newPivotRand()
	for lo < k && k < hi {
		p := partition(eta2, idx, lo, hi, pivot(eta2, idx, lo, hi, &r))
		switch {
		case p < k-1:
			lo = p + 1
		case p > k:
			hi = p
		default: // p == k-1 or p == k: idx[:k] is closed off.
			return
		}
	}
}
