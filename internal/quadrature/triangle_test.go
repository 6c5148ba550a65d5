package quadrature

import (
	"errors"
	"fmt"
	"math"
	"testing"
)

// monomialTol is the relative tolerance for the exactness of a rule on a
// monomial of admissible degree.
const monomialTol = 1e-13

// inexactTol is the relative error a monomial of degree Degree+1 must exceed
// for at least one monomial, so that the Degree field is not understated.
const inexactTol = 1e-10

// baryTol bounds |λ0+λ1+λ2−1| and |Σw−1|.
const baryTol = 1e-15

// factorial returns n! (exact in float64 for the small n used here).
func factorial(n int) float64 {
	f := 1.0
	for k := 2; k <= n; k++ {
		f *= float64(k)
	}
	return f
}

// exactTriangleMonomial is ∫ x^i y^j over the reference triangle
// (0,0),(1,0),(0,1).
// exact: i! j! / (i+j+2)!, classical formula (Dirichlet integral).
func exactTriangleMonomial(i, j int) float64 {
	return factorial(i) * factorial(j) / factorial(i+j+2)
}

// integrateMonomial applies r to x^i y^j on the reference triangle with
// x = λ1, y = λ2 (vertices v0 = (0,0), v1 = (1,0), v2 = (0,1)); area 1/2.
func integrateMonomial(r *Triangle, i, j int) float64 {
	s := 0.0
	for k := range r.Len() {
		x, y := r.Bary[3*k+1], r.Bary[3*k+2]
		s += r.W[k] * math.Pow(x, float64(i)) * math.Pow(y, float64(j))
	}
	return 0.5 * s
}

// maxMonomialError returns the largest relative error of r over all
// monomials x^i y^j with i+j == d.
func maxMonomialError(r *Triangle, d int) float64 {
	m := 0.0
	for i := 0; i <= d; i++ {
		e := exactTriangleMonomial(i, d-i)
		m = math.Max(m, math.Abs(integrateMonomial(r, i, d-i)-e)/e)
	}
	return m
}

// TestTriangleTable checks the stored rules against the degrees and point
// counts of Dunavant's table.
func TestTriangleTable(t *testing.T) {
	t.Parallel()
	// source: Dunavant (1985), Table I: number of points per degree
	// (degrees 3 and 7 are omitted because of their negative weights).
	want := []struct{ degree, points int }{
		{1, 1}, {2, 3}, {4, 6}, {5, 7}, {6, 12}, {8, 16}, {9, 19}, {10, 25},
	}
	rules := triangles()
	if len(rules) != len(want) {
		t.Fatalf("got %d rules, want %d", len(rules), len(want))
	}
	for i, w := range want {
		if rules[i].Degree != w.degree || rules[i].Len() != w.points {
			t.Errorf("rule %d: degree %d with %d points, want degree %d with %d points",
				i, rules[i].Degree, rules[i].Len(), w.degree, w.points)
		}
		if len(rules[i].Bary) != 3*rules[i].Len() {
			t.Errorf("rule %d: %d barycentric values for %d points", i, len(rules[i].Bary), rules[i].Len())
		}
	}
	if got := rules[len(rules)-1].Degree; got != MaxTriangleDegree {
		t.Errorf("highest stored degree %d, MaxTriangleDegree %d", got, MaxTriangleDegree)
	}
}

func TestTriangleRules(t *testing.T) {
	t.Parallel()
	for _, r := range triangles() {
		t.Run(fmt.Sprintf("degree%d", r.Degree), func(t *testing.T) {
			t.Parallel()
			t.Run("positive", func(t *testing.T) {
				t.Parallel()
				sumW := 0.0
				for k := range r.Len() {
					if !(r.W[k] > 0) {
						t.Errorf("point %d: weight %g not positive", k, r.W[k])
					}
					sumW += r.W[k]
					l := r.Bary[3*k : 3*k+3]
					for _, v := range l {
						if !(v > 0 && v < 1) {
							t.Errorf("point %d: barycentric coordinate %g outside (0,1)", k, v)
						}
					}
					// exact: barycentric coordinates sum to 1 by definition.
					if s := l[0] + l[1] + l[2]; math.Abs(s-1) > baryTol {
						t.Errorf("point %d: coordinates sum to 1%+g", k, s-1)
					}
				}
				// exact: weights normalised to the area, sum 1 by convention.
				if math.Abs(sumW-1) > baryTol {
					t.Errorf("weights sum to 1%+g", sumW-1)
				}
			})
			t.Run("symmetric", func(t *testing.T) {
				t.Parallel()
				// exact: the rules are invariant under the 6 permutations
				// of the barycentric coordinates (Dunavant's construction).
				perms := [6][3]int{{0, 1, 2}, {0, 2, 1}, {1, 0, 2}, {1, 2, 0}, {2, 0, 1}, {2, 1, 0}}
				for k := range r.Len() {
					for _, p := range perms {
						q := [3]float64{r.Bary[3*k+p[0]], r.Bary[3*k+p[1]], r.Bary[3*k+p[2]]}
						if !hasPoint(r, q, r.W[k]) {
							t.Errorf("point %d permuted by %v to %v: not in the rule with weight %g", k, p, q, r.W[k])
						}
					}
					for m := range k {
						if d := baryDist(r, k, m); d < 1e-8 {
							t.Errorf("points %d and %d coincide (distance %g)", m, k, d)
						}
					}
				}
			})
			t.Run("exact", func(t *testing.T) {
				t.Parallel()
				worst := 0.0
				for d := 0; d <= r.Degree; d++ {
					for i := 0; i <= d; i++ {
						e := exactTriangleMonomial(i, d-i)
						got := integrateMonomial(r, i, d-i)
						rel := math.Abs(got-e) / e
						worst = math.Max(worst, rel)
						if rel > monomialTol {
							t.Errorf("x^%d y^%d: got %.17g, want %.17g (relative error %.3g)", i, d-i, got, e, rel)
						}
					}
				}
				t.Logf("degree %d, %d points: max relative monomial error %.3g", r.Degree, r.Len(), worst)
			})
			t.Run("inexact", func(t *testing.T) {
				t.Parallel()
				// A rule of this degree and symmetry cannot integrate all
				// monomials of degree Degree+1 (no stored rule has enough
				// points for it); this confirms Degree is not understated.
				if e := maxMonomialError(r, r.Degree+1); e <= inexactTol {
					t.Errorf("all monomials of degree %d integrated to %.3g: Degree field understated", r.Degree+1, e)
				}
			})
		})
	}
}

// hasPoint reports whether r has a point at q with weight w.
func hasPoint(r *Triangle, q [3]float64, w float64) bool {
	for m := range r.Len() {
		if math.Abs(r.Bary[3*m]-q[0]) <= baryTol && math.Abs(r.Bary[3*m+1]-q[1]) <= baryTol &&
			math.Abs(r.Bary[3*m+2]-q[2]) <= baryTol && math.Abs(r.W[m]-w) <= baryTol {
			return true
		}
	}
	return false
}

// baryDist is the max-norm distance of points k and m of r.
func baryDist(r *Triangle, k, m int) float64 {
	d := 0.0
	for c := range 3 {
		d = math.Max(d, math.Abs(r.Bary[3*k+c]-r.Bary[3*m+c]))
	}
	return d
}

func TestForTriangle(t *testing.T) {
	t.Parallel()
	// source: the stored degrees 1, 2, 4, 5, 6, 8, 9, 10 (package doc); 0 is
	// served by degree 1, 3 by 4, 7 by 8.
	want := map[int]int{0: 1, 1: 1, 2: 2, 3: 4, 4: 4, 5: 5, 6: 6, 7: 8, 8: 8, 9: 9, 10: 10}
	for d := 0; d <= MaxTriangleDegree; d++ {
		t.Run(fmt.Sprintf("degree%d", d), func(t *testing.T) {
			t.Parallel()
			r, err := ForTriangle(d)
			if err != nil {
				t.Fatalf("ForTriangle(%d): %v", d, err)
			}
			if r.Len() > MaxTrianglePoints {
				t.Errorf("ForTriangle(%d) has %d points, more than MaxTrianglePoints", d, r.Len())
			}
			if r.Degree < d {
				t.Errorf("ForTriangle(%d) has degree %d", d, r.Degree)
			}
			if r.Degree != want[d] {
				t.Errorf("ForTriangle(%d) has degree %d, want %d", d, r.Degree, want[d])
			}
			for _, o := range triangles() {
				if o.Degree >= d && o.Len() < r.Len() {
					t.Errorf("ForTriangle(%d) has %d points, degree-%d rule has %d", d, r.Len(), o.Degree, o.Len())
				}
			}
			if again, _ := ForTriangle(d); again != r {
				t.Errorf("ForTriangle(%d) not shared across calls", d)
			}
		})
	}
}

func TestForTriangleErrors(t *testing.T) {
	t.Parallel()
	for _, d := range []int{-1, MaxTriangleDegree + 1, math.MinInt, math.MaxInt} {
		t.Run(fmt.Sprint(d), func(t *testing.T) {
			t.Parallel()
			r, err := ForTriangle(d)
			if r != nil || !errors.Is(err, ErrDegree) {
				t.Fatalf("ForTriangle(%d) = %v, %v; want nil, ErrDegree", d, r, err)
			}
			if msg := err.Error(); len(msg) < 11 || msg[:11] != "quadrature:" {
				t.Errorf("message %q lacks the package prefix", msg)
			}
		})
	}
}
