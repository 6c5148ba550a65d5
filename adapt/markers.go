package adapt

import "math"

// Maximum is the maximum strategy (Babuška and Vogelius, "Feedback and
// adaptive finite element solution of one-dimensional boundary value
// problems", Numer. Math. 44 (1984) 75–102): Mark marks every triangle T
// with
//
//	η_T ≥ θ · max_S η_S,   0 ≤ θ ≤ 1,
//
// tested on the squares as η_T² ≥ (θ·θ)·max_S η_S², in float64, so that no
// square root is taken. θ = 1 marks the triangles that attain the maximum
// (all of them, when several tie); θ = 0 marks every triangle. When every
// η_T² is zero nothing is marked, whatever θ, and that is not an error.
//
// Cost: two passes over eta2, one for the maximum and one to mark.
// Theta outside [0, 1], or NaN, is an ErrTheta error.
type Maximum struct {
	Theta float64 // θ ∈ [0, 1]: the fraction of the largest η_T (not squared)
}

// Mark implements Marker.
func (m Maximum) Mark(dst []bool, eta2 []float64) ([]bool, error) {
	if !(m.Theta >= 0 && m.Theta <= 1) {
		return nil, thetaErr("Maximum.Theta", m.Theta, "0 ≤ θ ≤ 1")
	}
	top := 0.0
	for i, v := range eta2 {
		if !valid(v) {
			return nil, indicatorErr(i, v)
		}
		top = max(top, v)
	}
	dst = resize(dst, len(eta2))
	if top == 0 {
		return dst, nil
	}
	threshold := m.Theta * m.Theta * top
	for i, v := range eta2 {
		dst[i] = v >= threshold
	}
	return dst, nil
}

// Fraction marks a fixed share of the triangles: the k = ⌈F·N⌉ triangles
// with the largest indicators, N = len(eta2), 0 < F ≤ 1. Among equal
// indicators the lower index goes first (the marking order of Marker), so
// exactly k triangles are marked, zeros included when k exceeds the
// number of positive indicators.
//
// F·N is a float64 product, and decimal shares are not exact in binary:
// 0.07·100 evaluates to 7.000000000000001. A product within 4 units in
// the last place above an integer j is taken as j, so that F = 0.07,
// N = 100 marks 7 triangles, not 8.
//
// Cost: linear in N in expectation (selection, not sorting), with one
// int32 index per triangle as scratch (pooled between calls).
// F outside (0, 1], or NaN, is an ErrTheta error.
type Fraction struct {
	F float64 // F ∈ (0, 1]: the share of triangles to mark
}

// Mark implements Marker.
func (f Fraction) Mark(dst []bool, eta2 []float64) ([]bool, error) {
	if !(f.F > 0 && f.F <= 1) {
		return nil, thetaErr("Fraction.F", f.F, "0 < F ≤ 1")
	}
	n := len(eta2)
	if n > maxLen {
		return nil, sizeErr(n)
	}
	for i, v := range eta2 {
		if !valid(v) {
			return nil, indicatorErr(i, v)
		}
	}
	dst = resize(dst, n)
	k := fractionCount(f.F, n)
	if k >= n {
		for i := range dst {
			dst[i] = true
		}
		return dst, nil
	}
	p := getIndex(n)
	idx := (*p)[:n]
	for i := range idx {
		idx[i] = int32(i)
	}
	selectFirst(eta2, idx, k)
	markIndex(dst, idx[:k])
	*p = idx
	putIndex(p)
	return dst, nil
}

// fractionCount returns ⌈f·n⌉ clamped to [min(1, n), n], reading a product
// within 4 ulps above an integer as that integer.
func fractionCount(f float64, n int) int {
	x := f * float64(n)
	fl := math.Floor(x)
	if x-fl <= 4*0x1p-52*x {
		x = fl
	}
	k := int(math.Ceil(x))
	return min(max(k, min(1, n)), n)
}
