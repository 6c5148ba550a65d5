package mesh

import (
	"math"
	"strconv"
	"strings"
)

// tick is a labelled position on an axis or on the colour bar: at is a
// coordinate of the plane on an axis, a position in [0, 1] on the bar.
type tick struct {
	at    float64
	label string
}

// niceStep returns the step of about n ticks over a range of width span:
// 1, 2 or 5 times a power of ten, the smallest such not below span/n
// (common practice, no source).
func niceStep(span float64, n int) float64 {
	raw := span / float64(n)
	if !(raw > 0) || math.IsInf(raw, 0) {
		return 0
	}
	p := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, f := range []float64{1, 2, 5, 10} {
		if f*p >= raw*(1-1e-12) {
			return f * p
		}
	}
	return 10 * p
}

// axisTicks returns the multiples of niceStep(hi - lo, n) in [lo, hi],
// labelled with as many digits as the step needs.
func axisTicks(lo, hi float64, n int) []tick {
	step := niceStep(2*(hi/2-lo/2), n)
	if step == 0 || math.IsInf(step, 0) {
		return nil
	}
	k0, k1 := math.Ceil(lo/step*(1-1e-12)-1e-9), math.Floor(hi/step*(1+1e-12)+1e-9)
	if !(k1-k0 < 4*float64(n)+2) {
		return nil
	}
	var ts []tick
	for k := k0; k <= k1; k++ {
		x := k * step
		if x < lo-1e-9*step || x > hi+1e-9*step {
			continue
		}
		ts = append(ts, tick{at: x, label: formatTick(k, step)})
	}
	return ts
}

// barTicks returns the ticks of the colour bar of scale s: for a constant
// field its value in the middle; on a log scale the powers of ten in the
// range if there are at least two (every second, third, ... if there are
// more than eight), else the values 1, 2, 5 × 10^k in the range (or 1 to
// 9 × 10^k), else nice values as on a linear scale; on a linear
// scale the multiples of a nice step.
func barTicks(s scale) []tick {
	if !(s.hi > s.lo) {
		v := s.tick(0.5)
		return []tick{{at: 0.5, label: formatValue(v)}}
	}
	if s.log {
		d0, d1 := math.Ceil(s.lo-1e-9), math.Floor(s.hi+1e-9)
		if d1 > d0 {
			step := math.Ceil((d1 - d0 + 1) / 8)
			var ts []tick
			for d := d0; d <= d1; d += step {
				ts = append(ts, tick{at: (d - s.lo) / (s.hi - s.lo), label: "1e" + strconv.Itoa(int(d))})
			}
			return ts
		}
		// Less than two powers of ten: the values 1, 2, 5 × 10^k in the
		// range, or all the digits 1 to 9 × 10^k if those are fewer than
		// two.
		for _, digits := range [][]float64{{1, 2, 5}, {1, 2, 3, 4, 5, 6, 7, 8, 9}} {
			var ts []tick
			for d := d0 - 1; d <= d1; d++ {
				for _, f := range digits {
					v := f * math.Pow(10, d)
					if at := (math.Log10(v) - s.lo) / (s.hi - s.lo); at >= -1e-9 && at <= 1+1e-9 {
						ts = append(ts, tick{at: at, label: formatTick(f, math.Pow(10, d))})
					}
				}
			}
			if len(ts) >= 2 {
				return ts
			}
		}
		lo, hi := math.Pow(10, s.lo), math.Pow(10, s.hi)
		var ts []tick
		for _, t := range axisTicks(lo, hi, 4) {
			ts = append(ts, tick{at: (math.Log10(t.at) - s.lo) / (s.hi - s.lo), label: t.label})
		}
		return ts
	}
	var ts []tick
	for _, t := range axisTicks(s.lo, s.hi, 5) {
		ts = append(ts, tick{at: (t.at/2 - s.lo/2) / (s.hi/2 - s.lo/2), label: t.label})
	}
	return ts
}

// formatTick formats k·step with the digits that step needs: fixed point
// for moderate magnitudes, else a short exponent form (1.5e-7).
func formatTick(k, step float64) string {
	x := k * step
	if k == 0 {
		return "0"
	}
	e := math.Floor(math.Log10(step) + 1e-9)
	a := math.Abs(x)
	if a >= 1e5 || a < 1e-3 || e < -4 {
		digits := max(0, int(math.Floor(math.Log10(a)+1e-9)-e))
		return shortExp(strconv.FormatFloat(x, 'e', digits, 64))
	}
	return strconv.FormatFloat(x, 'f', max(0, int(-e)), 64)
}

// formatValue formats a single value with three significant digits.
func formatValue(v float64) string {
	a := math.Abs(v)
	if v != 0 && (a >= 1e5 || a < 1e-3) {
		return shortExp(strconv.FormatFloat(v, 'e', 2, 64))
	}
	return strconv.FormatFloat(v, 'g', 3, 64)
}

// shortExp removes the plus sign and leading zeros of an exponent and
// trailing zeros of the mantissa: 1.50e-07 becomes 1.5e-7.
func shortExp(s string) string {
	m, e, ok := strings.Cut(s, "e")
	if !ok {
		return s
	}
	if strings.Contains(m, ".") {
		m = strings.TrimRight(strings.TrimRight(m, "0"), ".")
	}
	sign := ""
	if e[0] == '-' {
		sign = "-"
	}
	e = strings.TrimLeft(e[1:], "0")
	if e == "" {
		e = "0"
	}
	return m + "e" + sign + e
}
