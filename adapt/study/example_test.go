package study_test

import (
	"context"
	"fmt"

	"github.com/posteriori-fem/posteriori/adapt/study"
	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
)

// gradientJump is a caller's own estimator: the residual estimator's edge
// terms alone (a = 1, no source), η_T² = ½ Σ_E h_E ‖[[∇u_h·n]]‖²_E, here
// obtained from the library's residual estimator on the data without
// source, which leaves exactly those terms.
type gradientJump struct{}

func (gradientJump) Estimate(dst *estimate.Indicators, u *fem.Function, p *fem.Problem) (*estimate.Indicators, error) {
	q := *p
	q.F = nil
	return estimate.Residual{}.Estimate(dst, u, &q)
}

// The study of a caller's estimator next to the library's residual
// estimator: on the L-shape (f = 0) the two coincide; on the smooth
// problem the caller's estimator, which leaves out the element residual,
// is smaller and steers the refinement differently.
func Example() {
	var cases []known.Case
	for _, c := range known.Suite() {
		if c.Name == "lshape" || c.Name == "smooth" {
			cases = append(cases, c)
		}
	}
	sums, err := study.Run(context.Background(), study.Config{
		Cases:      cases,
		Estimators: []study.Estimator{study.Estimators()[0], {Name: "jumps", Est: gradientJump{}}},
		Degrees:    []int{1},
		Theta:      0.5,
		MaxDOFs:    2000,
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, s := range sums {
		fmt.Printf("%s, %s P%d: %d steps, %d DOFs, effectivity %.4g (%.4g to %.4g), error rate %.3g\n",
			s.Case.Name, s.Estimator.Name, s.Degree, len(s.Steps), s.DOFs(), s.Effectivity, s.EffMin, s.EffMax, s.ErrorRate)
	}
	// Output:
	// smooth, residual P1: 19 steps, 1881 DOFs, effectivity 5.704 (4.927 to 6.08), error rate 0.479
	// smooth, jumps P1: 18 steps, 1465 DOFs, effectivity 3.272 (3.115 to 3.431), error rate 0.527
	// lshape, residual P1: 18 steps, 1874 DOFs, effectivity 3.399 (2.978 to 3.399), error rate 0.541
	// lshape, jumps P1: 18 steps, 1874 DOFs, effectivity 3.399 (2.978 to 3.399), error rate 0.541
}
