package known

import (
	"math"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// dirichletAll returns Dirichlet data g on the four sides of a Rectangle.
func dirichletAll(g fem.Func) map[int32]fem.Func {
	return map[int32]fem.Func{mesh.SideBottom: g, mesh.SideRight: g, mesh.SideTop: g, mesh.SideLeft: g}
}

// Sine is −Δu = 2π² sin(πx) sin(πy) on the unit square with u = 0 on the
// boundary: exact solution u = sin(πx) sin(πy), smooth.
func Sine() (fem.Exact, *fem.Problem) {
	u := func(x, y float64) float64 { return math.Sin(math.Pi*x) * math.Sin(math.Pi*y) }
	ex := fem.Exact{U: u, Grad: func(x, y float64) (float64, float64) {
		return math.Pi * math.Cos(math.Pi*x) * math.Sin(math.Pi*y), math.Pi * math.Sin(math.Pi*x) * math.Cos(math.Pi*y)
	}}
	p := &fem.Problem{
		F:         func(x, y float64) float64 { return 2 * math.Pi * math.Pi * u(x, y) },
		Dirichlet: dirichletAll(nil),
	}
	return ex, p
}

// Peak is the Poisson problem on the unit square whose solution is a sharp
// Gaussian peak u = exp(−a((x − x0)² + (y − y0)²)) with a = 1000 at
// (x0, y0) = (0.6, 0.4): f = −Δu = (4a − 4a²r²) u with r² the squared
// distance to the peak, and u = g on the boundary.
func Peak() (fem.Exact, *fem.Problem) {
	const a, x0, y0 = 1000.0, 0.6, 0.4
	u := func(x, y float64) float64 { return math.Exp(-a * ((x-x0)*(x-x0) + (y-y0)*(y-y0))) }
	ex := fem.Exact{U: u, Grad: func(x, y float64) (float64, float64) {
		v := u(x, y)
		return -2 * a * (x - x0) * v, -2 * a * (y - y0) * v
	}}
	p := &fem.Problem{
		F: func(x, y float64) float64 {
			r2 := (x-x0)*(x-x0) + (y-y0)*(y-y0)
			return (4*a - 4*a*a*r2) * u(x, y)
		},
		Dirichlet: dirichletAll(u),
	}
	return ex, p
}

// Layer is the Poisson problem on the unit square with a boundary layer
// along x = 0: u = exp(−x/ε) + y with ε = 0.01, f = −Δu = −exp(−x/ε)/ε²,
// u = g on the boundary.
func Layer() (fem.Exact, *fem.Problem) {
	const eps = 0.01
	u := func(x, y float64) float64 { return math.Exp(-x/eps) + y }
	ex := fem.Exact{U: u, Grad: func(x, y float64) (float64, float64) {
		return -math.Exp(-x/eps) / eps, 1
	}}
	p := &fem.Problem{
		F:         func(x, y float64) float64 { return -math.Exp(-x/eps) / (eps * eps) },
		Dirichlet: dirichletAll(u),
	}
	return ex, p
}
