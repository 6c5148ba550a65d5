package amg_test

import (
	"math"
	"runtime"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/amg"
	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// Tests of the structure of hierarchies built from FEM matrices; they use
// the hooks of export_test.go.

// TestAggregateFEM checks structural properties of the aggregation of FEM
// matrices that follow from its definition: the Dirichlet rows, and only
// they, are isolated; every aggregate is connected in the graph of
// nonzero entries; and aggregates hold several nodes on average.
func TestAggregateFEM(t *testing.T) {
	for _, deg := range []int{1, 2} {
		sys := assemble(t, lshape, familyMesh(t, family{lshape, true, deg}, 0), deg)
		a := csr(sys.A)
		agg, nagg := amg.Aggregates(a, amg.DefaultTheta)
		dir := map[int32]bool{}
		for _, d := range sys.Dirichlet {
			dir[d] = true
		}
		for i, g := range agg {
			if (g == amg.Isolated) != dir[int32(i)] {
				t.Fatalf("P%d: node %d: aggregate %d, Dirichlet %v", deg, i, g, dir[int32(i)])
			}
		}
		// Connectivity: flood each aggregate from its first node.
		members := make([][]int, nagg)
		for i, g := range agg {
			if g >= 0 {
				members[g] = append(members[g], i)
			}
		}
		seen := make([]bool, a.Rows)
		for g, mem := range members {
			stack, reached := []int{mem[0]}, 1
			seen[mem[0]] = true
			for len(stack) > 0 {
				i := stack[len(stack)-1]
				stack = stack[:len(stack)-1]
				for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
					if j := int(a.Col[k]); a.Val[k] != 0 && !seen[j] && agg[j] == int32(g) {
						seen[j] = true
						reached++
						stack = append(stack, j)
					}
				}
			}
			if reached != len(mem) {
				t.Fatalf("P%d: aggregate %d is not connected", deg, g)
			}
		}
		if ratio := float64(a.Rows-len(sys.Dirichlet)) / float64(nagg); ratio < 4 {
			t.Errorf("P%d: %.2f nodes per aggregate, want ≥ 4", deg, ratio)
		}
	}
}

// TestProlongatorConstants checks the defining property of smoothed
// aggregation (Vaněk, Mandel and Brezina 1996): P̂ interpolates the
// constants exactly, and since A_F has the row sums of A, the smoothing
// I − ωD⁻¹A_F leaves them unchanged where A 1 = 0, so P 1_c = 1. The test
// uses a pure Neumann matrix (row sums zero everywhere). For a Dirichlet
// problem, the rows of P at Dirichlet nodes are empty.
func TestProlongatorConstants(t *testing.T) {
	s, _ := fem.NewSpace(baseMesh(t, kellogg, 20), 2)
	p := problem(kellogg)
	p.Dirichlet, p.PureNeumann = nil, true
	sys, err := fem.Assemble(s, p)
	if err != nil {
		t.Fatal(err)
	}
	a := csr(sys.A)
	pr, err := amg.SmoothedProlongator(a, amg.DefaultTheta)
	if err != nil {
		t.Fatal(err)
	}
	ones, y := make([]float64, pr.Cols), make([]float64, a.Rows)
	for i := range ones {
		ones[i] = 1
	}
	pr.MulVec(y, ones)
	for i, v := range y {
		if math.Abs(v-1) > 1e-12 {
			t.Fatalf("(P 1)[%d] = %.17g, want 1", i, v)
		}
	}
	// Dirichlet problem: empty rows at the Dirichlet nodes.
	dsys := assemble(t, kellogg, baseMesh(t, kellogg, 20), 2)
	h, err := amg.New(csr(dsys.A), amg.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	for _, d := range dsys.Dirichlet {
		if pr := amg.Prolongator(h, 0); pr.RowPtr[d+1] != pr.RowPtr[d] {
			t.Fatalf("row %d of P (Dirichlet) is not empty", d)
		}
	}
}

// TestMaxLevels checks a hierarchy cut short: with MaxLevels 1 the only
// level is larger than maxDense and is smoothed, so Apply is one symmetric
// Gauss–Seidel sweep, a valid but weaker preconditioner; CG still
// converges.
func TestMaxLevels(t *testing.T) {
	sys := assemble(t, lshape, familyMesh(t, family{lshape, false, 1}, 0), 1)
	h, err := amg.New(csr(sys.A), amg.Settings{MaxLevels: 1})
	if err != nil {
		t.Fatal(err)
	}
	if h.Levels() != 1 || amg.LevelSolved(h, 0) {
		t.Fatalf("levels = %d, solved = %v", h.Levels(), amg.LevelSolved(h, 0))
	}
	_, res := solve(t, csr(sys.A), sys.B, h, 1e-8)
	full, _ := amg.New(csr(sys.A), amg.Settings{})
	_, resFull := solve(t, csr(sys.A), sys.B, full, 1e-8)
	t.Logf("symmetric Gauss–Seidel alone: %d iterations, V-cycle: %d", res.Iterations, resFull.Iterations)
	if res.Iterations <= resFull.Iterations {
		t.Errorf("one level converges as fast as %d levels", full.Levels())
	}
}

// TestDeterministic checks that setup and V-cycle give bit-identical
// results with GOMAXPROCS 1, 2 and 3, on a matrix large enough (> 20000
// rows on the two finest levels, and without -short more than
// amg.ColourRows on the finest, which is then smoothed by multicolour
// Gauss–Seidel) for every parallel path to be taken. This is the rule of
// the house (DEVELOPERS.md).
func TestDeterministic(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	f := family{lshape, true, 1}
	r := 2
	if testing.Short() {
		r = 1
	}
	sys := assemble(t, f.d, familyMesh(t, f, r), f.deg)
	r0 := amg.RandomVector(sys.A.Rows, 11)
	for _, s := range []amg.Settings{{}, {Smoother: amg.Chebyshev, Smoothing: 2}} {
		var ref []float64
		var refLevels []*sparse.CSR
		for _, procs := range []int{1, 2, 3} {
			runtime.GOMAXPROCS(procs)
			h, err := amg.New(csr(sys.A), s)
			if err != nil {
				t.Fatal(err)
			}
			x := make([]float64, sys.A.Rows)
			h.Apply(x, r0)
			y, _ := solve(t, csr(sys.A), sys.B, h, 1e-8)
			x = append(x, y...)
			if ref == nil {
				ref = x
				for l := range h.Levels() {
					refLevels = append(refLevels, amg.LevelMatrix(h, l))
				}
				if n := amg.LevelMatrix(h, 1).Rows; n <= amg.ParallelRows {
					t.Logf("level 1 has only %d rows", n)
				}
				if n := sys.A.Rows; n <= amg.ColourRows && !testing.Short() {
					t.Errorf("level 0 has only %d rows, want > %d", n, amg.ColourRows)
				}
				continue
			}
			if h.Levels() != len(refLevels) {
				t.Fatalf("%+v GOMAXPROCS=%d: %d levels, want %d", s, procs, h.Levels(), len(refLevels))
			}
			for l := range h.Levels() {
				for k, v := range amg.LevelMatrix(h, l).Val {
					if math.Float64bits(v) != math.Float64bits(refLevels[l].Val[k]) {
						t.Fatalf("%+v GOMAXPROCS=%d: level %d entry %d differs", s, procs, l, k)
					}
				}
			}
			for i := range x {
				if math.Float64bits(x[i]) != math.Float64bits(ref[i]) {
					t.Fatalf("%+v GOMAXPROCS=%d: result %d is %v, want %v (GOMAXPROCS=1)", s, procs, i, x[i], ref[i])
				}
			}
		}
	}
}

// TestNoAllocs checks that Apply allocates nothing, on the serial path
// (a small matrix) and on the parallel one (more than amg.ColourRows rows,
// with GOMAXPROCS 2).
func TestNoAllocs(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(2))
	for _, r := range []int{0, 2} {
		sys := assemble(t, square, familyMesh(t, family{square, false, 1}, r), 1)
		if r > 0 && sys.A.Rows <= amg.ColourRows {
			t.Fatalf("%d rows, want > %d", sys.A.Rows, amg.ColourRows)
		}
		for _, s := range []amg.Settings{{}, {Smoother: amg.Chebyshev, Smoothing: 3}} {
			h, err := amg.New(csr(sys.A), s)
			if err != nil {
				t.Fatal(err)
			}
			x := make([]float64, sys.A.Rows)
			if a := testing.AllocsPerRun(5, func() { h.Apply(x, sys.B) }); a != 0 {
				t.Errorf("n = %d, %v: Apply allocates %v times, want 0", sys.A.Rows, s.Smoother, a)
			}
		}
	}
}

// TestPureNeumann solves a semi-definite system (−Δu = f with natural
// boundary conditions, f of zero mean, from fem's PureNeumann mode): the
// coarsest dense factorisation drops the null pivot of the constants, and
// CG with the V-cycle still converges in a bounded number of iterations.
func TestPureNeumann(t *testing.T) {
	m := baseMesh(t, square, 100)
	s, _ := fem.NewSpace(m, 1)
	p := &fem.Problem{F: func(x, y float64) float64 { return math.Cos(math.Pi * x) }, PureNeumann: true}
	sys, err := fem.Assemble(s, p)
	if err != nil {
		t.Fatal(err)
	}
	h, err := amg.New(csr(sys.A), amg.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if !amg.LevelSolved(h, h.Levels()-1) || amg.DroppedPivots(h) != 1 {
		t.Errorf("coarsest level: solved %v, %d dropped pivots, want 1", amg.LevelSolved(h, h.Levels()-1), amg.DroppedPivots(h))
	}
	_, res := solve(t, csr(sys.A), sys.B, h, 1e-8)
	t.Logf("pure Neumann, n = %d: %d iterations", sys.A.Rows, res.Iterations)
	if res.Iterations > 25 {
		t.Errorf("%d iterations, want ≤ 25", res.Iterations)
	}
}

// maxRelDiff returns max|x − y| / max|y|.
func maxRelDiff(x, y []float64) float64 {
	d, m := 0.0, 0.0
	for i := range x {
		d = max(d, math.Abs(x[i]-y[i]))
		m = max(m, math.Abs(y[i]))
	}
	return d / m
}

// TestLevelsSymmetric checks that every coarse operator is exactly
// symmetric (bit for bit), as symmetrize promises, and that the operator
// complexity is in the range usual for smoothed aggregation in 2D
// (about 1.1–1.5, from memory of published tables).
func TestLevelsSymmetric(t *testing.T) {
	for _, deg := range []int{1, 2} {
		sys := assemble(t, kellogg, familyMesh(t, family{kellogg, true, deg}, 0), deg)
		h, err := amg.New(csr(sys.A), amg.Settings{})
		if err != nil {
			t.Fatal(err)
		}
		for l := 1; l < h.Levels(); l++ {
			a := amg.LevelMatrix(h, l)
			for i := range a.Rows {
				for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
					j := int(a.Col[k])
					if q := a.Index(j, i); q < 0 || math.Float64bits(a.Val[q]) != math.Float64bits(a.Val[k]) {
						t.Fatalf("P%d level %d: a(%d,%d) != a(%d,%d)", deg, l, i, j, j, i)
					}
				}
			}
		}
		grid, op := h.Complexity()
		if !(grid > 1 && grid < 1.5 && op > 1 && op < 1.8) {
			t.Errorf("P%d: complexities %.3f, %.3f, want in (1, 1.5) and (1, 1.8)", deg, grid, op)
		}
	}
}
