package estimate

import (
	"math"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
	"github.com/posteriori-fem/posteriori/mesh"
)

// residualP2 is Residual.Estimate for P2 and piecewise-constant diffusion,
// in the three passes of the general path:
//
//  1. over the triangles: the element residual and the oscillation, as by
//     the general path, and the flux a∇u_h at the three vertices of each
//     triangle and its weight a_T are stored;
//  2. over the edges: the edge term of each edge from the stored fluxes in
//     closed form (the flux is linear along the edge), except on boundary
//     edges with Neumann data and on Robin edges, which are integrated as
//     by the general path;
//  3. over the triangles: the terms of the three edges are added.
func residualP2(dst *Indicators, u *fem.Function, p *fem.Problem) error {
	m := u.Space.Mesh
	rule, err := quadrature.ForTriangle(6)
	if err != nil {
		return err
	}
	line, err := quadrature.ForLine(6)
	if err != nil {
		return err
	}
	flux := make([]float64, 6*m.NumTriangles())
	wt := make([]float64, m.NumTriangles())
	err = elementPass(dst, u, p, rule, func(ev *fem.Evaluator, k int) {
		vertexFlux(ev, p, flux[6*k:6*k+6], &wt[k])
	})
	if err != nil {
		return err
	}
	// Closed form except on boundary edges with Neumann or Robin data.
	jump, err := edgePass(u, p, line, false, func(e int) (float64, bool) {
		if m.IsBoundary(e) && p.HasBoundaryData(m.EdgeTag[e]) {
			return 0, false
		}
		return fluxEdge(m, p, flux, wt, e), true
	})
	if err != nil {
		return err
	}
	addEdges(dst, m, jump)
	return nil
}

// vertexFlux stores the flux a∇u_h at the three vertices of the loaded
// triangle, and its weight a_T.
func vertexFlux(ev *fem.Evaluator, p *fem.Problem, flux []float64, wt *float64) {
	x, y := ev.Point([3]float64{1. / 3, 1. / 3, 1. / 3})
	t := p.Diffusion(x, y, ev.Region())
	*wt = weight(ev, p)
	for i := range 3 {
		var l [3]float64
		l[i] = 1
		_, gx, gy := ev.Eval(l)
		flux[2*i], flux[2*i+1] = t.Apply(gx, gy)
	}
}

// fluxEdge returns the edge term of edge e from the stored vertex fluxes:
// h_E ‖[[a∇u_h·n]]‖²_E / a_E for an interior edge, h_E ‖a∇u_h·n‖²_E / a_T
// for a natural or homogeneous Neumann boundary edge, 0 for a Dirichlet
// edge. The flux is linear along the edge, with values j0 and j1 at its
// ends, and is integrated exactly:
//
//	∫_E j² = h_E (j0² + j0 j1 + j1²)/3.
func fluxEdge(m *mesh.Mesh, p *fem.Problem, flux, wt []float64, e int) float64 {
	boundary := m.IsBoundary(e)
	if boundary {
		if _, ok := p.Dirichlet[m.EdgeTag[e]]; ok {
			return 0
		}
	}
	va, vb := m.Edge[2*e], m.Edge[2*e+1]
	ax, ay := m.Vertex(int(va))
	bx, by := m.Vertex(int(vb))
	hE := math.Hypot(bx-ax, by-ay)
	nx, ny := (by-ay)/hE, (ax-bx)/hE
	k1 := int(m.EdgeTri[2*e])
	la1, lb1 := localVertex(m, k1, va), localVertex(m, k1, vb)
	cx, cy := m.Vertex(int(m.Tri[3*k1+3-la1-lb1]))
	if (cx-ax)*nx+(cy-ay)*ny > 0 { // make n point out of T1
		nx, ny = -nx, -ny
	}
	f := func(k, l int) float64 { return flux[6*k+2*l]*nx + flux[6*k+2*l+1]*ny }
	j0, j1 := f(k1, la1), f(k1, lb1)
	w := wt[k1]
	if !boundary {
		k2 := int(m.EdgeTri[2*e+1])
		j0 -= f(k2, localVertex(m, k2, va))
		j1 -= f(k2, localVertex(m, k2, vb))
		w = max(w, wt[k2])
	}
	return hE * hE * (j0*j0 + j0*j1 + j1*j1) / 3 / w
}
