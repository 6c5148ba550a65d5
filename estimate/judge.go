package estimate

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"github.com/posteriori-fem/posteriori/fem"
)

// TrueError returns the squared energy error ‖a^½ ∇(u − u_h)‖²_T (plus
// c‖u − u_h‖²_T when c > 0) of each triangle in dst, resized, and the total
// energy error, for a known exact solution, by fem.Function.EnergyError
// (whose doc states the integration scheme and its accuracy).
func TrueError(dst []float64, u *fem.Function, ex fem.Exact, p *fem.Problem) ([]float64, float64, error) {
	if u == nil {
		return dst, 0, fmt.Errorf("estimate: TrueError: nil solution: %w", ErrArgument)
	}
	dst, e, err := u.EnergyError(dst, ex, p)
	if err != nil {
		return dst, 0, fmt.Errorf("estimate: TrueError: %w", err)
	}
	return dst, e, nil
}

// Assessment says how well indicators match the true error.
type Assessment struct {
	Estimate    float64 // η = (Σ η_T²)^½
	Error       float64 // the true energy error (Σ e_T²)^½
	Effectivity float64 // η / Error
	// Marked is the number of triangles in the smallest set M with
	// Σ_M η_T² ≥ θ Σ η_T² (Dörfler marking of the indicators).
	Marked int
	// Found is the share of the true squared error held by M.
	Found float64
	// Ideal is the share held by the Marked triangles of largest true
	// error: the best any set of that size could hold. Found/Ideal near 1
	// means the indicators find the error where it is.
	Ideal float64
}

// Assess compares indicators with the squared true error per triangle
// err2 (as from TrueError), marking with parameter theta in (0, 1]. It sorts,
// so it costs O(N log N); it is a measuring tool, not part of the loop.
func Assess(in *Indicators, err2 []float64, theta float64) (Assessment, error) {
	if in == nil || len(in.Eta2) != len(err2) {
		return Assessment{}, fmt.Errorf("estimate: Assess: %d indicators and %d errors: %w", lenOf(in), len(err2), ErrLength)
	}
	if !(theta > 0 && theta <= 1) {
		return Assessment{}, fmt.Errorf("estimate: Assess: θ = %g, want (0, 1]: %w", theta, ErrArgument)
	}
	for i := range err2 {
		if !(in.Eta2[i] >= 0) || !(err2[i] >= 0) || math.IsInf(in.Eta2[i]+err2[i], 0) {
			return Assessment{}, fmt.Errorf("estimate: Assess: triangle %d: η² = %g, e² = %g: %w", i, in.Eta2[i], err2[i], ErrNotFinite)
		}
	}
	a := Assessment{Estimate: in.Total(), Error: math.Sqrt(sum(err2))}
	if a.Error > 0 {
		a.Effectivity = a.Estimate / a.Error
	}
	byEta := descending(in.Eta2)
	total, need, acc := sum(in.Eta2), 0.0, 0.0
	need = theta * total
	for _, i := range byEta {
		if acc >= need && a.Marked > 0 {
			break
		}
		acc += in.Eta2[i]
		a.Marked++
	}
	et := sum(err2)
	if et == 0 {
		return a, nil
	}
	for _, i := range byEta[:a.Marked] {
		a.Found += err2[i]
	}
	for _, i := range descending(err2)[:a.Marked] {
		a.Ideal += err2[i]
	}
	a.Found /= et
	a.Ideal /= et
	return a, nil
}

func lenOf(in *Indicators) int {
	if in == nil {
		return 0
	}
	return len(in.Eta2)
}

// descending returns the indices of v ordered by decreasing value, ties by
// increasing index.
func descending(v []float64) []int {
	idx := make([]int, len(v))
	for i := range idx {
		idx[i] = i
	}
	slices.SortStableFunc(idx, func(i, j int) int { return cmp.Compare(v[j], v[i]) })
	return idx
}

// FitRate fits value ≈ c N^(−rate) by least squares on (log N, log value)
// and returns rate and c. A decaying error has a positive rate: for example
// 0.5 for adaptive P1 at the optimal rate in 2D. It needs at least two
// points with distinct N, and positive, finite N and values.
func FitRate(n, value []float64) (rate, c float64, err error) {
	if len(n) != len(value) {
		return 0, 0, fmt.Errorf("estimate: FitRate: %d DOF counts and %d values: %w", len(n), len(value), ErrLength)
	}
	if len(n) < 2 {
		return 0, 0, fmt.Errorf("estimate: FitRate: %d points: %w", len(n), ErrTooFew)
	}
	var sx, sy float64
	for i := range n {
		if !(n[i] > 0 && value[i] > 0) || math.IsInf(n[i]+value[i], 0) {
			return 0, 0, fmt.Errorf("estimate: FitRate: point %d is (%g, %g), want positive and finite: %w", i, n[i], value[i], ErrArgument)
		}
		sx += math.Log(n[i])
		sy += math.Log(value[i])
	}
	k := float64(len(n))
	mx, my := sx/k, sy/k
	var sxx, sxy float64
	for i := range n {
		dx := math.Log(n[i]) - mx
		sxx += dx * dx
		sxy += dx * (math.Log(value[i]) - my)
	}
	if sxx == 0 {
		return 0, 0, fmt.Errorf("estimate: FitRate: all DOF counts equal: %w", ErrTooFew)
	}
	slope := sxy / sxx
	return -slope, math.Exp(my - slope*mx), nil
}
