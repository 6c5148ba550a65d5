package sparse

import (
	"errors"
	"math"
	"runtime"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestMulVecAgainstDense compares MulVec with the dense product of the
// reference library, gonum (mat.Dense.MulVec), on random sparse matrices.
func TestMulVecAgainstDense(t *testing.T) {
	rnd := newRand()
	for _, sz := range []struct{ r, c int }{{1, 1}, {7, 3}, {3, 7}, {50, 50}, {200, 120}} {
		for _, dens := range []float64{0.02, 0.1, 0.5} {
			ti, tj, tv := randomTriplets(rnd, sz.r, sz.c, dens)
			m, err := FromTriplets(sz.r, sz.c, ti, tj, tv)
			if err != nil {
				t.Fatal(err)
			}
			x := randomVec(rnd, sz.c)
			got := make([]float64, sz.r)
			m.MulVec(got, x)

			var want mat.VecDense
			want.MulVec(m.Dense(), mat.NewVecDense(sz.c, x))
			if d := relDiff(got, want.RawVector().Data); d > 1e-13 {
				t.Errorf("%dx%d density %g: relative difference %g from gonum", sz.r, sz.c, dens, d)
			}
		}
	}
}

// TestMulVecParallelDeterministic checks that a matrix above the parallel
// threshold gives bit-identical products for different GOMAXPROCS, and that
// they equal a plain serial loop.
func TestMulVecParallelDeterministic(t *testing.T) {
	m := laplacian2D(t, 250, 200) // 50000 rows > parallelRows
	if m.Rows <= parallelRows {
		t.Fatal("test matrix below the parallel threshold")
	}
	rnd := newRand()
	// Perturb the values so the sums are not exact in floating point.
	for k := range m.Val {
		m.Val[k] *= 1 + 0.1*rnd.Float64()
	}
	x := randomVec(rnd, m.Cols)

	serial := make([]float64, m.Rows)
	m.mulRows(serial, x, 0, m.Rows)

	old := runtime.GOMAXPROCS(0)
	defer runtime.GOMAXPROCS(old)
	for _, procs := range []int{1, 2, 3, 7} {
		runtime.GOMAXPROCS(procs)
		got := make([]float64, m.Rows)
		m.MulVec(got, x)
		for i := range got {
			if math.Float64bits(got[i]) != math.Float64bits(serial[i]) {
				t.Fatalf("GOMAXPROCS=%d: row %d = %v, serial %v", procs, i, got[i], serial[i])
			}
		}
	}
}

func TestMulVecPanics(t *testing.T) {
	m := laplacian2D(t, 3, 3)
	mustPanic(t, "short x", func() { m.MulVec(make([]float64, 9), make([]float64, 8)) })
	mustPanic(t, "short dst", func() { m.MulVec(make([]float64, 8), make([]float64, 9)) })
	v := make([]float64, 9)
	mustPanic(t, "alias", func() { m.MulVec(v, v) })
}

func TestAtIndexDiagonal(t *testing.T) {
	// [ 4 1 0 ]
	// [ 1 3 0 ]
	// [ 0 0 2 ]
	// [ 0 5 0 ]
	m := &CSR{Rows: 4, Cols: 3,
		RowPtr: []int32{0, 2, 4, 5, 6},
		Col:    []int32{0, 1, 0, 1, 2, 1},
		Val:    []float64{4, 1, 1, 3, 2, 5},
	}
	if err := m.Validate(); err != nil {
		t.Fatal(err)
	}
	want := mat.NewDense(4, 3, []float64{4, 1, 0, 1, 3, 0, 0, 0, 2, 0, 5, 0})
	if !mat.Equal(m, want) {
		t.Errorf("At disagrees with dense:\n%v", mat.Formatted(m))
	}
	if !mat.Equal(m.Dense(), want) {
		t.Error("Dense disagrees")
	}
	if !mat.Equal(m.T(), want.T()) {
		t.Error("T disagrees")
	}
	if r, c := m.Dims(); r != 4 || c != 3 {
		t.Errorf("Dims = %d, %d", r, c)
	}
	if m.NNZ() != 6 {
		t.Errorf("NNZ = %d", m.NNZ())
	}
	for _, tc := range []struct{ i, j, k int }{
		{0, 0, 0}, {0, 1, 1}, {0, 2, -1}, {1, 0, 2}, {2, 2, 4}, {3, 1, 5}, {3, 0, -1},
		{-1, 0, -1}, {4, 0, -1}, {0, 3, -1},
	} {
		if k := m.Index(tc.i, tc.j); k != tc.k {
			t.Errorf("Index(%d,%d) = %d, want %d", tc.i, tc.j, k, tc.k)
		}
	}
	if d := m.Diagonal(nil); !slices.Equal(d, []float64{4, 3, 2}) {
		t.Errorf("Diagonal = %v", d)
	}
	d := []float64{9, 9, 9}
	if m.Diagonal(d); !slices.Equal(d, []float64{4, 3, 2}) {
		t.Errorf("Diagonal(dst) = %v", d)
	}
	mustPanic(t, "Diagonal wrong length", func() { m.Diagonal(make([]float64, 4)) })
	mustPanic(t, "At row", func() { m.At(4, 0) })
	mustPanic(t, "At col", func() { m.At(0, -1) })
	func() {
		defer func() {
			if e := recover(); e != mat.ErrRowAccess {
				t.Errorf("At(-1,0) panicked with %v, want mat.ErrRowAccess", e)
			}
		}()
		m.At(-1, 0)
	}()
}

func TestValidateErrors(t *testing.T) {
	good := func() *CSR {
		return &CSR{Rows: 2, Cols: 2, RowPtr: []int32{0, 2, 3}, Col: []int32{0, 1, 1}, Val: []float64{1, 2, 3}}
	}
	if err := good().Validate(); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name   string
		modify func(m *CSR)
		want   error
		entry  bool
	}{
		{"negative rows", func(m *CSR) { m.Rows = -1 }, ErrDims, false},
		{"short RowPtr", func(m *CSR) { m.RowPtr = m.RowPtr[:2] }, ErrStructure, false},
		{"short Val", func(m *CSR) { m.Val = m.Val[:2] }, ErrStructure, false},
		{"RowPtr[0]", func(m *CSR) { m.RowPtr[0] = 1 }, ErrStructure, false},
		{"RowPtr end", func(m *CSR) { m.RowPtr[2] = 2 }, ErrStructure, false},
		{"RowPtr decreasing", func(m *CSR) { m.RowPtr[1] = 4; m.RowPtr[2] = 3 }, ErrStructure, false},
		{"column range", func(m *CSR) { m.Col[1] = 2 }, ErrIndex, true},
		{"negative column", func(m *CSR) { m.Col[0] = -1 }, ErrIndex, true},
		{"column order", func(m *CSR) { m.Col[0] = 1 }, ErrStructure, true},
		{"NaN", func(m *CSR) { m.Val[2] = math.NaN() }, ErrNotFinite, true},
		{"Inf", func(m *CSR) { m.Val[0] = math.Inf(-1) }, ErrNotFinite, true},
	} {
		m := good()
		tc.modify(m)
		err := m.Validate()
		if !errors.Is(err, tc.want) {
			t.Errorf("%s: got %v, want %v", tc.name, err, tc.want)
			continue
		}
		var ee *EntryError
		if errors.As(err, &ee) != tc.entry {
			t.Errorf("%s: EntryError = %v, want %v (%v)", tc.name, !tc.entry, tc.entry, err)
		}
		if msg := err.Error(); len(msg) < 7 || msg[:7] != "sparse:" {
			t.Errorf("%s: message %q lacks prefix", tc.name, msg)
		}
	}
	var ee *EntryError
	m := good()
	m.Val[2] = math.NaN()
	if errors.As(m.Validate(), &ee); ee == nil || ee.Row != 1 || ee.Col != 1 {
		t.Errorf("NaN entry located at %+v, want (1,1)", ee)
	}
}

func TestEmptyMatrix(t *testing.T) {
	m, err := FromTriplets(0, 0, nil, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	if err := m.Validate(); err != nil {
		t.Fatal(err)
	}
	m.MulVec(nil, nil)
	if d := m.Dense(); !d.IsEmpty() {
		t.Error("Dense of 0x0 not empty")
	}
}
