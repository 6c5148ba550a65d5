package known

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
			m, _ := kelloggMu(angle(x, y))
			return powR2(x*x+y*y, KelloggGamma) * m
		},
		Grad: func(x, y float64) (float64, float64) {
			// ∇u = r^{γ−1} (γμ e_r + μ' e_θ) with e_r = (x, y)/r and
			// e_θ = (−y, x)/r.
			r2 := x*x + y*y
			if r2 == 0 {
				return 0, 0
			}
			m, dm := kelloggMu(angle(x, y))
			c := powR2(r2, KelloggGamma-2)
			gr := KelloggGamma * m
			return c * (gr*x - dm*y), c * (gr*y + dm*x)
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

// kelloggC holds the constant factors of μ on the four quadrants.
var kelloggC = [4]float64{
	math.Cos((math.Pi/2 - KelloggSigma) * KelloggGamma),
	math.Cos(KelloggRho * KelloggGamma),
	math.Cos(KelloggSigma * KelloggGamma),
	math.Cos((math.Pi/2 - KelloggRho) * KelloggGamma),
}

// kelloggMu returns μ(θ) and μ'(θ) for θ in [0, 2π).
func kelloggMu(th float64) (mu, dmu float64) {
	const g, rho, sigma = KelloggGamma, KelloggRho, KelloggSigma
	var c, s float64
	switch {
	case th <= math.Pi/2:
		c, s = kelloggC[0], (th-math.Pi/2+rho)*g
	case th <= math.Pi:
		c, s = kelloggC[1], (th-math.Pi+sigma)*g
	case th <= 3*math.Pi/2:
		c, s = kelloggC[2], (th-math.Pi-rho)*g
	default:
		c, s = kelloggC[3], (th-3*math.Pi/2-sigma)*g
	}
	return c * math.Cos(s), -g * c * math.Sin(s)
}

// angle returns θ = atan2(y, x), moved to [0, 2π) (a point with y = −0 on
// the positive x axis keeps θ = −0).
func angle(x, y float64) float64 {
	th := math.Atan2(y, x)
	if th < 0 {
		th += 2 * math.Pi
	}
	return th
}

// powR2 returns r^p for r² = r2 as exp(½p·log r²): one Log and one Exp,
// without the square root of math.Hypot and the exponent splitting of
// math.Pow, and equal to math.Pow(math.Hypot(x, y), p) to a few units of
// rounding. r2 = 0 gives 0 for p > 0.
func powR2(r2, p float64) float64 { return math.Exp(0.5 * p * math.Log(r2)) }
