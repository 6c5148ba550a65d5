package main

import (
	"math"
	"testing"
)

// Every panel labels its whole y range: after factorRange, the lowest
// tick lies at or below the smallest value and the highest at or above the
// largest, and both ends of the axis are ticks.
func TestFactorRangeLabelsData(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		lo, hi  float64
		top     string // label of the highest tick, worked by hand
		wantMin float64
	}{
		// P2 residual effectivities near 7.5 (issue 16's report): the top
		// label must be 8, not 4.
		{0.6, 7.5, "8", 0.5},
		{0.9, 1.3, "2", 0.5},
		{1, 1, "1", 1},
		{0.01, 100, "256", 1.0 / 256},
		{1e-3, 1e5, "1.048576e+06", math.Ldexp(1, -12)}, // 2^-10 to 2^17 in steps of 2^4
		{0.3, 3000, "4096", 0.25},
	} {
		lo, hi := factorRange(c.lo, c.hi)
		ts := factorTicks{}.Ticks(lo, hi)
		if len(ts) < 1 {
			t.Fatalf("[%g, %g]: no ticks", c.lo, c.hi)
		}
		first, last := ts[0], ts[len(ts)-1]
		if first.Value > c.lo || last.Value < c.hi {
			t.Errorf("[%g, %g]: ticks from %g to %g do not cover the data", c.lo, c.hi, first.Value, last.Value)
		}
		if first.Value != lo || last.Value != hi {
			t.Errorf("[%g, %g]: axis [%g, %g], ticks from %g to %g", c.lo, c.hi, lo, hi, first.Value, last.Value)
		}
		if last.Label != c.top || lo != c.wantMin {
			t.Errorf("[%g, %g]: top label %q, axis minimum %g; want %q, %g", c.lo, c.hi, last.Label, lo, c.top, c.wantMin)
		}
	}
	if lo, hi := factorRange(0, 1); lo != 0 || hi != 1 {
		t.Errorf("factorRange(0, 1) = %g, %g: a range that is not positive is returned as it is", lo, hi)
	}
}
