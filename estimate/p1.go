package estimate

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Helpers shared by the P1 fast paths for piecewise-constant diffusion
// (residualP1 in residual_p1.go, averagingP1 in averaging.go), and the
// lookups of local vertices and edges used by every path.
//
// The fast paths work straight on the flat arrays of the mesh and on the
// nodal values: the gradient of u_h is constant on each triangle and is
// computed in closed form,
//
//	∇u_h = J⁻ᵀ (u_1 − u_0, u_2 − u_0),  J = [x_1 − x_0, x_2 − x_0],
//
// the diffusion of each region is resolved once (fem.RegionTable), and every integral whose
// integrand is a polynomial is taken in closed form. Only f and g_N are
// integrated by quadrature, with the rules of the general path, and so are
// the Robin data g_R − α u_h. The results
// agree with the general path to rounding (its gradient Σ u_i ∇λ_i loses
// more to cancellation than the differences above).

// Kinds of boundary edge, by tag.
const (
	edgeNatural   uint8 = iota // no Dirichlet tag and no Neumann data: a∇u·n = 0
	edgeDirichlet              // Dirichlet: no contribution
	edgeNeumann                // Neumann data g_N or a Robin condition, integrated by quadrature
)

// tagKinds classifies boundary tags, from a table for the small tags.
type tagKinds struct {
	small [64]uint8
	p     *fem.Problem
}

func newTagKinds(p *fem.Problem) *tagKinds {
	b := &tagKinds{p: p}
	for tag := range b.small {
		b.small[tag] = edgeKind(p, int32(tag))
	}
	return b
}

func (b *tagKinds) kind(tag int32) uint8 {
	if uint32(tag) < uint32(len(b.small)) {
		return b.small[tag]
	}
	return edgeKind(b.p, tag)
}

func edgeKind(p *fem.Problem, tag int32) uint8 {
	if _, ok := p.Dirichlet[tag]; ok {
		return edgeDirichlet
	}
	if p.HasBoundaryData(tag) {
		return edgeNeumann
	}
	return edgeNatural
}

// zero sets s[k] to +0, reading first: where s[k] is +0 already (the
// oscillation of an earlier estimate without f, or fresh memory) the cache
// line is then not written back.
func zero(s []float64, k int) {
	if math.Float64bits(s[k]) != 0 {
		s[k] = 0
	}
}

// p1Grad returns twice the area of the triangle with vertices a, b, c
// (counter-clockwise) and the gradient of the P1 function with nodal
// values u on it.
func p1Grad(x, u []float64, a, b, c int32) (d, gx, gy float64) {
	x0, y0 := x[2*a], x[2*a+1]
	ax, ay := x[2*b]-x0, x[2*b+1]-y0
	bx, by := x[2*c]-x0, x[2*c+1]-y0
	d = ax*by - ay*bx
	u0 := u[a]
	du1, du2 := u[b]-u0, u[c]-u0
	return d, (by*du1 - ay*du2) / d, (ax*du2 - bx*du1) / d
}

// corners returns the coordinates of the vertices of triangle t.
func corners(x []float64, t []int32) (xs, ys [3]float64) {
	for i, v := range t[:3] {
		xs[i], ys[i] = x[2*v], x[2*v+1]
	}
	return xs, ys
}

// diameter returns the longest edge of the triangle with vertices xs, ys,
// as mesh.Diameter does.
func diameter(xs, ys *[3]float64) float64 {
	d2 := func(i, j int) float64 {
		dx, dy := xs[j]-xs[i], ys[j]-ys[i]
		return dx*dx + dy*dy
	}
	return math.Sqrt(max(d2(0, 1), d2(1, 2), d2(2, 0)))
}

// oscP0 returns ‖f − Π_0 f‖²_T / |T| from f at the points of rule.
func oscP0(rule *quadrature.Triangle, f []float64) float64 {
	mean := 0.0
	for q, v := range f {
		mean += rule.W[q] * v
	}
	o := 0.0
	for q, v := range f {
		o += rule.W[q] * (v - mean) * (v - mean)
	}
	return o
}

// osc2P0 returns the oscillation h_T² ‖f − Π_0 f‖²_T of triangle k with
// corners xs, ys, region and area, f taken at the points of rule; for an f
// that is NaN or infinite there it returns an error wrapping ErrNotFinite
// that names the triangle and the point (the caller adds its context).
func osc2P0(p *fem.Problem, rule *quadrature.Triangle, xs, ys *[3]float64, region int32, k int, area float64) (float64, error) {
	var fq [quadrature.MaxTrianglePoints]float64
	sf := 0.0 // not finite if some f is not (or the sum overflows)
	for q := range rule.Len() {
		l0, l1, l2 := rule.Bary[3*q], rule.Bary[3*q+1], rule.Bary[3*q+2]
		px, py := l0*xs[0]+l1*xs[1]+l2*xs[2], l0*ys[0]+l1*ys[1]+l2*ys[2]
		fq[q] = p.Source(px, py, region)
		sf += fq[q]
	}
	if sf-sf != 0 {
		if err := sourceNotFinite("", rule, fq[:rule.Len()], xs, ys, k); err != nil {
			return 0, err
		}
	}
	h := diameter(xs, ys)
	return h * h * (oscP0(rule, fq[:rule.Len()]) * area), nil
}

// sourceNotFinite returns the error for the first value of f that is not
// finite among the values fq at the points of rule on triangle k with
// vertices xs, ys, or nil if all are finite. The callers sum the values
// and look here only when the sum is not finite, so that the common case
// costs one check per triangle. The message starts with the estimator's
// name if it is not empty.
func sourceNotFinite(name string, rule *quadrature.Triangle, fq []float64, xs, ys *[3]float64, k int) error {
	for q, f := range fq {
		if !math.IsNaN(f) && !math.IsInf(f, 0) {
			continue
		}
		l0, l1, l2 := rule.Bary[3*q], rule.Bary[3*q+1], rule.Bary[3*q+2]
		px, py := l0*xs[0]+l1*xs[1]+l2*xs[2], l0*ys[0]+l1*ys[1]+l2*ys[2]
		err := fmt.Errorf("triangle %d at (%g, %g): source f = %g: %w", k, px, py, f, ErrNotFinite)
		if name != "" {
			err = fmt.Errorf("estimate: %s: %w", name, err)
		}
		return err
	}
	return nil
}

// localEdge returns i such that edge e is edge i (opposite vertex i) of
// triangle k.
func localEdge(m *mesh.Mesh, k, e int) int {
	for i := range 3 {
		if int(m.TriEdge[3*k+i]) == e {
			return i
		}
	}
	panic("estimate: edge not in its triangle") // broken topology invariant
}

// localVertex returns the local index of vertex v in triangle k.
func localVertex(m *mesh.Mesh, k int, v int32) int {
	for i := range 3 {
		if m.Tri[3*k+i] == v {
			return i
		}
	}
	panic("estimate: vertex not in its triangle") // broken topology invariant
}
