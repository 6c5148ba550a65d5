package adapt

import (
	"context"
	"fmt"
	"testing"
	"time"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

// BenchmarkLoop runs the L-shape loop (P1, residual estimator, Dörfler
// θ = 0.5, solves stopped at a tenth of the previous estimate) from the
// coarse mesh until the next step would pass 1e4, 1e5 or 1e6 DOFs. It
// reports the cost per DOF of the final mesh (ns/DOF), the loop's time in
// units of one product with the final P1 stiffness matrix (SpMV, timed
// after the loop) and the cost per DOF of the last step (step-ns/DOF).
func BenchmarkLoop(b *testing.B) {
	for _, n := range []int{1e4, 1e5, 1e6} {
		b.Run(fmt.Sprintf("dofs=%.0e", float64(n)), func(b *testing.B) {
			m0, err := mesh.LShape(2)
			if err != nil {
				b.Fatal(err)
			}
			_, p := known.LShape()
			var res *Result
			for b.Loop() {
				res, err = Run(context.Background(), Problem{Mesh: m0, Degree: 1, Data: p}, Settings{MaxDOFs: n, AlgebraicFraction: 0.1}, Method{})
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
