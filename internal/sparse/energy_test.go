package sparse

import (
	"errors"
	"math"
	"testing"
)

// The energy-norm stopping rule. The delayed Hestenes–Stiefel estimate is
// a lower bound of the error d iterations back (Strakoš and Tichý 2002), so
// the iterate returned, d steps further on, has an energy error near the
// tolerance but not surely below it: here it was up to 1.18 times the
// tolerance (at 1e-6), and the test allows 1.5 (the bound is ours, from
// that run). The true error is measured against gonum's Cholesky solution
// (reference library).
func TestCGEnergyTol(t *testing.T) {
	t.Parallel()
	a := laplacian2D(t, 40, 30)
	n := a.Rows
	b := make([]float64, n)
	for i := range b {
		b[i] = math.Sin(float64(i))
	}
	exact := choleskySolve(t, a, b)
	ax := make([]float64, n)
	a.MulVec(ax, exact)
	norm := math.Sqrt(dot(exact, ax)) // ‖x*‖_A
	pre, _ := NewJacobi(a)
	full := make([]float64, n)
	rf, err := CG(a, b, full, pre, CGSettings{Tol: 1e-12})
	if err != nil {
		t.Fatal(err)
	}
	for _, rel := range []float64{1e-2, 1e-4, 1e-6} {
		x := make([]float64, n)
		res, err := CG(a, b, x, pre, CGSettings{Tol: 1e-12, EnergyTol: rel * norm})
		if err != nil || !res.Converged {
			t.Fatalf("rel %g: %v, %+v", rel, err, res)
		}
		e := make([]float64, n)
		for i := range e {
			e[i] = x[i] - exact[i]
		}
		ae := make([]float64, n)
		a.MulVec(ae, e)
		trueErr := math.Sqrt(dot(e, ae))
		t.Logf("EnergyTol %g‖x‖_A: %d iterations (residual rule 1e-12: %d), estimate %.3g, true %.3g", rel, res.Iterations, rf.Iterations, res.EnergyError, trueErr)
		if trueErr > 1.5*rel*norm {
			t.Errorf("rel %g: true energy error %g, more than 1.5 times the tolerance %g", rel, trueErr, rel*norm)
		}
		if res.EnergyError > rel*norm || res.Iterations >= rf.Iterations {
			t.Errorf("rel %g: estimate %g after %d iterations (full solve %d)", rel, res.EnergyError, res.Iterations, rf.Iterations)
		}
	}
	if _, err := CG(a, b, make([]float64, n), pre, CGSettings{EnergyTol: -1}); !errors.Is(err, ErrSettings) {
		t.Errorf("negative EnergyTol: %v", err)
	}
}
