package estimate_test

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Estimate the error of a P1 solution on the L-shape with u = r^{2/3}
// sin(2θ/3) on the boundary, and compare with the true error.
func Example() {
	alpha := 2.0 / 3
	u := func(x, y float64) float64 {
		th := math.Atan2(y, x)
		if th < 0 {
			th += 2 * math.Pi
		}
		return math.Pow(math.Hypot(x, y), alpha) * math.Sin(alpha*th)
	}
	grad := func(x, y float64) (float64, float64) {
		r, th := math.Hypot(x, y), math.Atan2(y, x)
		if th < 0 {
			th += 2 * math.Pi
		}
		if r == 0 {
			return 0, 0
		}
		c := alpha * math.Pow(r, alpha-1)
		return c * math.Sin((alpha-1)*th), c * math.Cos((alpha-1)*th)
	}
	m, _ := mesh.LShape(8)
	s, _ := fem.NewSpace(m, 1)
	p := &fem.Problem{Dirichlet: map[int32]fem.Func{1: u, 2: u, 3: u, 4: u, 5: u, 6: u}}
	uh, _, _ := fem.Solve(s, p)
	e2, e, _ := estimate.TrueError(nil, uh, fem.Exact{U: u, Grad: grad, Singular: [][2]float64{{0, 0}}}, p)
	for _, est := range []estimate.Estimator{estimate.Residual{}, estimate.Recovery{Method: estimate.SPR}} {
		in, err := est.Estimate(nil, uh, p)
		if err != nil {
			fmt.Println(err)
			return
		}
		a, _ := estimate.Assess(in, e2, 0.5)
		fmt.Printf("%T: η = %.4g, error = %.4g, effectivity %.3g, marked %d, found %.3g of ideal %.3g\n",
			est, in.Total(), e, a.Effectivity, a.Marked, a.Found, a.Ideal)
	}
	// Output:
	// estimate.Residual: η = 0.4045, error = 0.1239, effectivity 3.26, marked 4, found 0.45 of ideal 0.594
	// estimate.Recovery: η = 0.1607, error = 0.1239, effectivity 1.3, marked 3, found 0.503 of ideal 0.503
}
