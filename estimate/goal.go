package estimate

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
	"github.com/posteriori-fem/posteriori/mesh"
)

// DualWeighted is the dual weighted residual estimator of the error of a
// goal functional J (a fem.Goal):
//
//	J(u) − J(u_h) ≈ Σ_T ρ_T,
//	ρ_T = (f + ∇·(a∇u_h) − c u_h, ζ)_T − ½ Σ_{interior E ⊂ ∂T} ([[a∇u_h·n]], ζ)_E
//	      + Σ_{Neumann E ⊂ ∂T} (g_N − a∇u_h·n, ζ)_E + Σ_{Robin E ⊂ ∂T} (g_R − α u_h − a∇u_h·n, ζ)_E,
//	ζ = z⁺ − I_h z⁺,
//
// the primal residual ρ(u_h)(v) = (f, v) − a(u_h, v) − (c u_h, v) + (g_N, v)
// + (g_R − α u_h, v)_{Γ_R} split by element and tested with the dual weight
// ζ (the dual problem, fem.Dual, carries the Robin α). z_h is the discrete
// dual solution, a(v_h, z_h) = J₀(v_h) for every v_h of the space with
// homogeneous Dirichlet data (J₀ the linear part of J); z⁺ is its
// reconstruction of degree p + 1 (Reconstruct: Becker and Rannacher's
// patchwise higher-order interpolation; no second solve), and I_h the
// nodal interpolant of degree p. The identity behind it is
// J(u) − J(u_h) = a(u − u_h, z) = ρ(u_h)(z − I_h z) for the exact dual
// solution z, Galerkin orthogonality removing I_h z, when u − u_h vanishes
// on the Dirichlet edges. The interpolation of the Dirichlet data adds
//
//	− Σ_{Dirichlet E} ∫_E (g_D − u_h) a∇y·n ds,   y = z − ℓ
//
// (Green's formula; ℓ = 0 for the means, φ for Flux), which ρ_T includes
// for its Dirichlet edges with the discrete y_h. The estimate replaces z by
// z⁺, and is exact up to that replacement and the algebraic error of the
// solves. The sum is
// signed: it estimates J(u) − J(u_h) with its sign, and its parts may
// cancel.
//
// For a goal with a discrete extension (fem.Flux), z = φ − w with w the
// a-harmonic function with w = φ on the Dirichlet edges: z_h carries the
// kink of φ along Γ, which a patch fit cannot represent, so the
// reconstruction is applied to y = z_h − φ (smooth where w is), keeping
// its Dirichlet trace −φ, and ζ = y⁺ − I_h y⁺, the same weight since φ is
// in the space.
//
// Marking indicators (GoalIndicators.Mark2) are Becker and Rannacher's
// elementwise bound
//
//	|ρ_T| ≤ ι_T = ‖R_T‖_T ‖ζ‖_T + Σ_{E ⊂ ∂T} c_E ‖r_E‖_E ‖ζ‖_E,
//
// with R_T the element residual, r_E the edge residual of ρ_T above and
// c_E ½ on interior and 1 on Neumann edges; Mark2 holds ι_T². This choice
// over the signed ρ_T: a marker needs non-negative indicators that do not
// cancel inside an element (ρ_T can vanish where both residual and weight
// are large). Over the product η_T ζ_T of primal and dual energy
// indicators (Mommer and Stevenson 2009; Becker, Estecahandy and Trujillo
// 2011): ι_T needs only the weight ζ already computed for the estimate
// (no second estimator on a dual problem, whose data for a flux goal is
// not a source term), and it behaves like that product, since
// ‖ζ‖_T ≈ h_T |z − I_h z|_{1,T} and ‖R_T‖_T ≈ η_T / h_T; under Dörfler
// marking it gives the doubled rate N^{−p} of Mommer and Stevenson's
// analysis in the tests of package adapt (TestGoalRates).
//
// Quadrature: the Dunavant rule of degree 2p + 2 on triangles and the
// Gauss–Legendre rule of degree 2p + 2 on edges, exact for the polynomial
// parts with piecewise-constant a.
//
// References:
//   - R. Becker and R. Rannacher, An optimal control approach to a
//     posteriori error estimation in finite element methods, Acta Numerica
//     10 (2001) 1–102.
//   - M. S. Mommer and R. Stevenson, A goal-oriented adaptive finite
//     element method with convergence rates, SIAM J. Numer. Anal. 47
//     (2009) 861–886.
//   - R. Becker, E. Estecahandy and D. Trujillo, Weighted marking for
//     goal-oriented adaptive finite element methods, SIAM J. Numer. Anal.
//     49 (2011) 2451–2469 (from memory).
type DualWeighted struct {
	Goal fem.Goal

	general bool // test hook: the general path for every input
}

// GoalIndicators holds the goal-oriented estimate per triangle.
type GoalIndicators struct {
	Rho   []float64 // ρ_T, signed; Σ ρ_T estimates J(u) − J(u_h)
	Mark2 []float64 // ι_T², the marking indicators (see DualWeighted)

	scratch Indicators
}

// Total returns Σ ρ_T, summed in triangle order: the estimate of
// J(u) − J(u_h).
func (g *GoalIndicators) Total() float64 { return sum(g.Rho) }

// Estimate computes the goal indicators of u_h (u) with the discrete dual
// solution z (of the same space) for the problem p, into dst (a nil dst
// allocates). It is linear in the size of the mesh; the triangles are
// split over GOMAXPROCS goroutines, each writing its own ρ_T, so the result
// does not depend on GOMAXPROCS. For piecewise-constant a it takes the fast
// path goalFast (goal_fast.go: ζ from tables at the rules' points, each
// edge once); for AFunc the general path, every term at its quadrature
// points from each side of each edge.
func (d DualWeighted) Estimate(dst *GoalIndicators, u, z *fem.Function, p *fem.Problem) (*GoalIndicators, error) {
	if d.Goal == nil {
		return nil, fmt.Errorf("estimate: DualWeighted: nil goal: %w", ErrArgument)
	}
	if z == nil || u == nil || z.Space == nil || u.Space == nil || z.Space.Mesh != u.Space.Mesh || z.Space.Degree != u.Space.Degree {
		return nil, fmt.Errorf("estimate: DualWeighted: primal and dual solutions must share one space: %w", ErrArgument)
	}
	if dst == nil {
		dst = &GoalIndicators{}
	}
	// prepare checks u and p; its indicator arrays are kept as scratch.
	if _, err := prepare("DualWeighted", &dst.scratch, u, p); err != nil {
		return nil, err
	}
	if len(z.U) != z.Space.NumDOF() {
		return nil, fmt.Errorf("estimate: DualWeighted: dual solution has %d values, space has %d DOFs: %w", len(z.U), z.Space.NumDOF(), ErrArgument)
	}
	for i, v := range z.U {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("estimate: DualWeighted: dual solution value %d is %g: %w", i, v, ErrNotFinite)
		}
	}
	y := z
	if ext, ok := d.Goal.(interface {
		Extension(*fem.Space) (*fem.Function, error)
	}); ok {
		phi, err := ext.Extension(z.Space)
		if err != nil {
			return nil, fmt.Errorf("estimate: DualWeighted: %w", err)
		}
		y = fem.NewFunction(z.Space)
		for i := range y.U {
			y.U[i] = z.U[i] - phi.U[i]
		}
	}
	rec, err := Reconstruct(y, p.DirichletTags())
	if err != nil {
		return nil, err
	}
	m := u.Space.Mesh
	nt := m.NumTriangles()
	dst.Rho, dst.Mark2 = resize(dst.Rho, nt), resize(dst.Mark2, nt)
	deg := u.Space.Degree
	rule, err := quadrature.ForTriangle(2*deg + 2)
	if err != nil {
		return nil, err
	}
	line, err := quadrature.ForLine(2*deg + 2)
	if err != nil {
		return nil, err
	}
	// Fast path for piecewise-constant a; if it does not apply, the
	// general path.
	if p.PiecewiseConstant() && !d.general {
		if err := goalFast(dst, u, y, p, rec, rule, line); err != nil {
			return nil, err
		}
		if err := finiteGoal(dst); err != nil {
			return nil, err
		}
		return dst, nil
	}
	w := goalWeights{deg: deg, rec: rec}
	err = parallel.For(nt, 512, func(lo, hi int) error {
		ev, nb, yev := fem.NewEvaluator(u), fem.NewEvaluator(u), fem.NewEvaluator(y)
		for k := lo; k < hi; k++ {
			rho, bound, err := goalElement(m, ev, nb, yev, p, rule, line, &w, k)
			if err != nil {
				return err
			}
			dst.Rho[k], dst.Mark2[k] = rho, bound*bound
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	if err := finiteGoal(dst); err != nil {
		return nil, err
	}
	return dst, nil
}

// finiteGoal returns an error wrapping ErrNotFinite, naming the first
// triangle, if a ρ_T or ι_T² is not finite (see finiteIndicators).
func finiteGoal(dst *GoalIndicators) error {
	return parallel.For(len(dst.Rho), 1<<15, func(lo, hi int) error {
		return finiteTerms("DualWeighted", "ρ", "ι²", dst.Rho, dst.Mark2, lo, hi)
	})
}

// goalWeights evaluates ζ = y⁺ − I_h y⁺ on a triangle.
type goalWeights struct {
	deg int
	rec *Enriched
}

// load returns the nodal values of y⁺ on triangle k and those of its
// degree-p interpolant (vertices, and for P2 the edge midpoints).
func (w *goalWeights) load(k int, yp *[10]float64, ip *[6]float64) {
	r := w.rec
	copy(yp[:], r.Node[r.NodesPer*k:r.NodesPer*(k+1)])
	copy(ip[:3], yp[:3])
	if w.deg == 2 {
		var b [10]float64
		for i := range 3 {
			var l [3]float64
			l[(i+1)%3], l[(i+2)%3] = 0.5, 0.5
			enrichedShape(3, l, b[:])
			v := 0.0
			for j := range 10 {
				v += b[j] * yp[j]
			}
			ip[3+i] = v
		}
	}
}

// at returns ζ at barycentric point l from the loaded values.
func (w *goalWeights) at(l [3]float64, yp *[10]float64, ip *[6]float64) float64 {
	var b [10]float64
	var phi [6]float64
	enrichedShape(w.deg+1, l, b[:])
	fem.Shape(w.deg, l, phi[:])
	v := 0.0
	for j := range w.rec.NodesPer {
		v += b[j] * yp[j]
	}
	for i := range 3 * w.deg {
		v -= phi[i] * ip[i]
	}
	return v
}

// goalElement returns ρ_T and ι_T of triangle k.
func goalElement(m *mesh.Mesh, ev, nb, yev *fem.Evaluator, p *fem.Problem, rule *quadrature.Triangle, line *quadrature.Line, w *goalWeights, k int) (rho, bound float64, err error) {
	ev.Load(k)
	var yp [10]float64
	var ip [6]float64
	w.load(k, &yp, &ip)
	region := ev.Region()
	h := m.Diameter(k)
	hess := ev.Hessian()
	cx, cy := ev.Point([3]float64{1. / 3, 1. / 3, 1. / 3})
	a := p.Diffusion(cx, cy, region)
	div := a.XX*hess[0] + 2*a.XY*hess[1] + a.YY*hess[2]
	var r2, z2 float64
	for q := range rule.Len() {
		l := [3]float64{rule.Bary[3*q], rule.Bary[3*q+1], rule.Bary[3*q+2]}
		x, y := ev.Point(l)
		f := p.Source(x, y, region)
		if math.IsNaN(f) || math.IsInf(f, 0) {
			return 0, 0, fmt.Errorf("estimate: DualWeighted: triangle %d at (%g, %g): source f = %g: %w", k, x, y, f, ErrNotFinite)
		}
		v, gx, gy := ev.Eval(l)
		if !p.PiecewiseConstant() {
			if div, err = divAFunc(p, x, y, region, h, gx, gy, hess); err != nil {
				return 0, 0, fmt.Errorf("estimate: DualWeighted: triangle %d: %w", k, err)
			}
		}
		r := f + div - p.C*v
		z := w.at(l, &yp, &ip)
		wq := rule.W[q] * ev.Area()
		rho += wq * r * z
		r2 += wq * r * r
		z2 += wq * z * z
	}
	bound = math.Sqrt(r2 * z2)
	tv := m.Tri[3*k : 3*k+3]
	for i := range 3 {
		e := int(m.TriEdge[3*k+i])
		j, jj := (i+1)%3, (i+2)%3
		tag := m.EdgeTag[e]
		boundary := m.IsBoundary(e)
		ax, ay := m.Vertex(int(tv[j]))
		bx, by := m.Vertex(int(tv[jj]))
		length := math.Hypot(bx-ax, by-ay)
		nx, ny := (by-ay)/length, -(bx-ax)/length // outward: the triangle is counter-clockwise
		if boundary {
			if gd, ok := p.Dirichlet[tag]; ok {
				d, err := dirichletTerm(ev, yev, p, line, k, j, jj, length, nx, ny, gd)
				if err != nil {
					return 0, 0, err
				}
				rho += d
				bound += math.Abs(d)
				continue
			}
		}
		var other int
		if !boundary {
			other = int(m.EdgeTri[2*e])
			if other == k {
				other = int(m.EdgeTri[2*e+1])
			}
			nb.Load(other)
		}
		c := 1.0
		if !boundary {
			c = 0.5
		}
		var e2, ze2, ed float64
		for q, t := range line.X {
			var l [3]float64
			l[j], l[jj] = 1-t, t
			x, y := ev.Point(l)
			v, gx, gy := ev.Eval(l)
			ta := a
			if !p.PiecewiseConstant() {
				ta = p.Diffusion(x, y, region)
			}
			fx, fy := ta.Apply(gx, gy)
			var r float64
			if boundary {
				g, _, err := p.BoundaryFlux(tag, x, y, v) // g_N, or g_R − α u_h
				if err != nil {
					return 0, 0, fmt.Errorf("estimate: DualWeighted: %w", err)
				}
				r = g - (fx*nx + fy*ny)
			} else {
				lo := m.Barycentric(other, x, y)
				_, ox, oy := nb.Eval(lo)
				oa := p.Diffusion(x, y, nb.Region())
				if p.PiecewiseConstant() {
					ox2, oy2 := nb.Point([3]float64{1. / 3, 1. / 3, 1. / 3})
					oa = p.Diffusion(ox2, oy2, nb.Region())
				}
				gx2, gy2 := oa.Apply(ox, oy)
				r = -((fx-gx2)*nx + (fy-gy2)*ny)
			}
			z := w.at(l, &yp, &ip)
			wq := line.W[q] * length
			ed += wq * r * z
			e2 += wq * r * r
			ze2 += wq * z * z
		}
		rho += c * ed
		bound += c * math.Sqrt(e2*ze2)
	}
	return rho, bound, nil
}

// dirichletTerm returns −∫_E (g_D − u_h) a∇y_h·n ds on the Dirichlet edge
// of triangle k from local vertex j to jj: the part of J(u) − J(u_h) that
// the interpolation of the Dirichlet data makes (see DualWeighted).
func dirichletTerm(ev, yev *fem.Evaluator, p *fem.Problem, line *quadrature.Line, k, j, jj int, length, nx, ny float64, gd fem.Func) (float64, error) {
	yev.Load(k)
	d := 0.0
	for q, t := range line.X {
		var l [3]float64
		l[j], l[jj] = 1-t, t
		x, y := ev.Point(l)
		g := 0.0
		if gd != nil {
			g = gd(x, y)
			if math.IsNaN(g) || math.IsInf(g, 0) {
				return 0, fmt.Errorf("estimate: DualWeighted: triangle %d at (%g, %g): Dirichlet data %g: %w", k, x, y, g, ErrNotFinite)
			}
		}
		v, _, _ := ev.Eval(l)
		_, gx, gy := yev.Eval(l)
		fx, fy := p.Diffusion(x, y, ev.Region()).Apply(gx, gy)
		d -= line.W[q] * length * (g - v) * (fx*nx + fy*ny)
	}
	return d, nil
}
