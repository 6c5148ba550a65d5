package adapt

import (
	"context"
	"fmt"
	"runtime/metrics"
	"testing"
	"time"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/internal/amg"
	"github.com/posteriori-fem/posteriori/internal/sparse"
	"github.com/posteriori-fem/posteriori/mesh"
)

// BenchmarkLoop runs the L-shape loop (P1, residual estimator, Dörfler
// θ = 0.5, solves stopped at a tenth of the previous estimate) from the
// coarse mesh until the next step would pass 1e4, 1e5 or 1e6 DOFs. It
// reports the cost per DOF of the final mesh (ns/DOF), the loop's time in
// units of one product with the final P1 stiffness matrix (SpMV, timed
// after the loop) and the cost per DOF of the last step (step-ns/DOF), and
// the bytes the last step allocated (solve, estimate, mark and refine, read
// from runtime/metrics' /gc/heap/allocs:bytes between its record and the
// one before), per DOF of its mesh (step-alloc-B/DOF).
func BenchmarkLoop(b *testing.B) {
	for _, n := range []int{1e4, 1e5, 1e6} {
		b.Run(fmt.Sprintf("dofs=%.0e", float64(n)), func(b *testing.B) {
			m0, err := mesh.LShape(2)
			if err != nil {
				b.Fatal(err)
			}
			_, p := known.LShape()
			var res *Result
			sample := []metrics.Sample{{Name: "/gc/heap/allocs:bytes"}}
			var prev, stepAlloc uint64
			onStep := func(Step) error {
				metrics.Read(sample)
				a := sample[0].Value.Uint64()
				stepAlloc, prev = a-prev, a
				return nil
			}
			for b.Loop() {
				res, err = Run(context.Background(), Problem{Mesh: m0, Degree: 1, Data: p}, Settings{MaxDOFs: n, AlgebraicFraction: 0.1, OnStep: onStep}, Method{})
				if err != nil {
					b.Fatal(err)
				}
			}
			loop := b.Elapsed().Seconds() / float64(b.N)
			b.StopTimer()
			s, _ := fem.NewSpace(res.Mesh, 1)
			sys, err := fem.Assemble(s, p)
			if err != nil {
				b.Fatal(err)
			}
			x, y := make([]float64, s.NumDOF()), make([]float64, s.NumDOF())
			for i := range x {
				x[i] = 1 + float64(i%7)
			}
			spmv := 1e9
			for range 20 {
				t := time.Now()
				sys.A.MulVec(y, x)
				spmv = min(spmv, time.Since(t).Seconds())
			}
			last := res.Steps[len(res.Steps)-1]
			step := (last.SolveTime + last.EstimateTime + last.MarkTime + last.RefineTime).Seconds()
			b.ReportMetric(loop*1e9/float64(s.NumDOF()), "ns/DOF")
			b.ReportMetric(loop/spmv, "SpMV")
			b.ReportMetric(step*1e9/float64(last.DOFs), "step-ns/DOF")
			b.ReportMetric(float64(stepAlloc)/float64(last.DOFs), "step-alloc-B/DOF")
		})
	}
}

// BenchmarkLoopTrueError runs the main example's loop (L-shape, P1,
// residual estimator, Dörfler θ = 0.5, nested iteration) with its exact
// solution, so that every step also measures the true error, and reports
// the time of that measurement over the time of the loop's own stages
// (solve, estimate, mark, refine) in the same run ("error/loop"), and the
// measurement's cost per triangle visited.
func BenchmarkLoopTrueError(b *testing.B) {
	for _, n := range []int{1e4, 1e5, 1e6} {
		b.Run(fmt.Sprintf("dofs=%.0e", float64(n)), func(b *testing.B) {
			m0, err := mesh.LShape(2)
			if err != nil {
				b.Fatal(err)
			}
			ex, p := known.LShape()
			var errTime, loopTime time.Duration
			tris := 0
			for b.Loop() {
				res, err := Run(context.Background(), Problem{Mesh: m0, Degree: 1, Data: p, Exact: &ex},
					Settings{MaxDOFs: n, AlgebraicFraction: 0.1}, Method{})
				if err != nil {
					b.Fatal(err)
				}
				for _, s := range res.Steps {
					errTime += s.ErrorTime
					loopTime += s.SolveTime + s.EstimateTime + s.MarkTime + s.RefineTime
					tris += s.Triangles
				}
			}
			b.ReportMetric(errTime.Seconds()/loopTime.Seconds(), "error/loop")
			b.ReportMetric(float64(errTime.Nanoseconds())/float64(tris), "error-ns/triangle")
		})
	}
}

// BenchmarkSolveAdaptive measures, like BenchmarkSolve, New plus the CG
// solve to relative residual 1e-8 from zero in units of one product with
// the fine matrix (internal/amg's BenchmarkSolve), on the P1 and P2 stiffness matrices of the mesh that
// the adaptive loop makes for the L-shape problem (Run with its
// default method: P1, residual estimator, Dörfler marking with θ = 0.5,
// and full solves, so that the mesh does not depend on this package) when
// stopped at 10⁶ P1 unknowns (P1), or at
// 2.5·10⁵ P1 unknowns, which gives about 10⁶ P2 unknowns (P2, θ = 0.1 as
// fem.System.Solve uses for P2). The DOF numbering of such meshes, with
// the vertices of each refinement appended, puts almost all entries far
// from the diagonal. Building the mesh takes several seconds. Run with
//
//	go test -run XXX -bench SolveAdaptive -benchtime 3x ./adapt
//
// It lives in package adapt, which builds the mesh, so that the multigrid
// package's tests do not depend on the loop.
func BenchmarkSolveAdaptive(b *testing.B) {
	for _, c := range []struct {
		deg, maxDOFs int
		theta        float64
	}{{1, 1e6, 0}, {2, 25e4, 0.1}} {
		b.Run(fmt.Sprintf("P%d", c.deg), func(b *testing.B) {
			m0, err := mesh.LShape(2)
			if err != nil {
				b.Fatal(err)
			}
			_, p := known.LShape()
			res, err := Run(context.Background(), Problem{Mesh: m0, Degree: 1, Data: p},
				Settings{MaxDOFs: c.maxDOFs}, Method{})
			if err != nil {
				b.Fatal(err)
			}
			sp, err := fem.NewSpace(res.Mesh, c.deg)
			if err != nil {
				b.Fatal(err)
			}
			sys, err := fem.Assemble(sp, p)
			if err != nil {
				b.Fatal(err)
			}
			a, rhs := (*sparse.CSR)(sys.A), sys.B
			y := make([]float64, a.Rows)
			spmvTime := func() time.Duration {
				t0 := time.Now()
				for range 20 {
					a.MulVec(y, rhs)
				}
				return time.Since(t0) / 20
			}
			var spmv, setup, vcycle, solveT time.Duration
			var iters int
			for b.Loop() {
				spmv += spmvTime() / 2
				t0 := time.Now()
				h, err := amg.New(a, amg.Settings{Theta: c.theta})
				if err != nil {
					b.Fatal(err)
				}
				setup += time.Since(t0)
				x := make([]float64, a.Rows)
				t0 = time.Now()
				r, err := sparse.CG(a, rhs, x, h, sparse.CGSettings{Tol: 1e-8, MaxIter: 500})
				if err != nil {
					b.Fatal(err)
				}
				solveT += time.Since(t0)
				iters = r.Iterations
				t0 = time.Now()
				for range 10 {
					h.Apply(y, rhs)
				}
				vcycle += time.Since(t0) / 10
				spmv += spmvTime() / 2
			}
			s := float64(spmv)
			b.ReportMetric(float64(setup)/s, "setup/SpMV")
			b.ReportMetric(float64(vcycle)/s, "Vcycle/SpMV")
			b.ReportMetric(float64(solveT)/s, "solve/SpMV")
			b.ReportMetric(float64(setup+solveT)/s, "total/SpMV")
			b.ReportMetric(float64(iters), "iters")
			b.ReportMetric(float64(spmv.Nanoseconds())/float64(b.N)/1e6, "SpMV-ms")
			b.ReportMetric(float64(a.Rows), "n")
		})
	}
}
