package adapt_test

import (
	"context"
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/adapt"
	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Run the adaptive loop on the L-shape with u = r^{2/3} sin(2θ/3) on the
// boundary until the estimate is below 0.05.
func ExampleRun() {
	u := func(x, y float64) float64 {
		th := math.Atan2(y, x)
		if th < 0 {
			th += 2 * math.Pi
		}
		return math.Pow(math.Hypot(x, y), 2.0/3) * math.Sin(2*th/3)
	}
	m, _ := mesh.LShape(2)
	p := &fem.Problem{Dirichlet: map[int32]fem.Func{1: u, 2: u, 3: u, 4: u, 5: u, 6: u}}
	res, err := adapt.Run(context.Background(),
		adapt.Problem{Mesh: m, Degree: 1, Data: p},
		adapt.Settings{Tol: 0.05, MaxDOFs: 100000},
		adapt.Method{Estimator: estimate.Residual{}, Marker: adapt.Dorfler{Theta: 0.5}})
	if err != nil {
		fmt.Println(err)
		return
	}
	last := res.Steps[len(res.Steps)-1]
	fmt.Printf("%v after %d steps: %d triangles, %d DOFs, estimate %.4g\n", res.Status, len(res.Steps), last.Triangles, last.DOFs, last.Estimate)
	// Output:
	// converged after 21 steps: 8864 triangles, 4532 DOFs, estimate 0.04368
}
