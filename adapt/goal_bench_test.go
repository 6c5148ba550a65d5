package adapt

import (
	"context"
	"math"
	"strconv"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

// BenchmarkGoalStep times one step of the loop (solve and estimate; one
// step ends before marking) on a uniform L-shape mesh of about n P1 DOFs,
// energy-oriented (the residual estimator) and goal-oriented (also the
// dual solve and the dual weighted residual for the box mean over
// [0.5, 1]²). The ratio of the two is the cost of the goal.
//
//	go test -run XXX -bench 'GoalStep/^n=(10000|100000)$/' -benchtime 3x ./adapt   # three times
//	go test -run XXX -bench 'GoalStep/^n=1000000$/' -benchtime 3x ./adapt           # three times
//
// On two cores shared with other work (load average 6 to 10 during the
// runs), the ratio goal/energy was 1.39 (1.19 to 2.23) at 1e4 DOFs, 1.99
// (1.64 to 3.78) at 1e5 and 2.64 (1.65 to 2.78) at 1e6: median (range) of
// three runs each; energy steps 2,261 to 5,723 ns/DOF, goal steps 4,690 to
// 17,317 ns/DOF.
func BenchmarkGoalStep(b *testing.B) {
	_, p := known.LShape()
	for _, n := range []int{1e4, 1e5, 1e6} {
		m, err := mesh.LShape(int(math.Sqrt(float64(n) / 3)))
		if err != nil {
			b.Fatal(err)
		}
		for _, c := range []struct {
			name string
			meth Method
		}{
			{"energy", Method{}},
			{"goal", Method{Goal: fem.BoxMean{X0: 0.5, Y0: 0.5, X1: 1, Y1: 1}, MarkGoal: true}},
		} {
			b.Run("n="+strconv.Itoa(n)+"/"+c.name, func(b *testing.B) {
				for b.Loop() {
					if _, err := Run(context.Background(), Problem{Mesh: m, Degree: 1, Data: p}, Settings{MaxSteps: 1}, c.meth); err != nil {
						b.Fatal(err)
					}
				}
				b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(m.NumVertices()), "ns/DOF")
			})
		}
	}
}
