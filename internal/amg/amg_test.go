package amg_test

import (
	"errors"
	"fmt"
	"math"
	"os"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/posteriori-fem/posteriori/internal/amg"
	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// TestIterationsBounded checks mesh-independent convergence: the number of
// CG iterations preconditioned by one V-cycle, to relative residual 1e-8
// from zero, stays bounded as the mesh is refined from about 1e4 to about
// 1e6 unknowns. This is the classical property of multigrid, shown for
// smoothed aggregation by Vaněk, Mandel and Brezina, Computing 56 (1996)
// 179–196, whose bound does not depend on h; the limit of 25 iterations is
// ours. The problems are the L-shape (problems.LShape) and Kellogg's
// checkerboard with contrast 161.45 (problems.Kellogg) with P1 and P2
// elements on uniform meshes and on meshes graded towards the singular
// point. The members of about 1e6 unknowns (r = 3) take most of the time
// and run only when the environment variable POSTERIORI_SOAK is 1, as
// .ci/run sets it; under -short only the smallest members run.
func TestIterationsBounded(t *testing.T) {
	const limit = 25
	refinements := []int{0, 2}
	switch {
	case testing.Short():
		refinements = []int{0}
	case os.Getenv("POSTERIORI_SOAK") == "1":
		refinements = []int{0, 2, 3}
	}
	var table strings.Builder
	for _, deg := range []int{1, 2} {
		for _, d := range []domain{lshape, kellogg} {
			for _, graded := range []bool{false, true} {
				f := family{d: d, graded: graded, deg: deg}
				fmt.Fprintf(&table, "\n%-22s", f)
				for _, r := range refinements {
					sys := assemble(t, d, familyMesh(t, f, r), deg)
					h, err := amg.New(csr(sys.A), amg.Settings{})
					if err != nil {
						t.Fatal(err)
					}
					_, res := solve(t, csr(sys.A), sys.B, h, 1e-8)
					grid, op := h.Complexity()
					fmt.Fprintf(&table, "  n=%-8d it=%-3d (levels %d, complexity %.2f/%.2f)", sys.A.Rows, res.Iterations, h.Levels(), grid, op)
					if res.Iterations > limit {
						t.Errorf("%v, n = %d: %d iterations, want ≤ %d", f, sys.A.Rows, res.Iterations, limit)
					}
				}
			}
		}
	}
	t.Log(table.String())
}

// TestSymmetric checks that the V-cycle is a symmetric positive definite
// map, (x, M⁻¹y) = (M⁻¹x, y) and (x, M⁻¹x) > 0, as CG requires (Saad,
// Iterative Methods for Sparse Linear Systems, §9.2). The V-cycle is
// symmetric when the post-smoother is the adjoint of the pre-smoother and
// the coarse solve is symmetric (a standard fact of multigrid theory, see
// e.g. Hackbusch, Multi-Grid Methods and Applications, Springer 1985, on
// symmetric multigrid iterations; cited from memory). The asymmetry is
// measured relative to √((x, M⁻¹x)(y, M⁻¹y)), the Cauchy–Schwarz bound of
// (x, M⁻¹y). The members with r = 2 have more than amg.ColourRows rows,
// so that their fine level is smoothed by multicolour Gauss–Seidel.
func TestSymmetric(t *testing.T) {
	cases := []struct {
		f family
		r int
		s amg.Settings
	}{
		{family{lshape, true, 1}, 0, amg.Settings{}},
		{family{kellogg, false, 2}, 0, amg.Settings{}},
		{family{kellogg, true, 1}, 0, amg.Settings{Smoothing: 2}},
		{family{lshape, false, 2}, 0, amg.Settings{Smoother: amg.Chebyshev, Smoothing: 3}},
		{family{kellogg, true, 2}, 0, amg.Settings{Smoother: amg.Chebyshev}},
		{family{lshape, false, 1}, 0, amg.Settings{MaxLevels: 2}}, // last level smoothed, not solved
		{family{lshape, true, 1}, 2, amg.Settings{}},
		{family{kellogg, false, 2}, 2, amg.Settings{Smoothing: 2}},
	}
	for _, c := range cases {
		sys := assemble(t, c.f.d, familyMesh(t, c.f, c.r), c.f.deg)
		if c.r > 0 && sys.A.Rows <= amg.ColourRows {
			t.Fatalf("%v r = %d: only %d rows", c.f, c.r, sys.A.Rows)
		}
		h, err := amg.New(csr(sys.A), c.s)
		if err != nil {
			t.Fatal(err)
		}
		n := sys.A.Rows
		mx, my := make([]float64, n), make([]float64, n)
		for trial := range 3 {
			x, y := amg.RandomVector(n, uint64(2*trial)), amg.RandomVector(n, uint64(2*trial+1))
			h.Apply(mx, x)
			h.Apply(my, y)
			xmx, ymy := amg.Dot(x, mx), amg.Dot(y, my)
			if !(xmx > 0 && ymy > 0) {
				t.Fatalf("%v %+v: (x, M⁻¹x) = %g, (y, M⁻¹y) = %g, want > 0", c.f, c.s, xmx, ymy)
			}
			asym := math.Abs(amg.Dot(x, my)-amg.Dot(mx, y)) / math.Sqrt(xmx*ymy)
			if asym > 1e-12 {
				t.Errorf("%v %+v: |(x, M⁻¹y) − (M⁻¹x, y)| = %.3g relative, want ≤ 1e-12", c.f, c.s, asym)
			}
		}
	}
}

// TestAgainstGonum compares the solution of CG preconditioned by the
// hierarchy with gonum's dense LU solve (mat.Dense.SolveVec), the
// reference, on a system small enough to be dense but with several levels
// (CoarseSize 40). It also checks that a matrix at or below CoarseSize is
// solved exactly by one Apply (the coarsest level's dense Cholesky).
func TestAgainstGonum(t *testing.T) {
	for _, deg := range []int{1, 2} {
		m := baseMesh(t, kellogg, 16/deg)
		sys := assemble(t, kellogg, m, deg)
		dense := sys.A.Dense()
		var want mat.VecDense
		if err := want.SolveVec(dense, mat.NewVecDense(len(sys.B), append([]float64(nil), sys.B...))); err != nil {
			t.Fatal(err)
		}
		for _, s := range []amg.Settings{{CoarseSize: 40}, {CoarseSize: 40, Smoother: amg.Chebyshev, Smoothing: 2}} {
			h, err := amg.New(csr(sys.A), s)
			if err != nil {
				t.Fatal(err)
			}
			if h.Levels() < 3 {
				t.Fatalf("P%d: %d levels, want ≥ 3", deg, h.Levels())
			}
			x, _ := solve(t, csr(sys.A), sys.B, h, 1e-14)
			if e := maxRelDiff(x, want.RawVector().Data); e > 1e-10 {
				t.Errorf("P%d %+v: CG with AMG differs from gonum by %.3g (max norm, relative), want ≤ 1e-10", deg, s, e)
			}
		}
		// A single level: Apply is the dense Cholesky solve.
		h, err := amg.New(csr(sys.A), amg.Settings{CoarseSize: sys.A.Rows})
		if err != nil {
			t.Fatal(err)
		}
		if h.Levels() != 1 {
			t.Fatalf("levels = %d, want 1", h.Levels())
		}
		x := make([]float64, sys.A.Rows)
		h.Apply(x, sys.B)
		if e := maxRelDiff(x, want.RawVector().Data); e > 1e-10 {
			t.Errorf("P%d: coarsest solve differs from gonum by %.3g, want ≤ 1e-10", deg, e)
		}
	}
}

// TestErrors checks the errors of New: they wrap the sentinel errors of
// package sparse and start with "amg:".
func TestErrors(t *testing.T) {
	good := func() *sparse.CSR {
		// [2 -1; -1 2]
		return &sparse.CSR{Rows: 2, Cols: 2, RowPtr: []int32{0, 2, 4}, Col: []int32{0, 1, 0, 1}, Val: []float64{2, -1, -1, 2}}
	}
	withVal := func(k int, v float64) *sparse.CSR {
		a := good()
		a.Val[k] = v
		return a
	}
	cases := []struct {
		name string
		a    *sparse.CSR
		s    amg.Settings
		want error
	}{
		{"nil", nil, amg.Settings{}, sparse.ErrDims},
		{"non-square", &sparse.CSR{Rows: 1, Cols: 2, RowPtr: []int32{0, 2}, Col: []int32{0, 1}, Val: []float64{1, 1}}, amg.Settings{}, sparse.ErrDims},
		{"zero diagonal", withVal(3, 0), amg.Settings{}, sparse.ErrNotPositive},
		{"negative diagonal", withVal(0, -2), amg.Settings{}, sparse.ErrNotPositive},
		{"missing diagonal", &sparse.CSR{Rows: 2, Cols: 2, RowPtr: []int32{0, 2, 3}, Col: []int32{0, 1, 0}, Val: []float64{2, -1, -1}}, amg.Settings{}, sparse.ErrNotPositive},
		{"NaN", withVal(1, math.NaN()), amg.Settings{}, sparse.ErrNotFinite},
		{"NaN diagonal", withVal(0, math.NaN()), amg.Settings{}, sparse.ErrNotFinite},
		{"Inf", withVal(2, math.Inf(-1)), amg.Settings{}, sparse.ErrNotFinite},
		{"bad structure", &sparse.CSR{Rows: 2, Cols: 2, RowPtr: []int32{0, 2, 4}, Col: []int32{1, 0, 0, 1}, Val: []float64{-1, 2, -1, 2}}, amg.Settings{}, sparse.ErrStructure},
		{"Theta", good(), amg.Settings{Theta: 1.5}, sparse.ErrSettings},
		{"Theta NaN", good(), amg.Settings{Theta: math.NaN()}, sparse.ErrSettings},
		{"MaxLevels", good(), amg.Settings{MaxLevels: -1}, sparse.ErrSettings},
		{"CoarseSize", good(), amg.Settings{CoarseSize: -3}, sparse.ErrSettings},
		{"Smoothing", good(), amg.Settings{Smoothing: -1}, sparse.ErrSettings},
		{"Smoother", good(), amg.Settings{Smoother: 7}, sparse.ErrSettings},
		// Indefinite: positive diagonal, but a negative pivot on the
		// coarsest (here the only) level.
		{"indefinite", &sparse.CSR{Rows: 2, Cols: 2, RowPtr: []int32{0, 2, 4}, Col: []int32{0, 1, 0, 1}, Val: []float64{1, 2, 2, 1}}, amg.Settings{}, sparse.ErrNotPositive},
	}
	for _, c := range cases {
		_, err := amg.New(c.a, c.s)
		if !errors.Is(err, c.want) {
			t.Errorf("%s: err = %v, want %v", c.name, err, c.want)
			continue
		}
		if !strings.HasPrefix(err.Error(), "amg:") {
			t.Errorf("%s: message %q does not start with amg:", c.name, err)
		}
	}
	if _, err := amg.New(good(), amg.Settings{}); err != nil {
		t.Errorf("good matrix: %v", err)
	}
	// The empty matrix is valid: Apply does nothing.
	h, err := amg.New(&sparse.CSR{RowPtr: []int32{0}}, amg.Settings{})
	if err != nil || h.Levels() != 0 {
		t.Fatalf("empty: %v, %d levels", err, h.Levels())
	}
	h.Apply(nil, nil)
}
