package quadrature

import (
	"fmt"
	"math"
	"sync"
)

// MaxLinePoints is the largest number of points [GaussLegendre] provides.
const MaxLinePoints = 64

// MaxLineDegree is the highest polynomial degree for which [ForLine] has a
// rule (2·MaxLinePoints − 1).
const MaxLineDegree = 2*MaxLinePoints - 1

// Line is a Gauss–Legendre quadrature rule on the unit interval [0, 1].
//
// The nodes X lie in (0, 1) in ascending order and the weights W are
// positive and sum to 1. To integrate over a segment of length L, map the
// nodes affinely onto it and multiply the weights by L.
//
// Values returned by [GaussLegendre] and [ForLine] are shared and must not be
// modified.
type Line struct {
	Degree int       // highest polynomial degree integrated exactly, 2·Len()−1
	X      []float64 // nodes in (0, 1), ascending
	W      []float64 // weights, all > 0, summing to 1
}

// Len returns the number of points of the rule.
func (r *Line) Len() int { return len(r.W) }

var lineCache [MaxLinePoints + 1]struct {
	once sync.Once
	rule *Line
}

// GaussLegendre returns the n-point Gauss–Legendre rule on [0, 1], which is
// exact for polynomials of degree up to 2n−1.
//
// n must be in [1, MaxLinePoints]; otherwise the error wraps [ErrDegree].
// The nodes are the roots of the Legendre polynomial P_n, found by Newton
// iteration with P_n and P_n' evaluated by the three-term recurrence; no
// tabulated values are used. Each rule is computed once and then shared;
// callers must not modify it.
func GaussLegendre(n int) (*Line, error) {
	if n < 1 || n > MaxLinePoints {
		return nil, fmt.Errorf("quadrature: GaussLegendre: %d points outside [1, %d]: %w",
			n, MaxLinePoints, ErrDegree)
	}
	c := &lineCache[n]
	c.once.Do(func() { c.rule = gaussLegendre(n) })
	return c.rule, nil
}

// ForLine returns the Gauss–Legendre rule with the fewest points that is
// exact for polynomials of the given degree, that is n = degree/2 + 1 points.
//
// degree must be in [0, MaxLineDegree]; otherwise the error wraps
// [ErrDegree]. The returned rule is shared and read-only.
func ForLine(degree int) (*Line, error) {
	if degree < 0 || degree > MaxLineDegree {
		return nil, fmt.Errorf("quadrature: ForLine: degree %d outside [0, %d]: %w",
			degree, MaxLineDegree, ErrDegree)
	}
	return GaussLegendre(degree/2 + 1)
}

// legendre returns P_n(t) and P_n'(t) by the recurrence
// (k+1) P_{k+1} = (2k+1) t P_k − k P_{k−1}, with
// P_n'(t) = n (t P_n − P_{n−1}) / (t² − 1), valid for |t| < 1.
func legendre(n int, t float64) (p, dp float64) {
	p0, p1 := 1.0, t
	for k := 1; k < n; k++ {
		p0, p1 = p1, (float64(2*k+1)*t*p1-float64(k)*p0)/float64(k+1)
	}
	if n == 0 {
		return 1, 0
	}
	return p1, float64(n) * (t*p1 - p0) / (t*t - 1)
}

// gaussLegendre computes the n-point rule on [0, 1].
//
// The roots t_1 > … > t_m > 0 of P_n (m = n/2) are found by Newton's method
// from the asymptotic initial guess
// t ≈ (1 − 1/(8n²) + 1/(8n³)) cos(π (i − 1/4) / (n + 1/2)); the negative
// roots follow by symmetry and, for odd n, t = 0 is a root. On [−1, 1] the
// weight of a root t is 2 / ((1 − t²) P_n'(t)²); the affine map
// x = (1 + t)/2 halves it.
func gaussLegendre(n int) *Line {
	r := &Line{Degree: 2*n - 1, X: make([]float64, n), W: make([]float64, n)}
	fn := float64(n)
	for i := 0; i < n/2; i++ {
		t := (1 - 1/(8*fn*fn) + 1/(8*fn*fn*fn)) * math.Cos(math.Pi*(float64(i)+0.75)/(fn+0.5))
		for range 100 {
			p, dp := legendre(n, t)
			dt := p / dp
			t -= dt
			if math.Abs(dt) <= 1e-15 { // quadratic convergence: t is now accurate to rounding
				break
			}
		}
		_, dp := legendre(n, t)
		w := 1 / ((1 - t*t) * dp * dp)
		r.X[i], r.X[n-1-i] = (1-t)/2, (1+t)/2
		r.W[i], r.W[n-1-i] = w, w
	}
	if n%2 == 1 {
		_, dp := legendre(n, 0)
		r.X[n/2] = 0.5
		r.W[n/2] = 1 / (dp * dp)
	}
	return r
}

// Legendre01 returns L_j(t) = P_j(2t − 1), the Legendre polynomial of
// degree j shifted to [0, 1] (orthogonal there, L_j(1) = 1): the moments
// of the Raviart–Thomas edge degrees of freedom are taken against them.
// Degrees up to 2 are evaluated by their expanded forms, higher ones by
// the three-term recurrence.
func Legendre01(j int, t float64) float64 {
	switch j {
	case 0:
		return 1
	case 1:
		return 2*t - 1
	case 2:
		return 6*t*t - 6*t + 1
	}
	p, _ := legendre(j, 2*t-1)
	return p
}
