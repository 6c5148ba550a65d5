package fem

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/internal/parallel"
)

// goalPiece is a sub-triangle of a triangle: its corners in the
// triangle's barycentric coordinates and its area.
type goalPiece struct {
	c    [3][3]float64
	area float64
}

// goalIntegral returns the sum over the triangles k of s's mesh with
// include(k) (nil: all) of the integral of f over the triangle, or over
// its pieces(geometry of k) where pieces is not nil, with the singular-point-aware
// scheme of Function.Error (errquad.go): a piece that contains a singular
// point of ex by the Duffy transformation with geometric layers and Wynn
// extrapolation, the others by Dunavant rules chosen from their distance
// to the singular points (the rule table of Function.Error for all three
// error norms, allRules), cut into four where no rule serves. f sees the
// integrator, whose Evaluator ev holds phi (the zero function of s for a
// nil phi) on the current triangle.
//
// The integrands of the goals are u, w u and a∇u·∇φ_h (+ c u φ_h − f φ_h):
// of the kind r^γ μ(θ) or r^{γ−1} μ(θ) about a singular point, the same as
// the error integrands (u − u_h)² and |∇(u − u_h)|² whose accuracy
// Function.Error states (1e-11 relative on triangles that contain a
// singular point, 1e-9 elsewhere), and one power smoother. The tests of
// goal_test.go measure the totals against closed forms and gonum's
// quadrature on the L-shape (box, region, weight, flux goals, P1 and P2):
// agreement to 2.1e-16 relative at most (go test -run GoalExact -v ./fem).
//
// The triangles are split over GOMAXPROCS goroutines and summed in
// triangle order, so the result does not depend on GOMAXPROCS.
func goalIntegral(s *Space, ex Exact, p *Problem, include func(k int) bool, pieces func(g *geometry, dst []goalPiece) []goalPiece,
	phi *Function, f func(it *errorIntegrator, x, y float64, l [3]float64) float64) (float64, error) {
	if ex.U == nil || ex.Grad == nil {
		return 0, fmt.Errorf("fem: goal: exact solution needs U and Grad: %w", ErrArgument)
	}
	for i, sp := range ex.Singular {
		if math.IsNaN(sp[0]+sp[1]) || math.IsInf(sp[0]+sp[1], 0) {
			return 0, fmt.Errorf("fem: goal: singular point %d = %v: %w", i, sp, ErrNotFinite)
		}
	}
	if p == nil {
		p = &Problem{}
	}
	if phi == nil {
		phi = NewFunction(s)
	}
	nt := s.Mesh.NumTriangles()
	part := make([]float64, nt)
	start := func() (*errorIntegrator, error) {
		it, err := newErrorIntegrator(phi, ex, p, false)
		if err != nil {
			return nil, err
		}
		it.custom = f
		return it, nil
	}
	err := parallel.Dynamic(nt, 256, start, func(it *errorIntegrator, lo, hi int) error {
		var buf []goalPiece
		for k := lo; k < hi; k++ {
			if include != nil && !include(k) {
				continue
			}
			it.ev.Load(k)
			g := &it.ev.g
			v := 0.0
			if pieces == nil {
				v = it.integrate(g.area)[0]
			} else {
				buf = pieces(g, buf[:0])
				for _, pc := range buf {
					v += it.piece(pc.c, pc.area, 1)[0]
				}
			}
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return atPiece(k, fmt.Errorf("%w: goal integral of the exact solution", ErrNotFinite))
			}
			part[k] = v
		}
		return nil
	})
	if err != nil {
		return 0, err
	}
	t := 0.0
	for _, v := range part {
		t += v
	}
	return t, nil
}
