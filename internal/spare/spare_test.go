package spare

import "testing"

func TestTakeGive(t *testing.T) {
	b := Bin[int32]{Room: Headroom}
	if e := (&Bin[int32]{}).Take(10); cap(e) != 10 {
		t.Fatalf("Room 0: capacity %d, want 10", cap(e))
	}
	a := b.Take(10)
	if len(a) != 10 || cap(a) != 15 {
		t.Fatalf("new array: len %d cap %d, want 10 and 15", len(a), cap(a))
	}
	for i := range a {
		a[i] = int32(i + 1)
	}
	small := make([]int32, 4)
	b.Give(a, small, nil)
	if b.Len() != 2 {
		t.Fatalf("%d arrays held, want 2 (nil ignored)", b.Len())
	}
	// The least capacity that fits: small for 3, a for 12.
	if s := b.Take(3); &s[0] != &small[0] {
		t.Error("Take(3) did not reuse the 4-array")
	}
	z := b.TakeZero(12)
	if &z[:1][0] != &a[0] || len(z) != 12 {
		t.Error("TakeZero(12) did not reuse the 15-capacity array")
	}
	for i, v := range z {
		if v != 0 {
			t.Fatalf("TakeZero: value %d is %d", i, v)
		}
	}
	if b.Len() != 0 {
		t.Fatalf("%d arrays left, want 0", b.Len())
	}
	fit := Bin[int32]{Fit: 0.25}
	long := make([]int32, 100)
	fit.Give(long)
	if s := fit.Take(50); cap(s) == 100 {
		t.Error("Fit 0.25: Take(50) reused a 100-array")
	}
	if s := fit.Take(90); cap(s) != 100 {
		t.Error("Fit 0.25: Take(90) did not reuse the 100-array")
	}
	var nb *Bin[float64]
	nb.Give(make([]float64, 3))
	if s := nb.Take(5); len(s) != 5 || cap(s) != 5 || nb.Len() != 0 {
		t.Error("nil bin")
	}
}
