package fem

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/internal/quadrature"
)

// Flux is the flux of a∇u through the boundary edges tagged Tag, with the
// outward unit normal n:
//
//	J(u) = ∫_Γ a∇u·n ds,   Γ = the edges tagged Tag,
//
// positive where u grows towards the outside (for heat conduction with
// temperature u and heat flux q = −a∇u, J is the heat that enters through
// Γ). It is evaluated in the variationally consistent way of Babuška and
// Miller: with φ the discrete extension of the indicator of Γ (Extension:
// 1 at every node of Γ, 0 at every other node of the space), Green's
// formula gives
//
//	J(u) = a(u, φ) + (c u, φ) + ∫_{Γ_R∖Γ} α u φ ds − (f, φ) − ∫_{Γ_N∖Γ} g_N φ ds − ∫_{Γ_R∖Γ} g_R φ ds,
//
// (Γ_R the Robin edges, where a∇u·n = g_R − α u), the negative of the
// residual (f, φ) − a(u, φ) − (c u, φ) + ∫ g_N φ + ∫ (g_R − α u) φ, which
// holds for the exact solution exactly, whatever the mesh, when the trace
// of φ on the Dirichlet edges is the indicator of Γ: when no node of Γ
// lies on a Dirichlet edge of another tag (Γ is closed, or its ends meet
// Neumann or natural edges, whose flux the formula takes from the data).
// Where an end of Γ is a node of a Dirichlet edge E of another tag, φ falls
// linearly (P1) or quadratically (P2) to zero along E, and J is the flux
// through Γ plus the flux through E weighted by φ: Babuška and Miller's
// extraction with that weight, which tends to the flux through Γ as E
// shrinks. J(u_h) takes the same formula with u_h; its error
// J(u) − J(u_h) = a(u − u_h, φ) + (c(u − u_h), φ) converges at twice the
// energy rate, where the energy-normal derivative at Γ converges at the
// energy rate only.
//
// J₀(v) = a(v, φ) + (c v, φ) + ∫_{Γ_R∖Γ} α v φ is the linear part (Load)
// and the data part −(f, φ) − ∫_{Γ_N∖Γ} g_N φ − ∫_{Γ_R∖Γ} g_R φ is
// integrated by the scheme of Function.Error for f, a 20-point
// Gauss–Legendre rule per Neumann edge and the rule of the Robin terms of
// Assemble per Robin edge (ExactValue integrates α u φ with the 20-point
// rule). A tag that no boundary edge carries gives ErrGoal.
//
// References:
//   - I. Babuška and A. Miller, The post-processing approach in the finite
//     element method — part 1: calculation of displacements, stresses and
//     other higher derivatives of the displacements, Int. J. Numer. Methods
//     Eng. 20 (1984) 1085–1109.
type Flux struct {
	Tag int32
}

// Extension returns φ, the function of s that is 1 at the nodes of the
// edges tagged Tag (end vertices, and for P2 midpoints) and 0 at every
// other node.
func (g Flux) Extension(s *Space) (*Function, error) {
	if s == nil {
		return nil, fmt.Errorf("fem: Flux: nil space: %w", ErrArgument)
	}
	if !boundaryTags(s.Mesh)[g.Tag] {
		return nil, fmt.Errorf("fem: Flux: tag %d: no boundary edge carries it: %w", g.Tag, ErrGoal)
	}
	phi := NewFunction(s)
	for _, d := range s.BoundaryDOFs(g.Tag) {
		phi.U[d] = 1
	}
	return phi, nil
}

// support reports, for each triangle, whether φ is not zero on it.
func support(phi *Function) []bool {
	s := phi.Space
	in := make([]bool, s.Mesh.NumTriangles())
	var dofs [6]int32
	for k := range in {
		for _, d := range s.ElementDOFs(dofs[:0], k) {
			if phi.U[d] != 0 {
				in[k] = true
				break
			}
		}
	}
	return in
}

// Load writes a(φ_i, φ) + (c φ_i, φ) + ∫_{Γ_R∖Γ} α φ_i φ, from the element
// matrices of the triangles on which φ is not zero and the Robin edge
// matrices of Assemble.
func (g Flux) Load(dst []float64, s *Space, p *Problem) ([]float64, error) {
	phi, err := g.Extension(s)
	if err != nil {
		return nil, err
	}
	q := Problem{}
	if p != nil {
		q = *p
	}
	q.F, q.FRegion, q.Goal = nil, nil, nil
	r, err := elementRules(s.Degree, &q)
	if err != nil {
		return nil, err
	}
	in := support(phi)
	ld := s.LocalDOFs()
	dst, err = elementLoads(dst, s, func(geo *geometry, k int, fe []float64) error {
		if !in[k] {
			return nil
		}
		w := newElementWork(ld)
		var ke [36]float64
		var f6 [6]float64
		if err := element(s, &q, r, w, k, ke[:ld*ld], f6[:ld]); err != nil {
			return err
		}
		var dofs [6]int32
		ds := s.ElementDOFs(dofs[:0], k)
		for i := range ld {
			for j, d := range ds {
				fe[i] += ke[i*ld+j] * phi.U[d]
			}
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	err = g.robinEdges(phi, p, func(ds []int32, me *[3][3]float64, _ *[3]float64) {
		for i, di := range ds {
			for j, dj := range ds {
				dst[di] += me[i][j] * phi.U[dj]
			}
		}
	})
	return dst, err
}

// robinEdges calls each with the DOFs, edge matrix and load of every Robin
// edge not tagged Tag on which φ is not zero, in ascending edge order.
func (g Flux) robinEdges(phi *Function, p *Problem, each func(ds []int32, me *[3][3]float64, be *[3]float64)) error {
	if p == nil || len(p.Robin) == 0 {
		return nil
	}
	s := phi.Space
	m := s.Mesh
	rule, err := robinRule(s.Degree)
	if err != nil {
		return err
	}
	var me [3][3]float64
	var be [3]float64
	for _, e := range boundaryEdges(m) {
		r, ok := p.Robin[m.EdgeTag[e]]
		if !ok || m.EdgeTag[e] == g.Tag {
			continue
		}
		ds := edgeDOFs(s, int(e))
		nonzero := false
		for _, d := range ds {
			nonzero = nonzero || phi.U[d] != 0
		}
		if !nonzero {
			continue
		}
		if _, err := robinEdge(s, r, int(e), rule, &me, &be); err != nil {
			return err
		}
		each(ds, &me, &be)
	}
	return nil
}

// data returns the data part −(f, φ) − ∫_{Γ_N∖Γ} g_N φ ds − ∫_{Γ_R∖Γ} g_R φ ds.
func (g Flux) data(phi *Function, p *Problem) (float64, error) {
	s := phi.Space
	d := 0.0
	if p == nil {
		return 0, nil
	}
	err := g.robinEdges(phi, p, func(ds []int32, _ *[3][3]float64, be *[3]float64) {
		for i, di := range ds {
			d -= be[i] * phi.U[di]
		}
	})
	if err != nil {
		return 0, err
	}
	if p.HasSource() {
		in := support(phi)
		// The source has no exact solution to follow; its pieces are
		// chosen by the rules of ErrorDegree (an Exact without singular
		// points), as f is smooth on each triangle.
		noSing := Exact{U: func(x, y float64) float64 { return 0 }, Grad: func(x, y float64) (float64, float64) { return 0, 0 }}
		v, err := goalIntegral(s, noSing, p, func(k int) bool { return in[k] }, nil, phi,
			func(it *errorIntegrator, x, y float64, l [3]float64) float64 {
				ph, _, _ := it.ev.Eval(l)
				return p.Source(x, y, it.ev.g.region) * ph
			})
		if err != nil {
			return 0, err
		}
		d -= v
	}
	if len(p.Neumann) == 0 {
		return d, nil
	}
	v, err := g.boundaryIntegral(phi, func(tag int32) bool {
		gn, ok := p.Neumann[tag]
		return ok && gn != nil
	}, func(tag int32, x, y float64) (float64, error) {
		v := p.Neumann[tag](x, y)
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, atTag(tag, fmt.Errorf("%w: Neumann data %g at (%g, %g)", ErrNotFinite, v, x, y))
		}
		return v, nil
	})
	return d - v, err
}

// boundaryIntegral returns Σ_E ∫_E w φ ds over the boundary edges E whose
// tag is not g.Tag and passes use, by a 20-point Gauss–Legendre rule per
// edge, with w(tag, x, y) evaluated only where φ is not zero.
func (g Flux) boundaryIntegral(phi *Function, use func(tag int32) bool, w func(tag int32, x, y float64) (float64, error)) (float64, error) {
	rule, err := quadrature.GaussLegendre(20)
	if err != nil {
		return 0, err
	}
	s := phi.Space
	m := s.Mesh
	v := 0.0
	var sh []float64
	for _, e := range boundaryEdges(m) {
		tag := m.EdgeTag[e]
		if tag == g.Tag || !use(tag) {
			continue
		}
		ds := edgeDOFs(s, int(e))
		ax, ay := m.Vertex(int(ds[0]))
		bx, by := m.Vertex(int(ds[1]))
		length := m.EdgeLength(int(e))
		for q, t := range rule.X {
			sh = edgeShape(s.Degree, t, sh)
			ph := 0.0
			for i, c := range sh {
				ph += c * phi.U[ds[i]]
			}
			if ph == 0 {
				continue
			}
			x, y := ax+t*(bx-ax), ay+t*(by-ay)
			wq, err := w(tag, x, y)
			if err != nil {
				return 0, err
			}
			v += rule.W[q] * length * wq * ph
		}
	}
	return v, nil
}

// Value returns J(u_h) = a(u_h, φ) + (c u_h, φ) + ∫_{Γ_R∖Γ} α u_h φ − (f, φ)
// − ∫_{Γ_N∖Γ} g_N φ − ∫_{Γ_R∖Γ} g_R φ.
func (g Flux) Value(u *Function, p *Problem) (float64, error) {
	v, err := linearValue(g, u, p)
	if err != nil {
		return 0, err
	}
	phi, err := g.Extension(u.Space)
	if err != nil {
		return 0, err
	}
	d, err := g.data(phi, p)
	return v + d, err
}

// ExactValue returns J(u) for the exact solution: a(u, φ) + (c u, φ) by the
// scheme of Function.Error (see goalIntegral) on the triangles where φ is
// not zero, ∫_{Γ_R∖Γ} α u φ by a 20-point Gauss–Legendre rule per edge,
// and the data part as Value takes it. For the cases stated in
// the type's doc, this is ∫_Γ a∇u·n ds itself.
func (g Flux) ExactValue(s *Space, ex Exact, p *Problem) (float64, error) {
	phi, err := g.Extension(s)
	if err != nil {
		return 0, err
	}
	if p == nil {
		p = &Problem{}
	}
	in := support(phi)
	v, err := goalIntegral(s, ex, p, func(k int) bool { return in[k] }, nil, phi,
		func(it *errorIntegrator, x, y float64, l [3]float64) float64 {
			ph, px, py := it.ev.Eval(l)
			ux, uy := ex.Grad(x, y)
			a := p.Diffusion(x, y, it.ev.g.region)
			fx, fy := a.Apply(ux, uy)
			v := fx*px + fy*py
			if p.C != 0 {
				v += p.C * ex.U(x, y) * ph
			}
			return v
		})
	if err != nil {
		return 0, err
	}
	rv, err := g.robinExact(phi, ex, p)
	if err != nil {
		return 0, err
	}
	d, err := g.data(phi, p)
	return v + rv + d, err
}

// robinExact returns ∫_{Γ_R∖Γ} α u φ ds for the exact solution, by a
// 20-point Gauss–Legendre rule per edge.
func (g Flux) robinExact(phi *Function, ex Exact, p *Problem) (float64, error) {
	if len(p.Robin) == 0 {
		return 0, nil
	}
	return g.boundaryIntegral(phi, func(tag int32) bool {
		_, ok := p.Robin[tag]
		return ok
	}, func(tag int32, x, y float64) (float64, error) {
		alpha, _, err := p.Robin[tag].Values(tag, x, y)
		return alpha * ex.U(x, y), err
	})
}
