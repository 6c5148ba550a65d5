package amg_test

import (
	"fmt"
	"testing"
	"time"

	"github.com/posteriori-fem/posteriori/internal/amg"
	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// BenchmarkSolve measures, for the P1 and P2 Laplacian on a uniform mesh of
// the unit square (fem.Assemble on mesh.Rectangle, u = 0 on the boundary,
// f = 1), the cost of New, of one V-cycle and of the CG solve to relative
// residual 1e-8 from zero, each as a multiple of the time of one product
// with the fine matrix (MulVec), measured in the same iteration so that
// the ratios do not depend on the machine or its load:
//
//	setup/SpMV   New
//	Vcycle/SpMV  one Apply
//	solve/SpMV   CG with the hierarchy (setup excluded)
//	total/SpMV   New plus CG
//	iters        CG iterations
//
// Run with
//
//	go test -run XXX -bench Solve -benchtime 3x ./internal/amg
func BenchmarkSolve(b *testing.B) {
	cases := []struct {
		deg, n int
		s      amg.Settings
		name   string
	}{
		{1, 1e4, amg.Settings{}, ""},
		{1, 1e5, amg.Settings{}, ""},
		{1, 1e6, amg.Settings{}, ""},
		{2, 1e6, amg.Settings{}, ""},
		{1, 1e6, amg.Settings{Smoothing: 2}, "GS2"},
		{1, 1e6, amg.Settings{Smoother: amg.Chebyshev, Smoothing: 2}, "Cheb2"},
		{1, 1e6, amg.Settings{Smoother: amg.Chebyshev, Smoothing: 3}, "Cheb3"},
	}
	for _, c := range cases {
		name := fmt.Sprintf("P%d/n=%.0e", c.deg, float64(c.n))
		if c.name != "" {
			name += "/" + c.name
		}
		b.Run(name, func(b *testing.B) {
			sys := assemble(b, square, baseMesh(b, square, uniformFor(square, c.deg, c.n)), c.deg)
			a, rhs := csr(sys.A), sys.B
			y := make([]float64, a.Rows)
			var spmv, setup, vcycle, solveT time.Duration
			var iters int
			var opcx float64
			for b.Loop() {
				t0 := time.Now()
				for range 20 {
					a.MulVec(y, rhs)
				}
				spmv += time.Since(t0) / 20
				t0 = time.Now()
				h, err := amg.New(a, c.s)
				if err != nil {
					b.Fatal(err)
				}
				setup += time.Since(t0)
				t0 = time.Now()
				for range 10 {
					h.Apply(y, rhs)
				}
				vcycle += time.Since(t0) / 10
				x := make([]float64, a.Rows)
				t0 = time.Now()
				res, err := sparse.CG(a, rhs, x, h, sparse.CGSettings{Tol: 1e-8, MaxIter: 500})
				if err != nil {
					b.Fatal(err)
				}
				solveT += time.Since(t0)
				iters = res.Iterations
				_, opcx = h.Complexity()
			}
			s := float64(spmv)
			b.ReportMetric(float64(setup)/s, "setup/SpMV")
			b.ReportMetric(float64(vcycle)/s, "Vcycle/SpMV")
			b.ReportMetric(float64(solveT)/s, "solve/SpMV")
			b.ReportMetric(float64(setup+solveT)/s, "total/SpMV")
			b.ReportMetric(float64(iters), "iters")
			b.ReportMetric(opcx, "opcx")
			b.ReportMetric(float64(spmv.Nanoseconds())/float64(b.N)/1e6, "SpMV-ms")
			b.ReportMetric(float64(a.Rows), "n")
		})
	}
}

// BenchmarkApply measures one V-cycle with the default settings on the P1
// Laplacian with about 10⁶ unknowns, and reports its allocations (none)
// and its cost in fine-matrix products.
func BenchmarkApply(b *testing.B) {
	sys := assemble(b, square, baseMesh(b, square, uniformFor(square, 1, 1e6)), 1)
	h, err := amg.New(csr(sys.A), amg.Settings{})
	if err != nil {
		b.Fatal(err)
	}
	x := make([]float64, sys.A.Rows)
	t0 := time.Now()
	for range 20 {
		sys.A.MulVec(x, sys.B)
	}
	spmv := time.Since(t0) / 20
	h.Apply(x, sys.B) // the first parallel call builds the goroutine closures
	b.ReportAllocs()
	for b.Loop() {
		h.Apply(x, sys.B)
	}
	b.ReportMetric(float64(b.Elapsed())/float64(b.N)/float64(spmv), "Vcycle/SpMV")
}
