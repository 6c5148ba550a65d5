package estimate

import (
	"fmt"
	"math"
	"sync"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/spare"
)

// Indicators holds the error indicators of a discrete solution, one per
// triangle, stored squared. Used as the dst of an Estimator, it also keeps
// the estimator's scratch arrays (up to about 50 bytes per triangle for
// Residual and Recovery; 295 (P1) and 1,583 (P2) for FluxRecovery, 754
// (P1) and 979 (P2) for Equilibrated, measured on a uniform mesh of 20,000
// triangles), so that the next estimate into it allocates little or
// nothing.
type Indicators struct {
	Eta2 []float64 // η_T² per triangle
	Osc2 []float64 // osc_T² per triangle: data oscillation h_T² ‖f − Π_{p−1} f‖²_T

	// Algebraic is the part of the total estimate that accounts for the
	// algebraic error of an inexact solve, for an estimator that separates
	// it (Equilibrated: η_alg, see EquilibratedParts); zero for the others.
	// Total() − Algebraic is the part due to the discretization, which a
	// solver's stopping rule can be set against without feeding its own
	// error back into its tolerance.
	Algebraic float64

	// Scratch of the estimators, kept so that repeated estimates with the
	// same dst do not allocate.
	work  []float64
	iwork []int32
	// checked is set by a path that checked its values as it wrote them
	// (see finiteIndicators); prepare clears it.
	checked bool
}

// scratch returns n float64s of scratch, not cleared.
func (in *Indicators) scratch(n int) []float64 {
	in.work = resize(in.work, n)
	return in.work
}

// scratchInt returns n int32s of scratch, not cleared.
func (in *Indicators) scratchInt(n int) []int32 {
	if cap(in.iwork) < n {
		in.iwork = make([]int32, n)
	}
	in.iwork = in.iwork[:n]
	return in.iwork
}

// Total returns the total estimate η = (Σ η_T²)^½.
func (in *Indicators) Total() float64 { return math.Sqrt(sum(in.Eta2)) }

// Oscillation returns the total data oscillation (Σ osc_T²)^½.
func (in *Indicators) Oscillation() float64 { return math.Sqrt(sum(in.Osc2)) }

// Eta returns η_T (not squared) per triangle in dst, resized, which it
// returns; a nil dst allocates.
func (in *Indicators) Eta(dst []float64) []float64 {
	dst = resize(dst, len(in.Eta2))
	for i, v := range in.Eta2 {
		dst[i] = math.Sqrt(v)
	}
	return dst
}

// Estimator computes error indicators of the discrete solution u of the
// problem p. The result is written into dst, whose slices are reused where
// large enough; a nil dst allocates. Implementations are safe for
// concurrent use.
type Estimator interface {
	Estimate(dst *Indicators, u *fem.Function, p *fem.Problem) (*Indicators, error)
}

func sum(v []float64) float64 {
	s := 0.0
	for _, x := range v {
		s += x
	}
	return s
}

// resize is spare.Resize: dst with length n, reusing its storage if it
// has room; the values are not cleared.
func resize[T any](dst []T, n int) []T { return spare.Resize(dst, n) }

// path is one implementation of an estimator, run on arguments that
// prepare has checked: it fills dst for u and p.
type path func(dst *Indicators, u *fem.Function, p *fem.Problem) error

// estimateBy is the body of the Estimate methods: prepare under the
// estimator's name, then run.
func estimateBy(name string, dst *Indicators, u *fem.Function, p *fem.Problem, run path) (*Indicators, error) {
	dst, err := prepare(name, dst, u, p)
	if err != nil {
		return nil, err
	}
	if err := run(dst, u, p); err != nil {
		return nil, err
	}
	if err := finiteIndicators(name, dst); err != nil {
		return nil, err
	}
	return dst, nil
}

// finiteIndicators returns an error wrapping ErrNotFinite, naming the
// first triangle, if an indicator η_T² or an oscillation term is not
// finite: data whose terms are finite can still have squares beyond the
// range of float64 (a source of 1e308 gives η_T² = +Inf), and such a value
// must not be returned as an estimate. The triangles are checked in
// parallel chunks (see finiteChunk); the lowest bad one is reported. A
// path that checks its chunks as it writes them sets dst.checked, and then
// the scan is skipped.
func finiteIndicators(name string, dst *Indicators) error {
	if dst.checked {
		return nil
	}
	return parallel.For(len(dst.Eta2), 1<<15, func(lo, hi int) error {
		return finiteChunk(name, dst, lo, hi)
	})
}

// finiteChunk is the check of finiteIndicators for triangles lo to hi−1.
func finiteChunk(name string, dst *Indicators, lo, hi int) error {
	return finiteTerms(name, "η²", "oscillation", dst.Eta2, dst.Osc2, lo, hi)
}

// finiteTerms returns an error wrapping ErrNotFinite if x[k] or y[k] (the
// terms called xName and yName) is not finite for some triangle k in
// [lo, hi): one sum, and a search for the culprit only if the sum is not
// finite.
func finiteTerms(name, xName, yName string, x, y []float64, lo, hi int) error {
	xs, ys := x[lo:hi], y[lo:hi]
	ys = ys[:len(xs)]
	s := 0.0
	for k, v := range xs {
		s += v + ys[k]
	}
	if s-s == 0 {
		return nil // every term is finite (and their sum too)
	}
	for k, v := range xs {
		if v-v != 0 || ys[k]-ys[k] != 0 {
			return fmt.Errorf("estimate: %s: triangle %d: %s = %g, %s %g (the data are too large for the squares of float64): %w", name, lo+k, xName, v, yName, ys[k], ErrNotFinite)
		}
	}
	return fmt.Errorf("estimate: %s: the terms of triangles %d to %d sum beyond the range of float64: %w", name, lo, hi-1, ErrNotFinite)
}

// prepare checks the arguments and sizes dst for u's mesh.
func prepare(name string, dst *Indicators, u *fem.Function, p *fem.Problem) (*Indicators, error) {
	if u == nil || u.Space == nil || p == nil {
		return nil, fmt.Errorf("estimate: %s: nil solution or problem: %w", name, ErrArgument)
	}
	if len(u.U) != u.Space.NumDOF() {
		return nil, fmt.Errorf("estimate: %s: solution has %d values, space has %d DOFs: %w", name, len(u.U), u.Space.NumDOF(), ErrArgument)
	}
	// The scan for values that are not finite runs in parallel, and on large
	// meshes the check of the problem runs beside it; a bad value is
	// reported first, as if the check came after.
	var checked error
	var wg sync.WaitGroup
	beside := len(u.U) >= 1<<16
	if beside {
		wg.Go(func() { checked = p.Check(u.Space.Mesh) })
	}
	err := parallel.For(len(u.U), 1<<15, func(lo, hi int) error {
		for i, v := range u.U[lo:hi] {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("estimate: %s: solution value %d is %g: %w", name, lo+i, v, ErrNotFinite)
			}
		}
		return nil
	})
	wg.Wait()
	if err != nil {
		return nil, err
	}
	if !beside {
		checked = p.Check(u.Space.Mesh)
	}
	if checked != nil {
		return nil, fmt.Errorf("estimate: %s: %w", name, checked)
	}
	if dst == nil {
		dst = &Indicators{}
	}
	nt := u.Space.Mesh.NumTriangles()
	dst.Eta2 = resize(dst.Eta2, nt)
	dst.Osc2 = resize(dst.Osc2, nt)
	dst.Algebraic = 0
	dst.checked = false
	return dst, nil
}
