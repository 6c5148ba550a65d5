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

// TestResize checks that Resize and ResizeRoom reuse an array with room,
// and otherwise allocate exactly n (Resize, and ResizeRoom for a first
// array) or n·(1 + Headroom) (ResizeRoom replacing an array).
func TestResize(t *testing.T) {
	s := make([]int, 3, 10)
	if r := Resize(s, 8); len(r) != 8 || &r[0] != &s[0] {
		t.Errorf("Resize(cap 10, 8): len %d, same array %v", len(r), &r[0] == &s[0])
	}
	if r := Resize(s, 11); len(r) != 11 || cap(r) != 11 {
		t.Errorf("Resize(cap 10, 11): len %d cap %d, want 11 11", len(r), cap(r))
	}
	if r := ResizeRoom(s, 9); len(r) != 9 || &r[0] != &s[0] {
		t.Errorf("ResizeRoom(cap 10, 9): len %d, same array %v", len(r), &r[0] == &s[0])
	}
	if r := ResizeRoom(s, 20); len(r) != 20 || cap(r) != 30 {
		t.Errorf("ResizeRoom(cap 10, 20): len %d cap %d, want 20 30", len(r), cap(r))
	}
	if r := ResizeRoom[int](nil, 20); len(r) != 20 || cap(r) != 20 {
		t.Errorf("ResizeRoom(nil, 20): len %d cap %d, want 20 20", len(r), cap(r))
	}
}
