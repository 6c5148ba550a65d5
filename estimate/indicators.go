package estimate

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/fem"
)

// Indicators holds the error indicators of a discrete solution, one per
// triangle, stored squared.
type Indicators struct {
	Eta2 []float64 // η_T² per triangle
	Osc2 []float64 // osc_T² per triangle: data oscillation h_T² ‖f − Π_{p−1} f‖²_T
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

func resize(dst []float64, n int) []float64 {
	if cap(dst) < n {
		return make([]float64, n)
	}
	return dst[:n]
}

// prepare checks the arguments and sizes dst for u's mesh.
func prepare(name string, dst *Indicators, u *fem.Function, p *fem.Problem) (*Indicators, error) {
	if u == nil || u.Space == nil || p == nil {
		return nil, fmt.Errorf("estimate: %s: nil solution or problem: %w", name, ErrArgument)
	}
	if len(u.U) != u.Space.NumDOF() {
		return nil, fmt.Errorf("estimate: %s: solution has %d values, space has %d DOFs: %w", name, len(u.U), u.Space.NumDOF(), ErrArgument)
	}
	for i, v := range u.U {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("estimate: %s: solution value %d is %g: %w", name, i, v, ErrNotFinite)
		}
	}
	if err := p.Check(u.Space.Mesh); err != nil {
		return nil, fmt.Errorf("estimate: %s: %w", name, err)
	}
	if dst == nil {
		dst = &Indicators{}
	}
	nt := u.Space.Mesh.NumTriangles()
	dst.Eta2 = resize(dst.Eta2, nt)
	dst.Osc2 = resize(dst.Osc2, nt)
	return dst, nil
}
