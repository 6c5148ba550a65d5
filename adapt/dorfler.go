package adapt

import (
	"math"
	"math/big"
	"math/bits"
	"runtime"
	"sync"

	"github.com/posteriori-fem/posteriori/internal/parallel"
)

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
// total is the exact sum of the indicators rounded once to float64
// (to nearest, ties to even), then one product. The sums on the left are
// exact as well (integer accumulators, not rounded float sums), so M does
// not depend on the order in which anything is summed. A triangle with
// η_T² = 0 is never marked: k is at most the number of positive
// indicators, and when even all of those fall short of the rounded bound
// (possible for θ = 1, where the bound is the rounded total), M is
// exactly the triangles with η_T² > 0; conversely an indicator too small
// to change the rounded total need not be marked even for θ = 1. When
// every η_T² is zero nothing is marked, and that is not an error. Should
// the total overflow float64, it is rounded from the exact sum scaled by
// 2⁻¹²⁸ and the bound scaled back exactly.
//
// Cost. The count k is found without sorting. From 2¹⁴ indicators on, it
// takes two parallel passes over eta2 and one selection in a small part of
// it. The first pass sorts the
// indicators into 2¹⁵ buckets by the leading 15 bits of their IEEE 754
// representation (the exponent and 4 mantissa bits; for non-negative
// numbers the bit patterns are ordered like the values) and sums each
// bucket exactly as a 128-bit integer. Walking the buckets from the top
// finds the bucket where the bound is crossed; the second pass marks every
// triangle of the buckets above it and collects the indices of that
// bucket, whose own count is found by a quickselect that sums the part
// before each pivot and keeps the part where the bound is crossed (after
// Pfeiler and Praetorius, "Dörfler marking with minimal cardinality is a
// linear complexity problem", Math. Comp. 89 (2020) 2735–2752). Fewer
// indicators go to that selection directly. Mark is linear in len(eta2)
// (the selection in expectation), and the bucket sums are integers, so the
// result does not depend on how the passes are split over goroutines.
//
// Theta outside (0, 1], or NaN, is an ErrTheta error.
type Dorfler struct {
	Theta float64 // θ ∈ (0, 1]: the share of Σ η_T² that the marked set must carry
}

// Mark implements Marker.
func (d Dorfler) Mark(dst []bool, eta2 []float64) ([]bool, error) {
	return d.mark(dst, eta2, len(eta2) >= bucketMin)
}

// bucketMin is the least number of indicators for which Mark uses the
// buckets; below it, the selection runs on all positive indicators (the
// same set, without the fixed cost of the 2¹⁵ buckets).
const bucketMin = 1 << 14

func (d Dorfler) mark(dst []bool, eta2 []float64, buckets bool) ([]bool, error) {
	if !(d.Theta > 0 && d.Theta <= 1) {
		return nil, thetaErr("Dorfler.Theta", d.Theta, "0 < θ ≤ 1")
	}
	n := len(eta2)
	if n > maxLen {
		return nil, sizeErr(n)
	}
	if !buckets {
		return d.markSmall(dst, eta2)
	}
	h, err := histogram(eta2)
	if err != nil {
		return nil, err
	}
	defer histPool.Put(h)
	dst = resize(dst, n)
	var sum exactSum
	for key := range numKeys {
		sum.addBucket(h.hi[key], h.lo[key], key)
	}
	sum.normalize()
	bound, ok := d.bound(&sum)
	if !ok {
		return dst, nil
	}

	// The bucket where the bound is crossed, walking down from the top.
	var taken, trial exactSum
	cross := -1
	for key := numKeys - 1; key >= 0; key-- {
		if h.count[key] == 0 {
			continue
		}
		trial = taken
		trial.addBucket(h.hi[key], h.lo[key], key)
		trial.normalize()
		if !trial.less(&bound) {
			cross = key
			break
		}
		taken = trial
	}
	if cross < 0 { // even all positive indicators fall short
		_ = parallel.For(n, histGrain, func(lo, hi int) error {
			for i, v := range eta2[lo:hi] {
				dst[lo+i] = v > 0
			}
			return nil
		})
		return dst, nil
	}
	p := getIndex(int(h.count[cross]))
	idx := collect(dst, eta2, cross, (*p)[:0])
	k := dorflerCount(eta2, idx, &bound, taken)
	markIndex(dst, idx[:k])
	*p = idx
	putIndex(p)
	return dst, nil
}

// bound returns θ·Σ η_T² (see Dorfler) from the exact normalized sum of
// the indicators, or false when the sum is zero.
func (d Dorfler) bound(sum *exactSum) (exactSum, bool) {
	var b exactSum
	total, shift := sum.float64(0), uint(0)
	if total == 0 {
		return b, false
	}
	if math.IsInf(total, 1) {
		total, shift = sum.float64(128), 128
	}
	b.addScaled(d.Theta*total, shift)
	b.normalize()
	return b, true
}

// markSmall is Mark by a selection on all positive indicators.
func (d Dorfler) markSmall(dst []bool, eta2 []float64) ([]bool, error) {
	var sum exactSum
	for i, v := range eta2 {
		if !valid(v) {
			return nil, indicatorErr(i, v)
		}
		sum.add(v) // n < 2³¹ additions: no word overflows before normalize
	}
	sum.normalize()
	dst = resize(dst, len(eta2))
	bound, ok := d.bound(&sum)
	if !ok {
		return dst, nil
	}
	p := getIndex(len(eta2))
	idx := *p
	for i, v := range eta2 {
		if v > 0 {
			idx = append(idx, int32(i))
		}
	}
	k := dorflerCount(eta2, idx, &bound, exactSum{})
	markIndex(dst, idx[:k])
	*p = idx
	putIndex(p)
	return dst, nil
}

// dorflerCount returns the smallest k ≥ 1 such that taken plus the exact
// sum of the first k of idx in the marking order is at least bound (both
// normalized), or len(idx) if there is none, and leaves those k first in
// idx. idx must be non-empty and hold only positive indicators.
func dorflerCount(eta2 []float64, idx []int32, bound *exactSum, taken exactSum) int {
	// k lies in (lo, hi]. idx[:lo] precede all of idx[lo:] and their exact
	// sum, taken, is below bound (or lo == 0); idx[hi:] follow all of
	// idx[:hi], and idx[:hi] reach bound (or hi == len(idx), the fallback).
	lo, hi := 0, len(idx)
	var trial exactSum
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

// Buckets of the first pass: key(v) = the leading 15 bits of v ≥ 0, so
// that all values of a bucket share the exponent and u < v implies
// key(u) ≤ key(v).
const (
	keyShift  = 48
	numKeys   = 1 << 15
	histGrain = 1 << 16 // indicators per goroutine at least
)

// hist holds, for each bucket, the number of positive indicators and the
// exact sum of their significands (with the implicit bit) as a 128-bit
// integer hi·2⁶⁴ + lo; bucket key holds values m·2^p in units of 2⁻¹⁰⁷⁴,
// with p = max(e − 1, 0) for the biased exponent e = key >> 4.
type hist struct {
	count  [numKeys]uint32
	hi, lo [numKeys]uint64
}

var histPool = sync.Pool{New: func() any { return new(hist) }}

// histogram validates eta2 and returns its buckets. The parts of eta2 are
// counted on separate goroutines and added: integer sums, so the result
// does not depend on the split. The error is that of the lowest invalid
// index.
func histogram(eta2 []float64) (*hist, error) {
	n := len(eta2)
	nw := max(1, min(runtime.GOMAXPROCS(0), n/histGrain, 16))
	hs := make([]*hist, nw)
	errs := make([]error, nw)
	bounds := parallel.Even(nil, nw, n)
	parallel.Run(nw, func(w int) {
		h := histPool.Get().(*hist)
		clear(h.count[:])
		clear(h.hi[:])
		clear(h.lo[:])
		hs[w] = h
		lo, hi := bounds[w], bounds[w+1]
		for i, v := range eta2[lo:hi] {
			if !valid(v) {
				errs[w] = indicatorErr(lo+i, v)
				return
			}
			if v == 0 {
				continue
			}
			b := math.Float64bits(v)
			key := b >> keyShift
			m := b & (1<<52 - 1)
			if b>>52 != 0 {
				m |= 1 << 52
			}
			h.count[key]++
			var c uint64
			h.lo[key], c = bits.Add64(h.lo[key], m, 0)
			h.hi[key] += c
		}
	})
	var err error
	for _, e := range errs {
		if e != nil {
			err = e // the lowest part's, so the lowest invalid index
			break
		}
	}
	for _, h := range hs[1:] {
		if h != nil {
			defer histPool.Put(h)
		}
	}
	if err != nil {
		if hs[0] != nil {
			histPool.Put(hs[0])
		}
		return nil, err
	}
	h := hs[0]
	for _, g := range hs[1:] {
		for key := range numKeys {
			if g.count[key] == 0 {
				continue
			}
			h.count[key] += g.count[key]
			var c uint64
			h.lo[key], c = bits.Add64(h.lo[key], g.lo[key], 0)
			h.hi[key] += g.hi[key] + c
		}
	}
	return h, nil
}

// collect sets dst[i] for the positive indicators of the buckets above
// cross and appends the indices of bucket cross to idx, in index order.
func collect(dst []bool, eta2 []float64, cross int, idx []int32) []int32 {
	n := len(eta2)
	nw := max(1, min(runtime.GOMAXPROCS(0), n/histGrain, 16))
	parts := make([][]int32, nw)
	bounds := parallel.Even(nil, nw, n)
	parallel.Run(nw, func(w int) {
		lo, hi := bounds[w], bounds[w+1]
		var part []int32
		if w == 0 {
			part = idx
		}
		c := uint64(cross)
		for i, v := range eta2[lo:hi] {
			key := math.Float64bits(v) >> keyShift
			dst[lo+i] = v > 0 && key > c
			if key == c && v > 0 {
				part = append(part, int32(lo+i))
			}
		}
		parts[w] = part
	})
	idx = parts[0]
	for _, p := range parts[1:] {
		idx = append(idx, p...)
	}
	return idx
}

// addBucket adds the bucket sum hi·2⁶⁴ + lo (hi < 2²⁰) of bucket key.
func (a *exactSum) addBucket(hi, lo uint64, key int) {
	if hi == 0 && lo == 0 {
		return
	}
	p := uint(0)
	if e := uint(key >> 4); e != 0 {
		p = e - 1
	}
	i, s := p>>5, p&31
	// (hi, lo) << s is below 2¹¹⁶: four base-2³² digits.
	x0 := lo << s
	x1 := hi<<s | lo>>(64-s) // lo >> 64 is 0 in Go
	a[i] += x0 & digit
	a[i+1] += x0 >> 32
	a[i+2] += x1 & digit
	a[i+3] += x1 >> 32
}

// float64 returns a·2⁻¹⁰⁷⁴⁻ˢʰⁱᶠᵗ rounded to the nearest float64 (ties to
// even; +Inf beyond the range); a must be normalized.
func (a *exactSum) float64(shift int) float64 {
	var words [len(exactSum{}) / 2]big.Word
	var z big.Int
	if bits.UintSize == 64 {
		for i := range words {
			words[i] = big.Word(a[2*i] | a[2*i+1]<<32)
		}
		z.SetBits(words[:])
	} else {
		w := make([]big.Word, len(a))
		for i, d := range a {
			w[i] = big.Word(d)
		}
		z.SetBits(w)
	}
	var f big.Float
	f.SetPrec(uint(len(a)) * 32).SetInt(&z)
	f.SetMantExp(&f, -1074-shift)
	v, _ := f.Float64()
	return v
}
