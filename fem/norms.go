package fem

import (
	"fmt"
	"math"
	"runtime"
	"sync"

	"github.com/posteriori-fem/posteriori/internal/quadrature"
)

// Exact is a known solution for measuring true errors.
type Exact struct {
	U    Func                                // the solution u
	Grad func(x, y float64) (gx, gy float64) // its gradient ∇u
	// Singular lists points where u is not smooth (a re-entrant corner, a
	// crack tip, a point where coefficients meet). Triangles that contain
	// one are integrated on a subdivision graded towards it.
	Singular [][2]float64
}

// Errors holds the norms of the error e = u − u_h.
type Errors struct {
	L2     float64 // ‖e‖ in L²(Ω)
	H1     float64 // |e|_H¹ = ‖∇e‖ in L²(Ω), the H¹ seminorm
	Energy float64 // the energy norm (∫ a∇e·∇e + c e²)^½, equal to ‖a^½ ∇e‖ when c = 0
}

// Quadrature for errors: the rule of degree ErrorDegree on every triangle;
// on a triangle containing a singular point, SingularLevels levels of
// subdivision into four, refining the sub-triangles that contain the point.
const (
	ErrorDegree    = 10
	SingularLevels = 12
)

// Error returns the norms of u − u_h for the exact solution ex, and writes
// the squared energy error of each triangle into dst (resized; a nil dst
// allocates), which it returns. The triangles are split over GOMAXPROCS
// goroutines and the sums are taken in triangle order, so the result does
// not depend on GOMAXPROCS.
func (u *Function) Error(dst []float64, ex Exact, p *Problem) ([]float64, Errors, error) {
	if ex.U == nil || ex.Grad == nil {
		return dst, Errors{}, fmt.Errorf("fem: Error: exact solution needs U and Grad: %w", ErrArgument)
	}
	if p == nil {
		p = &Problem{}
	}
	s := u.Space
	nt := s.Mesh.NumTriangles()
	rule, err := quadrature.ForTriangle(ErrorDegree)
	if err != nil {
		return dst, Errors{}, err
	}
	dst = resize(dst, nt)
	l2 := make([]float64, nt)
	h1 := make([]float64, nt)
	workers := max(1, min(runtime.GOMAXPROCS(0), nt/1024))
	errs := make([]error, workers)
	var wg sync.WaitGroup
	chunk := (nt + workers - 1) / workers
	for w := range workers {
		lo, hi := w*chunk, min((w+1)*chunk, nt)
		wg.Add(1)
		go func() {
			defer wg.Done()
			ev := NewEvaluator(u)
			for k := lo; k < hi; k++ {
				if err := ev.triangleError(u, k, ex, p, rule, &l2[k], &h1[k], &dst[k]); err != nil {
					errs[w] = err
					return
				}
			}
		}()
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return dst, Errors{}, err
		}
	}
	var e Errors
	for k := range nt {
		e.L2 += l2[k]
		e.H1 += h1[k]
		e.Energy += dst[k]
	}
	e.L2, e.H1, e.Energy = math.Sqrt(e.L2), math.Sqrt(e.H1), math.Sqrt(e.Energy)
	return dst, e, nil
}

func resize(dst []float64, n int) []float64 {
	if cap(dst) < n {
		return make([]float64, n)
	}
	return dst[:n]
}

func (ev *Evaluator) triangleError(u *Function, k int, ex Exact, p *Problem, rule *quadrature.Triangle, l2, h1, en *float64) error {
	ev.Load(k)
	g := &ev.g
	var bad error
	fn := func(l [3]float64, w float64) {
		if bad != nil {
			return
		}
		x, y := g.point(l)
		v, gx, gy := ev.Eval(l)
		ue := ex.U(x, y)
		ux, uy := ex.Grad(x, y)
		e, dx, dy := ue-v, ux-gx, uy-gy
		if math.IsNaN(e+dx+dy) || math.IsInf(e+dx+dy, 0) {
			bad = atTriangle(k, x, y, fmt.Errorf("%w: exact solution or its gradient", ErrNotFinite))
			return
		}
		t := p.Diffusion(x, y, g.region)
		ax, ay := t.Apply(dx, dy)
		*l2 += w * e * e
		*h1 += w * (dx*dx + dy*dy)
		*en += w * (ax*dx + ay*dy + p.C*e*e)
	}
	*l2, *h1, *en = 0, 0, 0
	integrate(g, ex.Singular, rule, fn)
	return bad
}

// integrate calls fn at the quadrature points (barycentric coordinates in
// the triangle of g) and weights (area included) of rule, applied on a
// graded subdivision when the triangle contains one of the singular points.
func integrate(g *geometry, singular [][2]float64, rule *quadrature.Triangle, fn func(l [3]float64, w float64)) {
	corners := [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}
	for _, p := range singular {
		b := g.bary(p[0], p[1])
		if min(b[0], b[1], b[2]) >= -1e-12 {
			subdivide(corners, b, SingularLevels, g.area, rule, fn)
			return
		}
	}
	apply(corners, g.area, rule, fn)
}

// apply applies rule on the sub-triangle with barycentric corners c and
// the given area.
func apply(c [3][3]float64, area float64, rule *quadrature.Triangle, fn func(l [3]float64, w float64)) {
	for q := range rule.Len() {
		a, b, d := rule.Bary[3*q], rule.Bary[3*q+1], rule.Bary[3*q+2]
		var l [3]float64
		for i := range 3 {
			l[i] = a*c[0][i] + b*c[1][i] + d*c[2][i]
		}
		fn(l, rule.W[q]*area)
	}
}

// subdivide cuts the sub-triangle c into four at its edge midpoints and
// recurses into the children that contain the point b (barycentric).
func subdivide(c [3][3]float64, b [3]float64, levels int, area float64, rule *quadrature.Triangle, fn func(l [3]float64, w float64)) {
	if levels == 0 {
		apply(c, area, rule, fn)
		return
	}
	mid := func(i, j int) [3]float64 {
		return [3]float64{(c[i][0] + c[j][0]) / 2, (c[i][1] + c[j][1]) / 2, (c[i][2] + c[j][2]) / 2}
	}
	m01, m12, m20 := mid(0, 1), mid(1, 2), mid(2, 0)
	children := [4][3][3]float64{
		{c[0], m01, m20}, {m01, c[1], m12}, {m20, m12, c[2]}, {m12, m20, m01},
	}
	for _, ch := range children {
		if contains(ch, b) {
			subdivide(ch, b, levels-1, area/4, rule, fn)
		} else {
			apply(ch, area/4, rule, fn)
		}
	}
}

// contains reports whether the point with barycentric coordinates b lies in
// the sub-triangle with barycentric corners c (closed, up to rounding).
func contains(c [3][3]float64, b [3]float64) bool {
	// Work in the (λ1, λ2) plane.
	ax, ay := c[0][1], c[0][2]
	bx, by := c[1][1]-ax, c[1][2]-ay
	cx, cy := c[2][1]-ax, c[2][2]-ay
	px, py := b[1]-ax, b[2]-ay
	d := bx*cy - by*cx
	s := (px*cy - py*cx) / d
	t := (bx*py - by*px) / d
	const tol = 1e-12
	return s >= -tol && t >= -tol && s+t <= 1+tol
}

// bary returns the barycentric coordinates of (x, y) in the triangle of g.
func (g *geometry) bary(x, y float64) [3]float64 {
	var l [3]float64
	for i := range 3 {
		j := (i + 1) % 3
		// λ_i is affine with gradient gl[i] and vanishes at vertex j.
		l[i] = g.gl[i][0]*(x-g.x[j]) + g.gl[i][1]*(y-g.y[j])
	}
	return l
}
