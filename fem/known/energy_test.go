package known

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// polarEnergy returns ∫ a |∇u|² over the part of the square (-1,1)² with
// θ in [lo, hi], for u = r^γ μ(θ) about the origin: in polar coordinates
// |∇u|² = r^{2γ−2}(γ²μ² + μ'²), whose radial integral from 0 to the
// square's boundary R(θ) = 1/max(|cos θ|, |sin θ|) is the closed form
// R^{2γ}/(2γ); the angular integral, smooth on each eighth of the circle
// (where R is one branch), is gonum's Gauss–Legendre quad.Fixed with 64
// points on each of 16 pieces per eighth.
func polarEnergy(gamma float64, mu func(th float64) (float64, float64), a func(th float64) float64, lo, hi float64) float64 {
	f := func(th float64) float64 {
		m, dm := mu(th)
		R := 1 / max(math.Abs(math.Cos(th)), math.Abs(math.Sin(th)))
		return a(th) * (gamma*gamma*m*m + dm*dm) * math.Pow(R, 2*gamma) / (2 * gamma)
	}
	sum := 0.0
	for k := 0; k < 8; k++ {
		a0, b0 := max(lo, float64(k)*math.Pi/4), min(hi, float64(k+1)*math.Pi/4)
		if a0 >= b0 {
			continue
		}
		for j := range 16 {
			x0, x1 := a0+(b0-a0)*float64(j)/16, a0+(b0-a0)*float64(j+1)/16
			sum += quad.Fixed(f, x0, x1, 64, quad.Legendre{}, 0)
		}
	}
	return sum
}

// The whole-domain energies of the singular exact solutions, integrated by
// fem's Error on coarse meshes (u_h = 0, so the error is u itself), agree
// with polarEnergy to 1e-9 relative, the accuracy Error promises: Kellogg's
// ‖a^½∇u‖² on mesh.Quadrants (γ = 0.1, the origin a vertex of 8
// triangles), and the L-shape's |u|²_H¹ on mesh.LShape (γ = 2/3).
func TestExactEnergies(t *testing.T) {
	t.Parallel()
	kex, kp := Kellogg()
	lex, lp := LShape()
	cases := []struct {
		name  string
		m     func() (*mesh.Mesh, error)
		ex    fem.Exact
		p     *fem.Problem
		gamma float64
		mu    func(th float64) (float64, float64)
		a     func(th float64) float64
		lo    float64
		hi    float64
	}{
		{"Kellogg", func() (*mesh.Mesh, error) { return mesh.Quadrants(2) }, kex, kp, KelloggGamma, kelloggMu,
			func(th float64) float64 {
				if q := int(th / (math.Pi / 2)); q%2 == 0 {
					return KelloggR // quadrants 1 and 3
				}
				return 1
			}, 0, 2 * math.Pi},
		{"L-shape", func() (*mesh.Mesh, error) { return mesh.LShape(2) }, lex, lp, 2.0 / 3,
			func(th float64) (float64, float64) { return math.Sin(2 * th / 3), 2.0 / 3 * math.Cos(2*th/3) },
			func(float64) float64 { return 1 }, 0, 3 * math.Pi / 2},
	}
	for _, c := range cases {
		m, err := c.m()
		if err != nil {
			t.Fatal(err)
		}
		for _, deg := range []int{1, 2} {
			s, err := fem.NewSpace(m, deg)
			if err != nil {
				t.Fatal(err)
			}
			zero := &fem.Function{Space: s, U: make([]float64, s.NumDOF())}
			_, e, err := zero.Error(nil, c.ex, c.p)
			if err != nil {
				t.Fatal(err)
			}
			_, en, err := zero.EnergyError(nil, c.ex, c.p)
			if err != nil {
				t.Fatal(err)
			}
			want := polarEnergy(c.gamma, c.mu, c.a, c.lo, c.hi)
			for _, got := range []float64{e.Energy, en} {
				if rel := math.Abs(got*got-want) / want; !(rel <= 1e-9) {
					t.Errorf("%s P%d: energy² %.15g, polar closed form %.15g (rel. %.2g)", c.name, deg, got*got, want, rel)
				}
			}
			t.Logf("%s P%d: energy² %.15g, polar %.15g", c.name, deg, e.Energy*e.Energy, want)
		}
	}
}
