package adapt

import (
	"bytes"
	"encoding/binary"
	"errors"
	"math"
	"slices"
	"testing"
)

// FuzzMarkers feeds arbitrary float64 indicators (NaN, ±Inf, negative,
// subnormal, huge) and parameters to the three markers. A marker must
// either return an error matching ErrTheta or ErrIndicator, or a mask of
// the right length that satisfies its definition.
func FuzzMarkers(f *testing.F) {
	enc := func(v ...float64) []byte {
		b := make([]byte, 8*len(v))
		for i, x := range v {
			binary.LittleEndian.PutUint64(b[8*i:], math.Float64bits(x))
		}
		return b
	}
	f.Add(0.5, enc(4, 1, 3, 2))
	f.Add(1.0, enc(0, 0, 1e-310, 1e300, 1e300))
	f.Add(0.3, enc(1, math.NaN(), 2))
	f.Add(-0.1, enc(1))
	f.Add(0.999, enc(5, 5, 5, 5, 5, 5, 5))
	f.Fuzz(func(t *testing.T, theta float64, raw []byte) {
		eta2 := make([]float64, len(raw)/8)
		for i := range eta2 {
			eta2[i] = math.Float64frombits(binary.LittleEndian.Uint64(raw[8*i:]))
		}
		valid := !slices.ContainsFunc(eta2, func(v float64) bool { return !(v >= 0) || math.IsInf(v, 0) })
		for _, mk := range []Marker{Dorfler{Theta: theta}, Maximum{Theta: theta}, Fraction{F: theta}} {
			marks, err := mk.Mark(nil, eta2)
			if err != nil {
				if marks != nil || !(errors.Is(err, ErrTheta) || errors.Is(err, ErrIndicator)) {
					t.Fatalf("%T: %v, %v", mk, marks, err)
				}
				if valid && theta > 0 && theta < 1 {
					t.Fatalf("%T rejected valid input θ=%g: %v", mk, theta, err)
				}
				continue
			}
			if len(marks) != len(eta2) {
				t.Fatalf("%T: %d marks for %d indicators", mk, len(marks), len(eta2))
			}
			if d, ok := mk.(Dorfler); ok {
				checkDorfler(t, d.Theta, eta2, marks)
			}
		}
	})
}

// checkDorfler verifies that the marked set holds the θ share (exactly, in
// big-float arithmetic, unless all positive indicators are marked) and that
// dropping its smallest member breaks the bound, i.e. it is minimal.
func checkDorfler(t *testing.T, theta float64, eta2 []float64, marks []bool) {
	t.Helper()
	total := 0.0
	for _, v := range eta2 {
		total += v
	}
	var in, smallest float64
	count, positive := 0, 0
	smallest = math.Inf(1)
	for i, v := range eta2 {
		if v > 0 {
			positive++
		}
		if marks[i] {
			in += v
			count++
			smallest = min(smallest, v)
		}
	}
	if total == 0 || math.IsInf(total, 0) {
		return // degenerate sums are covered by the unit tests
	}
	need := theta * total
	if count < positive && in < need*(1-1e-12) {
		t.Fatalf("marked %d holding %g < θ·total = %g", count, in, need)
	}
	if count > 1 && in-smallest >= need*(1+1e-12) {
		t.Fatalf("not minimal: without its smallest (%g) the set still holds %g ≥ %g", smallest, in-smallest, need)
	}
}

// FuzzCSV: ReadCSV never panics, and what it accepts writes back and reads
// again to the same records.
func FuzzCSV(f *testing.F) {
	var b bytes.Buffer
	_ = WriteCSV(&b, []Step{{Step: 0, Triangles: 24, DOFs: 21, FreeDOFs: 5, Estimate: 0.9, HasError: true, Error: 0.3, Effectivity: 3}})
	f.Add(b.String())
	f.Add("step\n")
	f.Add(b.String() + "1,2,3,4,5,6,,,7,8,9,10,11,12,13,true\n")
	f.Fuzz(func(t *testing.T, s string) {
		steps, err := ReadCSV(bytes.NewBufferString(s))
		if err != nil {
			if !errors.Is(err, ErrCSV) {
				t.Fatalf("error %v does not match ErrCSV", err)
			}
			return
		}
		var out bytes.Buffer
		if err := WriteCSV(&out, steps); err != nil {
			t.Fatal(err)
		}
		again, err := ReadCSV(&out)
		if err != nil || !slices.Equal(again, steps) {
			t.Fatalf("round trip: %v, %v vs %v", err, again, steps)
		}
	})
}
