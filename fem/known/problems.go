// Package known holds model problems with known exact solutions: for each,
// the data (a fem.Problem), the exact solution with its gradient and
// singular points (a fem.Exact), and a suggested initial mesh. They are
// what error estimators are judged on (the effectivity study of package
// adapt/study runs them), and what the examples and the tests solve.
//
// The problems: LShape (r^{2/3} at a re-entrant corner), Slit (r^{1/2} at a
// crack tip), Kellogg (the checkerboard of two conductivities, r^{0.1}),
// Sine (smooth), Peak (a sharp Gaussian), Layer (a boundary layer); Corner
// gives the singular functions r^α sin(αθ) themselves.
package known

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
//
// The powers r^α and r^{α−1} are evaluated by powR2, except for the
// exponents of the L-shape (α = 2/3: one cube root) and the slit (α = 1/2:
// one square root), whose cheaper forms serve the true errors measured at
// every step of the examples.
func Corner(alpha float64) fem.Exact {
	// pows returns r^α and r^{α−1} for r² = r2 > 0.
	pows := func(r2 float64) (ra, ra1 float64) {
		switch alpha {
		case 2.0 / 3:
			c := math.Cbrt(r2) // r^{2/3}
			return c, c / math.Sqrt(r2)
		case 0.5:
			r := math.Sqrt(r2)
			q := math.Sqrt(r) // r^{1/2}
			return q, q / r
		}
		return powR2(r2, alpha), powR2(r2, alpha-1)
	}
	return fem.Exact{
		U: func(x, y float64) float64 {
			r2 := x*x + y*y
			if r2 == 0 {
				return 0
			}
			ra, _ := pows(r2)
			return ra * math.Sin(alpha*angle(x, y))
		},
		Grad: func(x, y float64) (float64, float64) {
			r2 := x*x + y*y
			if r2 == 0 {
				return 0, 0 // singular for α < 1; a measure-zero point
			}
			_, ra1 := pows(r2)
			sn, cs := math.Sincos((alpha - 1) * angle(x, y))
			return alpha * ra1 * sn, alpha * ra1 * cs
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
