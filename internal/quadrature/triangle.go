package quadrature

import (
	"fmt"
	"sync"
)

//go:generate go run ./internal/gen -o triangle_data.go

// MaxTriangleDegree is the highest polynomial degree for which [ForTriangle]
// has a rule.
const MaxTriangleDegree = 10

// MaxTrianglePoints is the largest number of points of any rule returned by
// [ForTriangle], so that callers can size fixed buffers.
const MaxTrianglePoints = 25

// Triangle is a symmetric quadrature rule on a triangle in barycentric
// coordinates.
//
// Point k has barycentric coordinates Bary[3k], Bary[3k+1], Bary[3k+2]
// (λ0, λ1, λ2) and weight W[k]. The weights sum to 1, so the rule
// approximates the mean value of a function; multiply by the triangle's area
// to obtain the integral.
//
// The stored rules are the positive-weight symmetric rules of
// D. A. Dunavant, "High degree efficient symmetrical Gaussian quadrature
// rules for the triangle", Int. J. Numer. Methods Eng. 21 (1985) 1129–1148,
// polished to full float64 precision (see triangle_data.go and internal/gen).
//
// Values returned by [ForTriangle] are shared and must not be modified.
type Triangle struct {
	Degree int       // highest total polynomial degree integrated exactly
	Bary   []float64 // 3 barycentric coordinates per point (λ0, λ1, λ2), all > 0
	W      []float64 // one weight per point, all > 0, summing to 1 (multiply by the triangle's area)
}

// Len returns the number of points of the rule.
func (r *Triangle) Len() int { return len(r.W) }

// orbitKind is the symmetry class of an orbit of points under the
// permutations of the barycentric coordinates.
type orbitKind int

const (
	centroid orbitKind = iota // (1/3, 1/3, 1/3): 1 point
	s21                       // (a, b, b) and its permutations: 3 points
	s111                      // (a, b, c) and its permutations: 6 points
)

// orbit is one symmetry orbit of a rule: a representative point and the
// weight shared by all points of the orbit.
type orbit struct {
	kind orbitKind
	bary [3]float64
	w    float64
}

// orbitRule is a rule given by its orbits (see triangle_data.go).
type orbitRule struct {
	degree int
	orbits []orbit
}

// expand returns the rule with all points of every orbit listed.
func (o orbitRule) expand() *Triangle {
	r := &Triangle{Degree: o.degree}
	add := func(a, b, c, w float64) {
		r.Bary = append(r.Bary, a, b, c)
		r.W = append(r.W, w)
	}
	for _, p := range o.orbits {
		a, b, c := p.bary[0], p.bary[1], p.bary[2]
		switch p.kind {
		case centroid:
			add(a, b, c, p.w)
		case s21: // b == c
			add(a, b, b, p.w)
			add(b, a, b, p.w)
			add(b, b, a, p.w)
		case s111:
			add(a, b, c, p.w)
			add(a, c, b, p.w)
			add(b, a, c, p.w)
			add(b, c, a, p.w)
			add(c, a, b, p.w)
			add(c, b, a, p.w)
		}
	}
	return r
}

var (
	triangleOnce  sync.Once
	triangleRules []*Triangle // stored rules, ascending degree
)

// triangles returns the stored rules, building them on first use.
func triangles() []*Triangle {
	triangleOnce.Do(func() {
		triangleRules = make([]*Triangle, len(dunavantRules))
		for i, o := range dunavantRules {
			triangleRules[i] = o.expand()
		}
	})
	return triangleRules
}

// ForTriangle returns the stored rule with the fewest points whose degree is
// at least degree.
//
// degree must be in [0, MaxTriangleDegree]; otherwise the error wraps
// [ErrDegree]. Degree 0 is served by the 1-point degree 1 rule. Because
// Dunavant's degree 3 and degree 7 rules have a negative weight they are not
// stored: ForTriangle(3) returns the 6-point degree 4 rule and ForTriangle(7)
// the 16-point degree 8 rule.
//
// The returned rule is shared and read-only; callers must not modify it.
func ForTriangle(degree int) (*Triangle, error) {
	if degree < 0 || degree > MaxTriangleDegree {
		return nil, fmt.Errorf("quadrature: ForTriangle: degree %d outside [0, %d]: %w",
			degree, MaxTriangleDegree, ErrDegree)
	}
	var best *Triangle
	for _, r := range triangles() {
		if r.Degree >= degree && (best == nil || r.Len() < best.Len()) {
			best = r
		}
	}
	if best == nil { // unreachable while the table covers MaxTriangleDegree
		return nil, fmt.Errorf("quadrature: ForTriangle: no rule of degree %d: %w", degree, ErrDegree)
	}
	return best, nil
}
