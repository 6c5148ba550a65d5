package main

import (
	"cmp"
	"context"
	"fmt"
	"math"
	"runtime"
	"slices"
	"sync"

	"github.com/posteriori-fem/posteriori/adapt"
	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/problems"
	"github.com/posteriori-fem/posteriori/mesh"
)

// problem is one model problem of the suite: its initial mesh and its data
// with the exact solution.
type problem struct {
	name  string
	about string // one line for the usage text
	mesh  func() (*mesh.Mesh, error)
	data  func() (fem.Exact, *fem.Problem)
	// slow marks a problem whose runs take many more steps (and solver
	// iterations) than the others to the same budget; they start first.
	slow bool
}

// suite is the study's problems, in the order of the table.
var suite = []problem{
	{"smooth", "u = sin(πx) sin(πy) on the unit square",
		func() (*mesh.Mesh, error) { return mesh.Rectangle(0, 0, 1, 1, 2, 2) }, problems.Sine, false},
	{"lshape", "u = r^(2/3) sin(2θ/3) on the L-shaped domain",
		func() (*mesh.Mesh, error) { return mesh.LShape(2) }, problems.LShape, false},
	{"slit", "u = r^(1/2) sin(θ/2) on the slit square",
		func() (*mesh.Mesh, error) { return mesh.Slit(2) }, problems.Slit, false},
	{"kellogg", "checkerboard diffusion (contrast 161), u = r^0.1 μ(θ)",
		func() (*mesh.Mesh, error) { return mesh.Quadrants(2) }, problems.Kellogg, true},
	{"peak", "Gaussian peak exp(−1000 r²) at (0.6, 0.4)",
		func() (*mesh.Mesh, error) { return mesh.Rectangle(0, 0, 1, 1, 4, 4) }, problems.Peak, false},
	{"layer", "boundary layer exp(−x/0.01) + y along x = 0",
		func() (*mesh.Mesh, error) { return mesh.Rectangle(0, 0, 1, 1, 4, 4) }, problems.Layer, false},
}

// estimator is one estimator of the study, by name.
type estimator struct {
	name  string
	about string
	est   estimate.Estimator
}

// estimators is the study's estimators, in the order of the table.
var estimators = []estimator{
	{"residual", "explicit residual estimator", estimate.Residual{}},
	{"averaging", "gradient recovery by area-weighted averaging", estimate.Recovery{Method: estimate.Averaging}},
	{"spr", "gradient recovery by superconvergent patch recovery", estimate.Recovery{Method: estimate.SPR}},
}

// degrees is the study's polynomial degrees.
var degrees = []int{1, 2}

// config is a validated study: what to run and how.
type config struct {
	problems   []problem
	estimators []estimator
	degrees    []int
	theta      float64
	maxDOFs    int
}

// runSpec is one run of the study.
type runSpec struct {
	prob problem
	est  estimator
	p    int
}

// summary is the outcome of one run: its step records and the numbers of
// the table.
type summary struct {
	runSpec
	steps        []adapt.Step
	status       adapt.Status
	effectivity  float64 // at the last step
	effMin       float64 // over the steps after the first 3 (all steps if there are no more)
	effMax       float64
	errorRate    float64 // fitted rate of the true error over the second half of the steps
	estimateRate float64 // the same for the estimate
}

// specs returns the runs of c in table order: problems, then estimators,
// then degrees.
func (c config) specs() []runSpec {
	var rs []runSpec
	for _, pr := range c.problems {
		for _, e := range c.estimators {
			for _, p := range c.degrees {
				rs = append(rs, runSpec{pr, e, p})
			}
		}
	}
	return rs
}

// study runs every run of c, GOMAXPROCS runs at a time, and returns the
// summaries in table order. The result does not depend on the number of
// runs in parallel or on their order. It stops at the first failing run.
func study(ctx context.Context, c config) ([]summary, error) {
	rs := c.specs()
	// Start the longest runs first (slow problems, then P2 before P1), so
	// that the workers finish together.
	order := make([]int, len(rs))
	for i := range order {
		order[i] = i
	}
	cost := func(r runSpec) int {
		if r.prob.slow {
			return 10 + r.p
		}
		return r.p
	}
	slices.SortStableFunc(order, func(i, j int) int { return cmp.Compare(cost(rs[j]), cost(rs[i])) })
	out := make([]summary, len(rs))
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	var (
		mu    sync.Mutex
		first error // the first run to fail; the others then see a cancelled context
	)
	next := make(chan int)
	var wg sync.WaitGroup
	for range min(runtime.GOMAXPROCS(0), len(rs)) {
		wg.Go(func() {
			for i := range next {
				var err error
				if out[i], err = runOne(ctx, rs[i], c.theta, c.maxDOFs); err != nil {
					mu.Lock()
					if first == nil {
						first = fmt.Errorf("%s, %s, P%d: %w", rs[i].prob.name, rs[i].est.name, rs[i].p, err)
					}
					mu.Unlock()
					cancel()
				}
			}
		})
	}
feed:
	for _, i := range order {
		select {
		case next <- i:
		case <-ctx.Done():
			break feed
		}
	}
	close(next)
	wg.Wait()
	if first != nil {
		return nil, first
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	return out, nil
}

// runOne runs the adaptive loop for one (problem, estimator, degree) with
// Dörfler marking to the DOF budget and summarizes it.
func runOne(ctx context.Context, r runSpec, theta float64, maxDOFs int) (summary, error) {
	m, err := r.prob.mesh()
	if err != nil {
		return summary{}, err
	}
	ex, data := r.prob.data()
	res, err := adapt.Run(ctx,
		adapt.Problem{Mesh: m, Degree: r.p, Data: data, Exact: &ex},
		adapt.Settings{MaxDOFs: maxDOFs},
		adapt.Method{Estimator: r.est.est, Marker: adapt.Dorfler{Theta: theta}})
	if err != nil {
		return summary{}, err
	}
	return summarize(r, res.Steps, res.Status), nil
}

// skipSteps is the number of first steps left out of the effectivity
// range: on the coarsest meshes the estimators are still far from their
// asymptotic regime.
const skipSteps = 3

// summarize computes the table's numbers from the step records.
func summarize(r runSpec, steps []adapt.Step, status adapt.Status) summary {
	s := summary{runSpec: r, steps: steps, status: status}
	nan := math.NaN()
	s.effectivity, s.effMin, s.effMax, s.errorRate, s.estimateRate = nan, nan, nan, nan, nan
	if len(steps) == 0 {
		return s
	}
	s.effectivity = steps[len(steps)-1].Effectivity
	tail := steps
	if len(steps) > skipSteps {
		tail = steps[skipSteps:]
	}
	s.effMin, s.effMax = math.Inf(1), math.Inf(-1)
	for _, st := range tail {
		s.effMin = min(s.effMin, st.Effectivity)
		s.effMax = max(s.effMax, st.Effectivity)
	}
	s.errorRate = rate(steps, func(st adapt.Step) float64 { return st.Error })
	s.estimateRate = rate(steps, func(st adapt.Step) float64 { return st.Estimate })
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

// dofs returns the DOFs of the last step.
func (s summary) dofs() int {
	if len(s.steps) == 0 {
		return 0
	}
	return s.steps[len(s.steps)-1].DOFs
}
