package adapt

import "math"

// Dorfler is bulk marking (Dörfler, "A convergent adaptive algorithm for
// Poisson's equation", SIAM J. Numer. Anal. 33 (1996) 1106–1124) with
// minimal cardinality: Mark marks the set M of fewest triangles with
//
//	Σ_{T∈M} η_T²  ≥  θ · Σ_T η_T²,   0 < θ ≤ 1.
//
// Among the sets of that size it takes the first in the marking order
// (η_T² descending, then index ascending; see Marker): M is the first k
// triangles of that order, k the smallest count whose sum reaches the
// bound. Taking the largest indicators first gives the fewest triangles,
// the usual greedy argument for a sum under a cardinality constraint.
//
// Arithmetic. The right-hand side θ·Σ_T η_T² is computed in float64: the
// total by plain summation in index order, then one product. The sums on
// the left are exact (an integer accumulator, not rounded float sums), so
// M does not depend on the order in which it is summed. A triangle with
// η_T² = 0 is never marked: k is at most the number of positive
// indicators, and when even all of those fall short of the rounded bound
// (possible for θ = 1, where the bound is the rounded total), M is
// exactly the triangles with η_T² > 0; conversely an indicator too small
// to change the rounded total need not be marked even for θ = 1. When
// every η_T² is zero nothing is marked, and that is not an error. Should
// the total overflow float64, it is formed from the values scaled by
// 2⁻¹²⁸ and the bound scaled back exactly.
//
// Cost. The count k is found by selection, not by sorting: a quickselect
// that sums the part before each pivot and keeps the part where the bound
// is crossed, after Pfeiler and Praetorius, "Dörfler marking with minimal
// cardinality is a linear complexity problem", Math. Comp. 89 (2020)
// 2735–2752. Mark is linear in len(eta2) in expectation, with one int32
// index per positive indicator as scratch (pooled between calls).
//
// Theta outside (0, 1], or NaN, is an ErrTheta error.
type Dorfler struct {
	Theta float64 // θ ∈ (0, 1]: the share of Σ η_T² that the marked set must carry
}

// Mark implements Marker.
func (d Dorfler) Mark(dst []bool, eta2 []float64) ([]bool, error) {
	if !(d.Theta > 0 && d.Theta <= 1) {
		return nil, thetaErr("Dorfler.Theta", d.Theta, "0 < θ ≤ 1")
	}
	n := len(eta2)
	if n > maxLen {
		return nil, sizeErr(n)
	}
	total := 0.0
	for i, v := range eta2 {
		if !valid(v) {
			return nil, indicatorErr(i, v)
		}
		total += v
	}
	dst = resize(dst, n)
	if total == 0 {
		return dst, nil
	}
	var shift uint
	if math.IsInf(total, 1) {
		total, shift = 0, 128
		for _, v := range eta2 {
			total += v * 0x1p-128
		}
	}
	var bound exactSum
	bound.addScaled(d.Theta*total, shift)
	bound.normalize()

	p := getIndex(n)
	idx := *p
	for i, v := range eta2 {
		if v > 0 {
			idx = append(idx, int32(i))
		}
	}
	k := dorflerCount(eta2, idx, &bound)
	markIndex(dst, idx[:k])
	*p = idx
	putIndex(p)
	return dst, nil
}

// dorflerCount returns the smallest k ≥ 1 such that the exact sum of the
// first k of idx in the marking order is at least bound (normalized), or
// len(idx) if there is none, and leaves those k first in idx. idx must be
// non-empty and hold only positive indicators.
func dorflerCount(eta2 []float64, idx []int32, bound *exactSum) int {
	// k lies in (lo, hi]. idx[:lo] precede all of idx[lo:] and their exact
	// sum, taken, is below bound (or lo == 0); idx[hi:] follow all of
	// idx[:hi], and idx[:hi] reach bound (or hi == len(idx), the fallback).
	lo, hi := 0, len(idx)
	var taken, trial exactSum
	r := newPivotRand()
	for hi-lo > 1 {
		p := partition(eta2, idx, lo, hi, pivot(eta2, idx, lo, hi, &r))
		trial = taken
		for _, i := range idx[lo:p] {
			trial.add(eta2[i])
		}
		trial.normalize()
		if p > lo && !trial.less(bound) {
			hi = p // the bound is crossed before the pivot
			continue
		}
		trial.add(eta2[idx[p]])
		trial.normalize()
		if !trial.less(bound) {
			return p + 1 // crossed at the pivot
		}
		taken = trial // the whole before part and the pivot are in
		lo = p + 1
	}
	return hi
}

// exactSum is the exact sum of non-negative finite float64 values, as a
// fixed-point integer in units of 2⁻¹⁰⁷⁴ (the smallest subnormal) written
// in base 2³² with one digit per uint64 word. The spare 32 bits of each
// word hold carries until normalize: each added value puts less than 2³²
// into each of at most three words, so fewer than 2³¹ additions cannot
// overflow a word. 72 words cover 2³¹ values of up to MaxFloat64 (bit
// 2129) and a bound scaled by 2¹²⁸ (bit 2226).
type exactSum [72]uint64

const digit = 1<<32 - 1

// add adds v ≥ 0, finite.
func (a *exactSum) add(v float64) { a.addScaled(v, 0) }

// addScaled adds v·2^shift, v ≥ 0 finite, shift ≤ 128.
func (a *exactSum) addScaled(v float64, shift uint) {
	b := math.Float64bits(v) &^ (1 << 63) // −0 is 0
	m := b & (1<<52 - 1)
	p := uint(0) // bit position of the mantissa's lowest bit, in units of 2⁻¹⁰⁷⁴
	if e := uint(b >> 52); e != 0 {
		m |= 1 << 52
		p = e - 1
	}
	p += shift
	i, s := p>>5, p&31
	// m·2^s < 2⁸⁵, as three base-2³² digits.
	a[i] += (m << s) & digit
	a[i+1] += (m >> (32 - s)) & digit
	a[i+2] += m >> (64 - s)
}

// normalize propagates the carries, leaving every word below 2³².
func (a *exactSum) normalize() {
	var c uint64
	for i, w := range a {
		w += c
		a[i] = w & digit
		c = w >> 32
	}
}

// less reports whether a < b; both must be normalized.
func (a *exactSum) less(b *exactSum) bool {
	for i := len(a) - 1; i >= 0; i-- {
		if a[i] != b[i] {
			return a[i] < b[i]
		}
	}
	return false
}
