package estimate

import (
	"math"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// osc_T = h_T ‖f − Π_{p−1} f‖_T on the reference triangle for f = x:
// Π_0 f = 1/3 and ∫(x − 1/3)² = 1/36 (hand computation with
// ∫ x^i y^j = i! j!/(i+j+2)!, a classical formula), h_T = √2, so
// osc² = 1/18 for P1; for P2, Π_1 f = f and osc = 0.
func TestOscillationClosedForm(t *testing.T) {
	t.Parallel()
	m, _, err := mesh.New(mesh.Arrays{X: []float64{0, 0, 1, 0, 0, 1}, Tri: []int32{0, 1, 2}})
	if err != nil {
		t.Fatal(err)
	}
	p := &fem.Problem{F: func(x, y float64) float64 { return x }, Dirichlet: map[int32]fem.Func{0: nil}}
	for _, tc := range []struct {
		deg  int
		want float64
	}{{1, 1.0 / 18}, {2, 0}} {
		s, _ := fem.NewSpace(m, tc.deg)
		u := fem.NewFunction(s)
		for _, e := range estimators {
			in := estimateTotal(t, e.est, u, p)
			if math.Abs(in.Osc2[0]-tc.want) > 1e-15 {
				t.Errorf("P%d %s: osc² = %.17g, want %.17g", tc.deg, e.name, in.Osc2[0], tc.want)
			}
		}
	}
}

// For smooth f the oscillation is O(h^{p+1}) (polynomial approximation of
// degree p − 1 gains h^p, times the weight h_T; classical).
func TestOscillationRate(t *testing.T) {
	t.Parallel()
	p := &fem.Problem{F: func(x, y float64) float64 { return math.Exp(x) * math.Cos(2*y) }, Dirichlet: map[int32]fem.Func{mesh.SideLeft: nil}}
	for _, deg := range []int{1, 2} {
		var osc []float64
		for _, n := range []int{8, 16, 32} {
			m, _ := mesh.Rectangle(0, 0, 1, 1, n, n)
			s, _ := fem.NewSpace(m, deg)
			in := estimateTotal(t, Residual{}, fem.NewFunction(s), p)
			osc = append(osc, in.Oscillation())
		}
		for i := 1; i < len(osc); i++ {
			if r := math.Log2(osc[i-1] / osc[i]); math.Abs(r-float64(deg+1)) > 0.1 {
				t.Errorf("P%d: oscillation rate %.3f, want %d", deg, r, deg+1)
			}
		}
	}
}
