// Package problems holds model problems with known exact solutions, shared
// by the examples and the tests.
package problems

import (
	"math"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Corner returns u = r^α sin(αθ), with θ measured counter-clockwise from
// the positive x axis in [0, 2π), and its gradient
//
//	∇u = α r^{α−1} (sin((α−1)θ), cos((α−1)θ)).
//
// u is harmonic; it vanishes on θ = 0 and on θ = π/α.
func Corner(alpha float64) fem.Exact {
	return fem.Exact{
		U: func(x, y float64) float64 {
			return powR2(x*x+y*y, alpha) * math.Sin(alpha*angle(x, y))
		},
		Grad: func(x, y float64) (float64, float64) {
			r2 := x*x + y*y
			if r2 == 0 {
				return 0, 0 // singular for α < 1; a measure-zero point
			}
			c := alpha * powR2(r2, alpha-1)
			sn, cs := math.Sincos((alpha - 1) * angle(x, y))
			return c * sn, c * cs
		},
		Singular: [][2]float64{{0, 0}},
	}
}

// LShape is the Laplace problem on mesh.LShape's domain with exact solution
// u = r^{2/3} sin(2θ/3): f = 0, u = 0 on the two sides at the re-entrant
// corner (tags 2 and 3) and u = g on the others.
func LShape() (fem.Exact, *fem.Problem) {
	ex := Corner(2.0 / 3)
	g := ex.U
	p := &fem.Problem{Dirichlet: map[int32]fem.Func{1: g, 2: nil, 3: nil, 4: g, 5: g, 6: g}}
	return ex, p
}

// Slit is the Laplace problem on mesh.Slit's domain with exact solution
// u = r^{1/2} sin(θ/2): f = 0, u = g on the outer sides and u = 0 on both
// crack faces (θ = 0 and θ = 2π).
func Slit() (fem.Exact, *fem.Problem) {
	ex := Corner(0.5)
	g := ex.U
	p := &fem.Problem{Dirichlet: map[int32]fem.Func{
		mesh.SideBottom: g, mesh.SideRight: g, mesh.SideTop: g, mesh.SideLeft: g, mesh.SlitUpper: nil, mesh.SlitLower: nil,
	}}
	return ex, p
}
