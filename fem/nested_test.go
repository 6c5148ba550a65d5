package fem

import (
	"math"
	"testing"

	"github.com/posteriori-fem/posteriori/internal/amg"
	"github.com/posteriori-fem/posteriori/internal/sparse"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Nested on a sequence of graded meshes (bisection towards a corner,
// renumbered as the adaptive loop does), with reaction, Dirichlet and
// Neumann data: every solve agrees with System.Solve's, CG needs few
// iterations, the hierarchies reuse the base's levels, and where they do,
// the base's matrix is the Galerkin product Pᵀ A P of the new matrix and
// the composed interpolation (nested P1 spaces, a form integrated exactly:
// common practice, no source), to rounding.
func TestNested(t *testing.T) {
	t.Parallel()
	_, p := smooth()
	m, err := mesh.Rectangle(0, 0, 1, 1, 4, 4)
	if err != nil {
		t.Fatal(err)
	}
	var n Nested
	n.Ratio = 3
	var baseSys *System
	reused, checked := 0, 0
	for step := range 12 {
		s, err := NewSpace(m, 1)
		if err != nil {
			t.Fatal(err)
		}
		sys, err := Assemble(s, p)
		if err != nil {
			t.Fatal(err)
		}
		base := n.base
		ps, err := n.Prepare(sys)
		if err != nil {
			t.Fatal(err)
		}
		h := ps.pre.(*amg.Hierarchy)
		if step > 0 && base != nil {
			reused++
			if h.Levels() != base.Levels()+1 {
				t.Errorf("step %d: %d levels on a base of %d", step, h.Levels(), base.Levels())
			}
			if n.rows != nil { // not rebased: the rows are the masked P of this system
				galerkin(t, step, sys, n.rows, baseSys)
				checked++
			}
		}
		if n.base == h {
			baseSys = sys
		}
		u, st, err := ps.Solve(SolveSettings{Tol: 1e-10})
		if err != nil {
			t.Fatal(err)
		}
		ref, rst, err := sys.Solve(SolveSettings{Tol: 1e-10})
		if err != nil {
			t.Fatal(err)
		}
		scale, diff := 0.0, 0.0
		for i, v := range ref.U {
			scale, diff = max(scale, math.Abs(v)), max(diff, math.Abs(v-u.U[i]))
		}
		t.Logf("step %d: %d DOFs, %d iterations (a new hierarchy: %d), |u − u_ref| = %.2g", step, s.NumDOF(), st.Iterations, rst.Iterations, diff)
		if diff > 1e-8*scale {
			t.Errorf("step %d: solutions differ by %g (scale %g)", step, diff, scale)
		}
		// A new hierarchy of a small system is one dense factorisation (one
		// iteration); against it, only the bound.
		if st.Iterations > 16 || rst.Iterations > 1 && st.Iterations > rst.Iterations+4 {
			t.Errorf("step %d: %d iterations, a new hierarchy needs %d", step, st.Iterations, rst.Iterations)
		}
		// Refine towards the corner (0, 0) and renumber, as the loop does.
		marks := make([]bool, m.NumTriangles())
		for k := range marks {
			x, y := 0.0, 0.0
			for _, v := range m.Tri[3*k : 3*k+3] {
				x, y = x+m.X[2*v]/3, y+m.X[2*v+1]/3
			}
			marks[k] = math.Hypot(x, y) < 0.5
		}
		next, par, err := m.Refine(marks)
		if err != nil {
			t.Fatal(err)
		}
		o, err := next.Renumber()
		if err != nil {
			t.Fatal(err)
		}
		if par, err = par.Compose(o); err != nil {
			t.Fatal(err)
		}
		n.Refine(m, par)
		m = next
	}
	t.Logf("%d steps reused a base, %d checked against the Galerkin product", reused, checked)
	if reused < 6 || checked < 3 {
		t.Errorf("only %d of 11 steps reused a base, %d checked", reused, checked)
	}
}

// galerkin checks that Pᵀ A P equals the base's matrix on the free DOFs.
func galerkin(t *testing.T, step int, sys *System, p *sparse.CSR, base *System) {
	t.Helper()
	a, ab := sys.A.csr(), base.A.csr()
	dir := make([]bool, ab.Rows)
	for _, d := range base.Dirichlet {
		dir[d] = true
	}
	x, y, z := make([]float64, p.Rows), make([]float64, p.Rows), make([]float64, p.Cols)
	e := make([]float64, p.Cols)
	worst, scale := 0.0, 0.0
	for j := range p.Cols {
		if dir[j] {
			continue
		}
		clear(e)
		e[j] = 1
		p.MulVec(x, e)
		a.MulVec(y, x)
		clear(z)
		for r := range p.Rows {
			for k := p.RowPtr[r]; k < p.RowPtr[r+1]; k++ {
				z[p.Col[k]] += p.Val[k] * y[r]
			}
		}
		for i := range p.Cols {
			if dir[i] {
				continue
			}
			v := ab.At(i, j)
			scale, worst = max(scale, math.Abs(v)), max(worst, math.Abs(z[i]-v))
		}
	}
	if worst > 1e-12*scale {
		t.Errorf("step %d: Pᵀ A P differs from the base's matrix by %g (scale %g)", step, worst, scale)
	}
}
