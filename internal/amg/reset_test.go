package amg_test

import (
	"errors"
	"math"
	"testing"

	"github.com/posteriori-fem/posteriori/internal/amg"
	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// sameCSR reports whether a and b are equal bit for bit (dimensions,
// structure and the bits of the values); both may be nil.
func sameCSR(a, b *sparse.CSR) bool {
	if a == nil || b == nil {
		return a == b
	}
	if a.Rows != b.Rows || a.Cols != b.Cols || len(a.RowPtr) != len(b.RowPtr) || len(a.Col) != len(b.Col) || len(a.Val) != len(b.Val) {
		return false
	}
	for i := range a.RowPtr {
		if a.RowPtr[i] != b.RowPtr[i] {
			return false
		}
	}
	for k := range a.Col {
		if a.Col[k] != b.Col[k] || math.Float64bits(a.Val[k]) != math.Float64bits(b.Val[k]) {
			return false
		}
	}
	return true
}

// TestReset checks that Hierarchy.Reset builds, in the memory of an old
// hierarchy, exactly the hierarchy New builds: the same level matrices and
// prolongators bit for bit, and the same V-cycle, bit for bit, for a
// sequence of matrices that grows (as in an adaptive loop), shrinks, and
// changes its settings, and after a Reset that failed. The larger matrix
// has more than amg.ColourRows rows, so that its finest level is smoothed
// by multicolour Gauss–Seidel.
func TestReset(t *testing.T) {
	small := csr(assemble(t, lshape, familyMesh(t, family{lshape, true, 1}, 1), 1).A)
	large := csr(assemble(t, lshape, familyMesh(t, family{lshape, true, 1}, 2), 1).A)
	p2 := csr(assemble(t, kellogg, familyMesh(t, family{kellogg, false, 2}, 0), 2).A)
	if large.Rows <= amg.ColourRows {
		t.Fatalf("large matrix has only %d rows, want > %d", large.Rows, amg.ColourRows)
	}
	steps := []struct {
		name string
		a    *sparse.CSR
		s    amg.Settings
	}{
		{"small", small, amg.Settings{}},
		{"large", large, amg.Settings{}},
		{"small again", small, amg.Settings{}},
		{"P2 Chebyshev", p2, amg.Settings{Theta: 0.1, Smoother: amg.Chebyshev, Smoothing: 2}},
		{"large Gauss–Seidel 2", large, amg.Settings{Smoothing: 2}},
		{"bad", &sparse.CSR{Rows: 2, Cols: 2, RowPtr: []int32{0, 2, 4}, Col: []int32{0, 1, 0, 1}, Val: []float64{-1, 2, 2, 1}}, amg.Settings{}},
		{"P2 after an error", p2, amg.Settings{Theta: 0.1}},
	}
	var h *amg.Hierarchy
	for _, st := range steps {
		want, wantErr := amg.New(st.a, st.s)
		var err error
		if h == nil {
			h, err = amg.New(st.a, st.s)
		} else {
			err = h.Reset(st.a, st.s)
		}
		if wantErr != nil {
			if !errors.Is(err, sparse.ErrNotPositive) || err.Error() != wantErr.Error() {
				t.Fatalf("%s: Reset error %v, want %v", st.name, err, wantErr)
			}
			if h.Levels() != 0 || h.Len() != 0 {
				t.Fatalf("%s: after a failed Reset, %d levels of %d unknowns, want none", st.name, h.Levels(), h.Len())
			}
			continue
		}
		if err != nil {
			t.Fatalf("%s: %v", st.name, err)
		}
		if h.Levels() != want.Levels() {
			t.Fatalf("%s: %d levels, want %d", st.name, h.Levels(), want.Levels())
		}
		for l := range want.Levels() {
			if !sameCSR(amg.LevelMatrix(h, l), amg.LevelMatrix(want, l)) {
				t.Fatalf("%s: matrix of level %d differs from New's", st.name, l)
			}
			if !sameCSR(amg.Prolongator(h, l), amg.Prolongator(want, l)) {
				t.Fatalf("%s: prolongator of level %d differs from New's", st.name, l)
			}
			if amg.LevelSolved(h, l) != amg.LevelSolved(want, l) {
				t.Fatalf("%s: level %d solved %v, want %v", st.name, l, amg.LevelSolved(h, l), amg.LevelSolved(want, l))
			}
		}
		n := st.a.Rows
		r := amg.RandomVector(n, 7)
		x, y := make([]float64, n), make([]float64, n)
		h.Apply(x, r)
		want.Apply(y, r)
		for i := range x {
			if math.Float64bits(x[i]) != math.Float64bits(y[i]) {
				t.Fatalf("%s: V-cycle entry %d is %v, want %v (New)", st.name, i, x[i], y[i])
			}
		}
	}
}
