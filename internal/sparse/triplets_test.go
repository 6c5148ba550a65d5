package sparse

import (
	"errors"
	"math"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"
)

func TestFromTripletsDuplicatesAndEmptyRows(t *testing.T) {
	// 5x4 matrix; rows 1 and 4 are empty; (0,2) and (3,0) repeat; the
	// triplets arrive out of order.
	ti := []int32{3, 0, 2, 0, 3, 0, 3, 2}
	tj := []int32{0, 2, 3, 0, 0, 2, 3, 1}
	tv := []float64{1, 2, 5, 7, 10, 0.5, -1, 4}
	m, err := FromTriplets(5, 4, ti, tj, tv)
	if err != nil {
		t.Fatal(err)
	}
	if err := m.Validate(); err != nil {
		t.Fatal(err)
	}
	if want := []int32{0, 2, 2, 4, 6, 6}; !slices.Equal(m.RowPtr, want) {
		t.Errorf("RowPtr = %v, want %v", m.RowPtr, want)
	}
	if want := []int32{0, 2, 1, 3, 0, 3}; !slices.Equal(m.Col, want) {
		t.Errorf("Col = %v, want %v", m.Col, want)
	}
	if want := []float64{7, 2.5, 4, 5, 11, -1}; !slices.Equal(m.Val, want) {
		t.Errorf("Val = %v, want %v", m.Val, want)
	}
	if got := m.At(3, 0); got != 11 {
		t.Errorf("At(3,0) = %g, want 11", got)
	}
	if got := m.At(1, 1); got != 0 {
		t.Errorf("At(1,1) = %g, want 0", got)
	}
	if k := m.Index(0, 2); k != 1 || m.Val[k] != 2.5 {
		t.Errorf("Index(0,2) = %d", k)
	}
	if k := m.Index(1, 0); k != -1 {
		t.Errorf("Index(1,0) = %d, want -1 (empty row)", k)
	}
}

// TestFromTripletsSumOrder checks that duplicates are summed in input order:
// 1e16 + 1 - 1e16 is 0 in floating point, while 1e16 - 1e16 + 1 is 1.
func TestFromTripletsSumOrder(t *testing.T) {
	ti := []int32{0, 1, 0, 0, 1, 1}
	tj := []int32{0, 0, 0, 0, 0, 0}
	tv := []float64{1e16, 1e16, 1, -1e16, -1e16, 1}
	m, err := FromTriplets(2, 1, ti, tj, tv)
	if err != nil {
		t.Fatal(err)
	}
	if m.Val[0] != 0 || m.Val[1] != 1 {
		t.Errorf("sums %v, want [0 1] (input order)", m.Val)
	}
}

// TestFromTripletsRandom compares with a dense accumulation done with the
// reference library, gonum.
func TestFromTripletsRandom(t *testing.T) {
	rnd := newRand()
	ti, tj, tv := randomTriplets(rnd, 40, 30, 0.8) // many duplicates
	m, err := FromTriplets(40, 30, ti, tj, tv)
	if err != nil {
		t.Fatal(err)
	}
	if err := m.Validate(); err != nil {
		t.Fatal(err)
	}
	want := mat.NewDense(40, 30, nil)
	for k := range tv {
		i, j := int(ti[k]), int(tj[k])
		want.Set(i, j, want.At(i, j)+tv[k])
	}
	if !mat.EqualApprox(m, want, 1e-14) {
		t.Error("FromTriplets differs from dense accumulation")
	}
}

func TestFromTripletsErrors(t *testing.T) {
	for _, tc := range []struct {
		name       string
		rows, cols int
		ti, tj     []int32
		tv         []float64
		want       error
		row, col   int // location for EntryError, -2 if none
	}{
		{"negative rows", -1, 2, nil, nil, nil, ErrDims, -2, -2},
		{"lengths", 2, 2, []int32{0}, []int32{0, 1}, []float64{1}, ErrDims, -2, -2},
		{"lengths v", 2, 2, []int32{0}, []int32{0}, []float64{1, 2}, ErrDims, -2, -2},
		{"row range", 2, 2, []int32{0, 2}, []int32{0, 0}, []float64{1, 1}, ErrIndex, 2, 0},
		{"col range", 2, 2, []int32{0, 1}, []int32{0, -1}, []float64{1, 1}, ErrIndex, 1, -1},
		{"NaN", 2, 2, []int32{0, 1}, []int32{0, 1}, []float64{1, math.NaN()}, ErrNotFinite, 1, 1},
		{"Inf", 2, 2, []int32{1}, []int32{0}, []float64{math.Inf(1)}, ErrNotFinite, 1, 0},
		{"overflow", 2, 2, []int32{1, 1}, []int32{0, 0}, []float64{math.MaxFloat64, math.MaxFloat64}, ErrNotFinite, 1, 0},
	} {
		m, err := FromTriplets(tc.rows, tc.cols, tc.ti, tc.tj, tc.tv)
		if m != nil || !errors.Is(err, tc.want) {
			t.Errorf("%s: got %v, %v; want error %v", tc.name, m, err, tc.want)
			continue
		}
		var ee *EntryError
		isEntry := errors.As(err, &ee)
		if isEntry != (tc.row != -2) {
			t.Errorf("%s: EntryError %v, want %v", tc.name, isEntry, tc.row != -2)
		} else if isEntry && (ee.Row != tc.row || ee.Col != tc.col) {
			t.Errorf("%s: located at (%d,%d), want (%d,%d)", tc.name, ee.Row, ee.Col, tc.row, tc.col)
		}
		t.Logf("%s: %v", tc.name, err)
	}
}
