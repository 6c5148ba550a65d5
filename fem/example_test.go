package fem_test

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Solve −Δu = 2π² sin(πx) sin(πy) on the unit square with u = 0 on the
// boundary, and measure the error against the exact solution.
func ExampleSolve() {
	m, _ := mesh.Rectangle(0, 0, 1, 1, 16, 16)
	s, _ := fem.NewSpace(m, 2)
	zero := map[int32]fem.Func{mesh.SideBottom: nil, mesh.SideRight: nil, mesh.SideTop: nil, mesh.SideLeft: nil}
	p := &fem.Problem{
		F:         func(x, y float64) float64 { return 2 * math.Pi * math.Pi * math.Sin(math.Pi*x) * math.Sin(math.Pi*y) },
		Dirichlet: zero,
	}
	u, _, err := fem.Solve(s, p)
	if err != nil {
		fmt.Println(err)
		return
	}
	exact := fem.Exact{
		U: func(x, y float64) float64 { return math.Sin(math.Pi*x) * math.Sin(math.Pi*y) },
		Grad: func(x, y float64) (float64, float64) {
			return math.Pi * math.Cos(math.Pi*x) * math.Sin(math.Pi*y), math.Pi * math.Sin(math.Pi*x) * math.Cos(math.Pi*y)
		},
	}
	_, e, _ := u.Error(nil, exact, p)
	mid, _ := u.At(0.5, 0.5)
	fmt.Printf("DOFs %d, u(0.5, 0.5) = %.4g, energy error %.4g, L2 error %.4g\n", s.NumDOF(), mid, e.Energy, e.L2)
	// Output:
	// DOFs 1089, u(0.5, 0.5) = 1, energy error 0.008419, L2 error 6.874e-05
}
