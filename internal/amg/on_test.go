package amg_test

import (
	"errors"
	"testing"

	"github.com/posteriori-fem/posteriori/internal/amg"
	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// NewOn on a uniform refinement of the unit square, with the P1
// interpolation from the coarse mesh: CG converges in about as many
// iterations as with a new hierarchy; bad arguments are errors, and a
// hierarchy built by NewOn refuses Reset.
func TestNewOn(t *testing.T) {
	t.Parallel()
	coarseMesh := baseMesh(t, square, 16)
	fine, par, err := coarseMesh.RefineUniform()
	if err != nil {
		t.Fatal(err)
	}
	cs, fs := assemble(t, square, coarseMesh, 1), assemble(t, square, fine, 1)
	ac, af := csr(cs.A), csr(fs.A)
	cdir, fdir := map[int32]bool{}, map[int32]bool{}
	for _, d := range cs.Dirichlet {
		cdir[d] = true
	}
	for _, d := range fs.Dirichlet {
		fdir[d] = true
	}
	// P: a kept vertex takes its coarse hat, the midpoint of a–b half of
	// each; Dirichlet rows and columns left out.
	p := &sparse.CSR{Rows: af.Rows, Cols: ac.Rows, RowPtr: make([]int32, 1, af.Rows+1)}
	for v, pv := range par.Vertex {
		if !fdir[int32(v)] {
			var cols []int32
			if int(pv) < par.OldVertices {
				cols = []int32{pv}
			} else {
				e := int(pv) - par.OldVertices
				a, b := coarseMesh.Edge[2*e], coarseMesh.Edge[2*e+1]
				cols = []int32{min(a, b), max(a, b)}
			}
			for _, c := range cols {
				if !cdir[c] {
					w := 1.0
					if len(cols) == 2 {
						w = 0.5
					}
					p.Col, p.Val = append(p.Col, c), append(p.Val, w)
				}
			}
		}
		p.RowPtr = append(p.RowPtr, int32(len(p.Col)))
	}
	coarse, err := amg.New(ac, amg.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	h, err := amg.NewOn(af, p, coarse)
	if err != nil {
		t.Fatal(err)
	}
	if h.Levels() != coarse.Levels()+1 {
		t.Errorf("%d levels on a coarse hierarchy of %d", h.Levels(), coarse.Levels())
	}
	_, on := solve(t, af, fs.B, h, 1e-10)
	ref, err := amg.New(af, amg.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	_, fresh := solve(t, af, fs.B, ref, 1e-10)
	t.Logf("%d unknowns: %d iterations on the coarse hierarchy, %d with a new one", af.Rows, on.Iterations, fresh.Iterations)
	if on.Iterations > fresh.Iterations+3 {
		t.Errorf("%d iterations, a new hierarchy needs %d", on.Iterations, fresh.Iterations)
	}
	if err := h.Reset(af, amg.Settings{}); !errors.Is(err, sparse.ErrSettings) {
		t.Errorf("Reset of a NewOn hierarchy: err = %v, want ErrSettings", err)
	}
	bad := *p
	bad.Cols++
	for _, tc := range []struct {
		name    string
		a, p    *sparse.CSR
		coarse  *amg.Hierarchy
		wantErr error
	}{
		{"nil coarse", af, p, nil, sparse.ErrDims},
		{"nil prolongation", af, nil, coarse, sparse.ErrDims},
		{"prolongation too wide", af, &bad, coarse, sparse.ErrDims},
		{"prolongation of another size", ac, p, coarse, sparse.ErrDims},
	} {
		if _, err := amg.NewOn(tc.a, tc.p, tc.coarse); !errors.Is(err, tc.wantErr) {
			t.Errorf("%s: err = %v, want %v", tc.name, err, tc.wantErr)
		}
	}
}
