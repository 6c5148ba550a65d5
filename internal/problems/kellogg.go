package problems

import (
	"math"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Constants of the four-quadrant checkerboard solution of R. B. Kellogg,
// "On the Poisson equation with intersecting interfaces", Applicable
// Analysis 4 (1975) 101–129, for γ = 0.1: the contrast R and the angles ρ
// and σ, from memory of the published values; TestKelloggTransmission checks
// that they satisfy the interface conditions to rounding.
const (
	KelloggGamma = 0.1
	KelloggR     = 161.4476387975881
	KelloggRho   = math.Pi / 4
	KelloggSigma = -14.92256510455152
)

// Kellogg returns the checkerboard problem on mesh.Quadrants's domain: a = R
// in quadrants 1 and 3, a = 1 in quadrants 2 and 4, f = 0, u = g on the
// boundary, with exact solution u = r^γ μ(θ), where
//
//	μ(θ) = cos((π/2 − σ)γ) cos((θ − π/2 + ρ)γ)    for 0 ≤ θ ≤ π/2
//	       cos(ργ) cos((θ − π + σ)γ)               for π/2 ≤ θ ≤ π
//	       cos(σγ) cos((θ − π − ρ)γ)               for π ≤ θ ≤ 3π/2
//	       cos((π/2 − ρ)γ) cos((θ − 3π/2 − σ)γ)    for 3π/2 ≤ θ ≤ 2π
//
// u is only in H^{1+γ−ε}: the energy error of uniform refinement decays
// like N^{−γ/2}.
func Kellogg() (fem.Exact, *fem.Problem) {
	ex := fem.Exact{
		U: func(x, y float64) float64 {
			r, th := polar(x, y)
			m, _ := kelloggMu(th)
			return math.Pow(r, KelloggGamma) * m
		},
		Grad: func(x, y float64) (float64, float64) {
			r, th := polar(x, y)
			if r == 0 {
				return 0, 0
			}
			m, dm := kelloggMu(th)
			c := math.Pow(r, KelloggGamma-1)
			gr, gt := KelloggGamma*m, dm
			cs, sn := math.Cos(th), math.Sin(th)
			return c * (gr*cs - gt*sn), c * (gr*sn + gt*cs)
		},
		Singular: [][2]float64{{0, 0}},
	}
	g := ex.U
	p := &fem.Problem{
		A: map[int32]fem.Tensor{1: fem.Scalar(KelloggR), 2: fem.Scalar(1), 3: fem.Scalar(KelloggR), 4: fem.Scalar(1)},
		Dirichlet: map[int32]fem.Func{
			mesh.SideBottom: g, mesh.SideRight: g, mesh.SideTop: g, mesh.SideLeft: g,
		},
	}
	return ex, p
}

// kelloggMu returns μ(θ) and μ'(θ) for θ in [0, 2π).
func kelloggMu(th float64) (mu, dmu float64) {
	const g, rho, sigma = KelloggGamma, KelloggRho, KelloggSigma
	var c, s float64
	switch {
	case th <= math.Pi/2:
		c, s = math.Cos((math.Pi/2-sigma)*g), (th-math.Pi/2+rho)*g
	case th <= math.Pi:
		c, s = math.Cos(rho*g), (th-math.Pi+sigma)*g
	case th <= 3*math.Pi/2:
		c, s = math.Cos(sigma*g), (th-math.Pi-rho)*g
	default:
		c, s = math.Cos((math.Pi/2-rho)*g), (th-3*math.Pi/2-sigma)*g
	}
	return c * math.Cos(s), -g * c * math.Sin(s)
}

func polar(x, y float64) (r, th float64) {
	th = math.Atan2(y, x)
	if th < 0 {
		th += 2 * math.Pi
	}
	return math.Hypot(x, y), th
}
