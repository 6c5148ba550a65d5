package known

import (
	"math"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
)

// Corner(α) is harmonic with the stated gradient: checked by central
// differences (classical second-order formulas) away from the origin.
func TestCorner(t *testing.T) {
	t.Parallel()
	for _, alpha := range []float64{2.0 / 3, 0.5} {
		ex := Corner(alpha)
		const h = 1e-4
		for _, p := range [][2]float64{{0.3, 0.4}, {-0.5, 0.2}, {-0.7, -0.6}, {0.1, 0.9}, {0.2, -0.8}} {
			x, y := p[0], p[1]
			if alpha == 0.5 && y < 0 && x > 0 {
				continue // across the slit θ jumps; stay off it
			}
			gx, gy := ex.Grad(x, y)
			fx := (ex.U(x+h, y) - ex.U(x-h, y)) / (2 * h)
			fy := (ex.U(x, y+h) - ex.U(x, y-h)) / (2 * h)
			if math.Abs(gx-fx) > 1e-6 || math.Abs(gy-fy) > 1e-6 {
				t.Errorf("α=%g at %v: grad (%g, %g), differences (%g, %g)", alpha, p, gx, gy, fx, fy)
			}
			lap := (ex.U(x+h, y) + ex.U(x-h, y) + ex.U(x, y+h) + ex.U(x, y-h) - 4*ex.U(x, y)) / (h * h)
			if math.Abs(lap) > 1e-4 {
				t.Errorf("α=%g at %v: Laplacian %g", alpha, p, lap)
			}
		}
		// u vanishes on θ = 0 and θ = π/α.
		th := math.Pi / alpha
		if v := ex.U(0.5*math.Cos(th), 0.5*math.Sin(th)); math.Abs(v) > 1e-14 {
			t.Errorf("α=%g: u = %g on θ = π/α", alpha, v)
		}
		if v := ex.U(0.5, 0); v != 0 {
			t.Errorf("α=%g: u = %g on θ = 0", alpha, v)
		}
	}
}

// The Kellogg constants satisfy the interface conditions: u and a ∂u/∂θ
// are continuous across the four half-axes (the transmission conditions
// of the checkerboard problem, Kellogg 1975), and μ is periodic.
func TestKelloggTransmission(t *testing.T) {
	t.Parallel()
	a := []float64{KelloggR, 1, KelloggR, 1} // quadrants 1..4
	const eps = 1e-12
	for q := range 4 {
		th := float64(q+1) * math.Pi / 2
		below, dbelow := kelloggMu(th - eps)
		above, dabove := kelloggMu(math.Mod(th+eps, 2*math.Pi))
		if math.Abs(below-above) > 1e-10 {
			t.Errorf("θ = %g: μ jumps from %g to %g", th, below, above)
		}
		// The flux a μ' is continuous (relative to its size).
		fb, fa := a[q]*dbelow, a[(q+1)%4]*dabove
		if math.Abs(fb-fa) > 1e-11*math.Abs(fb) { // constants given to 16 digits
			t.Errorf("θ = %g: flux jumps from %.15g to %.15g", th, fb, fa)
		}
	}
	// u is harmonic inside each quadrant (central differences).
	ex, _ := Kellogg()
	const h = 1e-4
	for _, p := range [][2]float64{{0.3, 0.4}, {-0.5, 0.2}, {-0.7, -0.6}, {0.2, -0.8}} {
		x, y := p[0], p[1]
		lap := (ex.U(x+h, y) + ex.U(x-h, y) + ex.U(x, y+h) + ex.U(x, y-h) - 4*ex.U(x, y)) / (h * h)
		gx, gy := ex.Grad(x, y)
		fx := (ex.U(x+h, y) - ex.U(x-h, y)) / (2 * h)
		fy := (ex.U(x, y+h) - ex.U(x, y-h)) / (2 * h)
		if math.Abs(lap) > 1e-4 || math.Abs(gx-fx) > 1e-6 || math.Abs(gy-fy) > 1e-6 {
			t.Errorf("%v: Laplacian %g, grad (%g, %g) vs (%g, %g)", p, lap, gx, gy, fx, fy)
		}
	}
}

// Each smooth problem's f is −Δu of its exact solution (central
// differences, classical), and its gradient matches the differences of U.
func TestSmoothProblems(t *testing.T) {
	t.Parallel()
	for name, gen := range map[string]func() (fem.Exact, *fem.Problem){"Sine": Sine, "Peak": Peak, "Layer": Layer} {
		ex, p := gen()
		const h = 1e-4
		for _, pt := range [][2]float64{{0.3, 0.4}, {0.61, 0.39}, {0.05, 0.7}, {0.9, 0.1}} {
			x, y := pt[0], pt[1]
			lap := (ex.U(x+h, y) + ex.U(x-h, y) + ex.U(x, y+h) + ex.U(x, y-h) - 4*ex.U(x, y)) / (h * h)
			f := p.F(x, y)
			if math.Abs(-lap-f) > 1e-4*max(1, math.Abs(f)) {
				t.Errorf("%s at %v: −Δu ≈ %g, f = %g", name, pt, -lap, f)
			}
			gx, gy := ex.Grad(x, y)
			const d = 1e-6 // central differences: error d²/6 |u'''| ≲ 1e-12/ε³
			fx := (ex.U(x+d, y) - ex.U(x-d, y)) / (2 * d)
			fy := (ex.U(x, y+d) - ex.U(x, y-d)) / (2 * d)
			if math.Abs(gx-fx) > 1e-6*max(1, math.Abs(gx)) || math.Abs(gy-fy) > 1e-6*max(1, math.Abs(gy)) {
				t.Errorf("%s at %v: grad (%g, %g), differences (%g, %g)", name, pt, gx, gy, fx, fy)
			}
		}
	}
}
