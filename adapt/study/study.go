// Package study is the effectivity study of error estimators: adaptive
// runs on model problems with known solutions (package fem/known), each
// summarised by its effectivity index η / ‖a^½∇(u − u_h)‖ and the fitted
// convergence rates of the error and of the estimate. It takes any
// estimate.Estimator, a caller's own included; command examples/compare is
// a thin command-line front end to it.
//
// An estimator that tracks the error has an effectivity range
// [EffMin, EffMax] that stays narrow as the mesh is refined and an
// EstimateRate equal to the ErrorRate; an effectivity near 1 means it
// measures the error's size as well. Effectivities measure the
// discretization error of the model problems only.
package study

import (
	"cmp"
	"context"
	"errors"
	"fmt"
	"math"
	"slices"

	"github.com/posteriori-fem/posteriori/adapt"
	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/internal/parallel"
)

// Estimator is one estimator of the study, by name.
type Estimator struct {
	Name  string
	About string // one line, for usage texts
	Est   estimate.Estimator
}

// Estimators returns the library's estimators in the order of the table:
// residual, averaging, spr, equilibrated, flux.
func Estimators() []Estimator {
	return []Estimator{
		{"residual", "explicit residual estimator", estimate.Residual{}},
		{"averaging", "gradient recovery by area-weighted averaging", estimate.Recovery{Method: estimate.Averaging}},
		{"spr", "gradient recovery by superconvergent patch recovery", estimate.Recovery{Method: estimate.SPR}},
		{"equilibrated", "equilibrated fluxes: a guaranteed upper bound", estimate.Equilibrated{}},
		{"flux", "flux recovery in Raviart–Thomas fields (interface-robust)", estimate.FluxRecovery{}},
	}
}

// Config is what a study runs: every case with every estimator and
// degree, Dörfler marking with Theta, up to MaxDOFs DOFs per run.
type Config struct {
	Cases      []known.Case
	Estimators []Estimator
	Degrees    []int // 1, 2
	Theta      float64
	MaxDOFs    int
}

// ErrConfig reports a study that cannot run: no case, estimator or degree,
// a nil estimator, a degree other than 1 or 2, θ outside (0, 1], or a
// budget below 1.
var ErrConfig = errors.New("invalid study")

// Spec is one run of a study.
type Spec struct {
	Case      known.Case
	Estimator Estimator
	Degree    int
}

// Summary is the outcome of one run: its step records and the numbers of
// the table.
type Summary struct {
	Spec
	Steps        []adapt.Step
	Status       adapt.Status
	Effectivity  float64 // at the last step
	EffMin       float64 // over the steps after the first SkipSteps (all steps if there are no more)
	EffMax       float64
	ErrorRate    float64 // fitted rate r of error ≈ C N^(−r) over the second half of the steps
	EstimateRate float64 // the same for the estimate
}

// DOFs returns the DOFs of the last step.
func (s Summary) DOFs() int {
	if len(s.Steps) == 0 {
		return 0
	}
	return s.Steps[len(s.Steps)-1].DOFs
}

// SkipSteps is the number of first steps left out of the effectivity
// range: on the coarsest meshes the estimators are still far from their
// asymptotic regime.
const SkipSteps = 3

// Specs returns the runs of c in table order: cases, then estimators,
// then degrees.
func (c Config) Specs() []Spec {
	var rs []Spec
	for _, pr := range c.Cases {
		for _, e := range c.Estimators {
			for _, p := range c.Degrees {
				rs = append(rs, Spec{pr, e, p})
			}
		}
	}
	return rs
}

func (c Config) check() error {
	switch {
	case len(c.Cases) == 0 || len(c.Estimators) == 0 || len(c.Degrees) == 0:
		return fmt.Errorf("study: Run: %w: %d cases, %d estimators, %d degrees", ErrConfig, len(c.Cases), len(c.Estimators), len(c.Degrees))
	case !(c.Theta > 0 && c.Theta <= 1):
		return fmt.Errorf("study: Run: %w: Theta = %g, want (0, 1]", ErrConfig, c.Theta)
	case c.MaxDOFs < 1:
		return fmt.Errorf("study: Run: %w: MaxDOFs = %d", ErrConfig, c.MaxDOFs)
	}
	for _, e := range c.Estimators {
		if e.Est == nil {
			return fmt.Errorf("study: Run: %w: estimator %q is nil", ErrConfig, e.Name)
		}
	}
	for _, p := range c.Degrees {
		if p != 1 && p != 2 {
			return fmt.Errorf("study: Run: %w: degree %d, want 1 or 2", ErrConfig, p)
		}
	}
	for _, pr := range c.Cases {
		if pr.Mesh == nil || pr.Setup == nil {
			return fmt.Errorf("study: Run: %w: case %q needs Mesh and Setup", ErrConfig, pr.Name)
		}
	}
	return nil
}

// Run runs every run of c, GOMAXPROCS runs at a time, and returns the
// summaries in table order. The result does not depend on the number of
// runs in parallel or on their order. It stops at the first failing run,
// whose error names the case, the estimator and the degree.
func Run(ctx context.Context, c Config) ([]Summary, error) {
	if ctx == nil {
		return nil, fmt.Errorf("study: Run: %w: nil context", ErrConfig)
	}
	if err := c.check(); err != nil {
		return nil, err
	}
	rs := c.Specs()
	// Start the longest runs first (hard cases, then P2 before P1), so
	// that the workers finish together.
	order := make([]int, len(rs))
	for i := range order {
		order[i] = i
	}
	cost := func(r Spec) int {
		if r.Case.Hard {
			return 10 + r.Degree
		}
		return r.Degree
	}
	slices.SortStableFunc(order, func(i, j int) int { return cmp.Compare(cost(rs[j]), cost(rs[i])) })
	out := make([]Summary, len(rs))
	// The runs are handed out in that order as workers finish; after a
	// failure no new run starts and the running ones see a cancelled
	// context. The error reported is that of the first failing run in
	// that order; a run stopped by the cancellation is not a failure of
	// its own.
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	start := func() (struct{}, error) { return struct{}{}, nil }
	err := parallel.Dynamic(len(order), 1, start, func(_ struct{}, lo, hi int) error {
		for _, i := range order[lo:hi] {
			var err error
			if out[i], err = runOne(ctx, rs[i], c.Theta, c.MaxDOFs); err != nil {
				if ctx.Err() != nil && errors.Is(err, ctx.Err()) {
					return nil // stopped by another run's failure or the caller: reported below
				}
				cancel()
				return fmt.Errorf("study: %s, %s, P%d: %w", rs[i].Case.Name, rs[i].Estimator.Name, rs[i].Degree, err)
			}
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	return out, nil
}

// runOne runs the adaptive loop for one spec with Dörfler marking to the
// DOF budget and summarizes it.
func runOne(ctx context.Context, r Spec, theta float64, maxDOFs int) (Summary, error) {
	m, err := r.Case.Mesh()
	if err != nil {
		return Summary{}, err
	}
	ex, data := r.Case.Setup()
	res, err := adapt.Run(ctx,
		adapt.Problem{Mesh: m, Degree: r.Degree, Data: data, Exact: &ex},
		adapt.Settings{MaxDOFs: maxDOFs},
		adapt.Method{Estimator: r.Estimator.Est, Marker: adapt.Dorfler{Theta: theta}})
	if err != nil {
		return Summary{}, err
	}
	return Summarize(r, res.Steps, res.Status), nil
}

// Summarize computes the table's numbers from the step records of a run.
func Summarize(r Spec, steps []adapt.Step, status adapt.Status) Summary {
	s := Summary{Spec: r, Steps: steps, Status: status}
	nan := math.NaN()
	s.Effectivity, s.EffMin, s.EffMax, s.ErrorRate, s.EstimateRate = nan, nan, nan, nan, nan
	if len(steps) == 0 {
		return s
	}
	s.Effectivity = steps[len(steps)-1].Effectivity
	tail := steps
	if len(steps) > SkipSteps {
		tail = steps[SkipSteps:]
	}
	s.EffMin, s.EffMax = math.Inf(1), math.Inf(-1)
	for _, st := range tail {
		s.EffMin = min(s.EffMin, st.Effectivity)
		s.EffMax = max(s.EffMax, st.Effectivity)
	}
	s.ErrorRate = rate(steps, func(st adapt.Step) float64 { return st.Error })
	s.EstimateRate = rate(steps, func(st adapt.Step) float64 { return st.Estimate })
	return s
}

// rate fits value ≈ c N^(−rate) over the second half of the steps (from
// step ⌊n/2⌋ on), or over all of them when the second half has fewer than
// two steps; NaN when the fit is not possible.
func rate(steps []adapt.Step, value func(adapt.Step) float64) float64 {
	half := steps[len(steps)/2:]
	if len(half) < 2 {
		half = steps
	}
	n := make([]float64, len(half))
	v := make([]float64, len(half))
	for i, st := range half {
		n[i], v[i] = float64(st.DOFs), value(st)
	}
	r, _, err := estimate.FitRate(n, v)
	if err != nil {
		return math.NaN()
	}
	return r
}
