package estimate

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
)

// goalTables holds ζ = y⁺ − I_h y⁺ as a linear form of the nodal values of
// y⁺ on a triangle (Enriched's order) at the points of the rules:
//
//	ζ(λ) = Σ_j c_j(λ) y⁺_j,   c_j(λ) = b_j(λ) − Σ_i φ_i(λ) I_ij,
//
// with b_j the Lagrange basis of degree p + 1, φ_i that of degree p and
// I_ij = b_j(node i of degree p) the nodal interpolation.
type goalTables struct {
	per  int         // nodes of degree p + 1 per triangle: 6 or 10
	tri  [][]float64 // tri[q][j] = c_j at point q of the triangle rule
	edge [][]float64 // edge[i·nq+q][j] = c_j at point q of the line rule on the edge opposite local vertex i, from vertex i+1 to i+2
}

// newGoalTables tabulates c_j for degree deg at the points of rule and line.
func newGoalTables(deg int, rule *quadrature.Triangle, line *quadrature.Line) *goalTables {
	per := (deg + 2) * (deg + 3) / 2
	// interp[i][j] = b_j at node i of degree deg (vertices, then for P2 the
	// midpoints of the edges opposite the vertices).
	interp := make([][10]float64, 3*deg)
	for i := range interp {
		var l [3]float64
		if i < 3 {
			l[i] = 1
		} else {
			l[(i-3+1)%3], l[(i-3+2)%3] = 0.5, 0.5
		}
		enrichedShape(deg+1, l, interp[i][:])
	}
	coef := func(l [3]float64) []float64 {
		var b [10]float64
		var phi [6]float64
		enrichedShape(deg+1, l, b[:])
		fem.Shape(deg, l, phi[:])
		c := make([]float64, per)
		for j := range per {
			v := b[j]
			for i := range 3 * deg {
				v -= phi[i] * interp[i][j]
			}
			c[j] = v
		}
		return c
	}
	t := &goalTables{per: per}
	for q := range rule.Len() {
		t.tri = append(t.tri, coef([3]float64{rule.Bary[3*q], rule.Bary[3*q+1], rule.Bary[3*q+2]}))
	}
	for i := range 3 {
		for _, s := range line.X {
			var l [3]float64
			l[(i+1)%3], l[(i+2)%3] = 1-s, s
			t.edge = append(t.edge, coef(l))
		}
	}
	return t
}

// zeta returns Σ_j c[j] yp[j].
func zeta(c, yp []float64) float64 {
	v := 0.0
	for j, cj := range c {
		v += cj * yp[j]
	}
	return v
}

// goalFast is the path of Estimate for piecewise-constant a, P1 and P2, in
// three passes, each split over GOMAXPROCS goroutines with every value
// written by one goroutine in a fixed order:
//
//   - over the triangles: the element terms of ρ_T and ι_T, and the flux
//     a∇u_h of each triangle (P1: one vector; P2: one at each vertex, from
//     which it is linear along each edge);
//   - over the edges: the term ∫_E r_E ζ and the product ‖r_E‖_E ‖ζ‖_E of
//     each edge, once for both of its triangles (ζ is continuous), r_E from
//     the stored fluxes, ζ from the tables of goalTables;
//   - over the triangles: the edge terms added in local edge order.
//
// It computes the same sums as goalElement, the general path, in another
// order: the results agree to rounding (TestDualWeightedFastPath).
func goalFast(dst *GoalIndicators, u, y *fem.Function, p *fem.Problem, rec *Enriched, rule *quadrature.Triangle, line *quadrature.Line) error {
	m := u.Space.Mesh
	deg := u.Space.Degree
	nt, ne := m.NumTriangles(), m.NumEdges()
	tab := newGoalTables(deg, rule, line)
	per := tab.per
	nf := 2 // flux values per triangle
	if deg == 2 {
		nf = 6
	}
	flux := make([]float64, nf*nt)
	elemB := make([]float64, nt)
	err := parallel.For(nt, 512, func(lo, hi int) error {
		ev := fem.NewEvaluator(u)
		for k := lo; k < hi; k++ {
			ev.Load(k)
			region := ev.Region()
			cx, cy := ev.Point([3]float64{1. / 3, 1. / 3, 1. / 3})
			a := p.Diffusion(cx, cy, region)
			if deg == 1 {
				_, gx, gy := ev.Eval([3]float64{1. / 3, 1. / 3, 1. / 3})
				flux[2*k], flux[2*k+1] = a.Apply(gx, gy)
			} else {
				for i := range 3 {
					var l [3]float64
					l[i] = 1
					_, gx, gy := ev.Eval(l)
					flux[6*k+2*i], flux[6*k+2*i+1] = a.Apply(gx, gy)
				}
			}
			hess := ev.Hessian()
			div := a.XX*hess[0] + 2*a.XY*hess[1] + a.YY*hess[2]
			yp := rec.Node[per*k : per*(k+1)]
			area := ev.Area()
			var rho, r2, z2 float64
			for q := range rule.Len() {
				l := [3]float64{rule.Bary[3*q], rule.Bary[3*q+1], rule.Bary[3*q+2]}
				x, yy := ev.Point(l)
				f := p.Source(x, yy, region)
				if math.IsNaN(f) || math.IsInf(f, 0) {
					return fmt.Errorf("estimate: DualWeighted: triangle %d at (%g, %g): source f = %g: %w", k, x, yy, f, ErrNotFinite)
				}
				r := f + div
				if p.C != 0 {
					v, _, _ := ev.Eval(l)
					r -= p.C * v
				}
				z := zeta(tab.tri[q], yp)
				wq := rule.W[q] * area
				rho += wq * r * z
				r2 += wq * r * r
				z2 += wq * z * z
			}
			dst.Rho[k], elemB[k] = rho, math.Sqrt(r2*z2)
		}
		return nil
	})
	if err != nil {
		return err
	}
	edgeRho, edgeB := make([]float64, ne), make([]float64, ne)
	nq := len(line.X)
	err = parallel.For(ne, 512, func(lo, hi int) error {
		ev, yev := fem.NewEvaluator(u), fem.NewEvaluator(y)
		for e := lo; e < hi; e++ {
			k := int(m.EdgeTri[2*e])
			i := localEdge(m, k, e)
			j, jj := (i+1)%3, (i+2)%3
			tv := m.Tri[3*k : 3*k+3]
			ax, ay := m.Vertex(int(tv[j]))
			bx, by := m.Vertex(int(tv[jj]))
			length := math.Hypot(bx-ax, by-ay)
			nx, ny := (by-ay)/length, -(bx-ax)/length // outward of k: counter-clockwise
			boundary := m.IsBoundary(e)
			tag := m.EdgeTag[e]
			if gd, ok := p.Dirichlet[tag]; ok && boundary {
				ev.Load(k)
				d, err := dirichletTerm(ev, yev, p, line, k, j, jj, length, nx, ny, gd)
				if err != nil {
					return err
				}
				edgeRho[e], edgeB[e] = d, math.Abs(d)
				continue
			}
			// The other triangle's local positions of the edge's ends.
			other, oj, ojj := -1, 0, 0
			if boundary {
				ev.Load(k)
			} else {
				other = int(m.EdgeTri[2*e+1])
				oj, ojj = localVertex(m, other, tv[j]), localVertex(m, other, tv[jj])
			}
			yp := rec.Node[per*k : per*(k+1)]
			var ed, e2, ze2 float64
			for q, t := range line.X {
				fx, fy := fluxAt(flux, deg, k, j, jj, t)
				var r float64
				if boundary {
					var l [3]float64
					l[j], l[jj] = 1-t, t
					x, yy := ev.Point(l)
					v, _, _ := ev.Eval(l)
					g, _, err := p.BoundaryFlux(tag, x, yy, v) // g_N, or g_R − α u_h
					if err != nil {
						return fmt.Errorf("estimate: DualWeighted: %w", err)
					}
					r = g - (fx*nx + fy*ny)
				} else {
					ox, oy := fluxAt(flux, deg, other, oj, ojj, t)
					r = -((fx-ox)*nx + (fy-oy)*ny)
				}
				z := zeta(tab.edge[i*nq+q], yp)
				wq := line.W[q] * length
				ed += wq * r * z
				e2 += wq * r * r
				ze2 += wq * z * z
			}
			edgeRho[e], edgeB[e] = ed, math.Sqrt(e2*ze2)
		}
		return nil
	})
	if err != nil {
		return err
	}
	_ = parallel.For(nt, 4096, func(lo, hi int) error {
		for k := lo; k < hi; k++ {
			rho, bound := dst.Rho[k], elemB[k]
			for _, e := range m.TriEdge[3*k : 3*k+3] {
				c := 0.5
				if m.IsBoundary(int(e)) {
					c = 1
				}
				rho += c * edgeRho[e]
				bound += c * edgeB[e]
			}
			dst.Rho[k], dst.Mark2[k] = rho, bound*bound
		}
		return nil
	})
	return nil
}

// fluxAt returns a∇u_h of triangle k at the point (1 − t) v_j + t v_jj of
// its edge from local vertex j to jj, from the stored fluxes.
func fluxAt(flux []float64, deg, k, j, jj int, t float64) (fx, fy float64) {
	if deg == 1 {
		return flux[2*k], flux[2*k+1]
	}
	f := flux[6*k : 6*k+6]
	return (1-t)*f[2*j] + t*f[2*jj], (1-t)*f[2*j+1] + t*f[2*jj+1]
}
