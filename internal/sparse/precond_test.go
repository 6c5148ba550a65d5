package sparse

import (
	"errors"
	"math"
	"strings"
	"testing"
)

func TestNewJacobi(t *testing.T) {
	m := laplacian2D(t, 4, 3)
	p, err := NewJacobi(m)
	if err != nil {
		t.Fatal(err)
	}
	if p.Len() != 12 {
		t.Errorf("Len = %d", p.Len())
	}
	r := randomVec(newRand(), 12)
	z := make([]float64, 12)
	p.Apply(z, r)
	for i := range z {
		if z[i] != r[i]/4 {
			t.Fatalf("Apply: z[%d] = %g, want %g", i, z[i], r[i]/4)
		}
	}
	mustPanic(t, "Apply length", func() { p.Apply(z[:3], r) })
}

func TestNewJacobiErrors(t *testing.T) {
	diag := func(d ...float64) *CSR {
		n := len(d)
		ti := make([]int32, n)
		for i := range ti {
			ti[i] = int32(i)
		}
		m, err := FromTriplets(n, n, ti, ti, d)
		if err != nil {
			t.Fatal(err)
		}
		return m
	}
	for _, tc := range []struct {
		name string
		m    *CSR
		want error
		row  int
	}{
		{"zero", diag(1, 2, 0, 4), ErrNotPositive, 2},
		{"negative", diag(1, -3, 2), ErrNotPositive, 1},
		{"missing", &CSR{Rows: 2, Cols: 2, RowPtr: []int32{0, 1, 2}, Col: []int32{0, 0}, Val: []float64{1, 1}}, ErrNotPositive, 1},
		{"NaN", &CSR{Rows: 1, Cols: 1, RowPtr: []int32{0, 1}, Col: []int32{0}, Val: []float64{math.NaN()}}, ErrNotFinite, 0},
		{"tiny", diag(1, 1e-310), ErrNotFinite, 1},
	} {
		p, err := NewJacobi(tc.m)
		if p != nil || !errors.Is(err, tc.want) {
			t.Errorf("%s: got %v, %v, want %v", tc.name, p, err, tc.want)
			continue
		}
		var ee *EntryError
		if !errors.As(err, &ee) || ee.Row != tc.row || ee.Col != tc.row {
			t.Errorf("%s: error %v does not locate row %d", tc.name, err, tc.row)
		}
		if !strings.Contains(err.Error(), "row ") {
			t.Errorf("%s: message %q does not name the row", tc.name, err)
		}
		t.Logf("%s: %v", tc.name, err)
	}
	if _, err := NewJacobi(&CSR{Rows: 1, Cols: 2, RowPtr: []int32{0, 0}}); !errors.Is(err, ErrDims) {
		t.Errorf("non-square: %v, want ErrDims", err)
	}
}

func TestIdentity(t *testing.T) {
	r := []float64{1, 2, 3}
	z := make([]float64, 3)
	Identity{}.Apply(z, r)
	if z[0] != 1 || z[1] != 2 || z[2] != 3 {
		t.Errorf("Identity.Apply = %v", z)
	}
	mustPanic(t, "Identity length", func() { Identity{}.Apply(z[:2], r) })
}
