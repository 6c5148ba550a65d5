package estimate

import (
	"math"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/mesh"
)

// treeBound bounds the algebraic term (ρ, φ) ≤ η_tree |||φ||| for every φ
// that vanishes on the Dirichlet edges, without a Friedrichs constant, by
// carrying the residual mass of ρ to the Dirichlet boundary through an
// RT_0 field σ_ρ along a spanning tree of the triangles (see Equilibrated).
// It returns η_tree, writes each triangle's share of η_tree² into share
// (summing to 1; all zero when η_tree = 0), and reports false when the
// mesh has no Dirichlet edge and no Robin edge of constant α > 0, or some
// triangle cannot reach one through interior edges.
//
// With ρ_T = (ρ, 1)_T/|T| the mean of ρ on T, (ρ, φ) = (ρ_T, φ) + (ρ − ρ_T, φ)
// summed over the triangles. The tree starts at the triangles with a
// Dirichlet edge (breadth first, in triangle order), and each triangle
// sends the mass of its subtree, Σ (ρ, 1)_T over it, to its parent
// through the edge they share, or out through its Dirichlet edge at a
// root. σ_ρ is the RT_0 field with these fluxes: div σ_ρ = ρ_T on T,
// σ_ρ·n = 0 on Neumann edges, so (ρ_T, φ) = −(σ_ρ, ∇φ) ≤ ‖a^{−½}σ_ρ‖
// |||φ|||. The remainder has mean zero on each T, so the Poincaré
// inequality bounds it as the oscillation is bounded: (ρ − ρ_T, φ)_T ≤
// m_T ‖ρ − ρ_T‖_T |||φ|||_T. Hence
//
//	η_tree = ‖a^{−½}σ_ρ‖ + (Σ_T m_T² ‖ρ − ρ_T‖²_T)^½.
//
// Triangles without a path to a Dirichlet edge are reached from Robin
// edges of constant α > 0 (roots after the Dirichlet ones): the mass
// leaves through such an edge, φ does not vanish there, and Green's formula
// adds (σ_ρ·n, φ)_{Γ_R} ≤ ‖α^{−½}σ_ρ·n‖_{Γ_R} ‖α^½φ‖_{Γ_R}, so that
// ‖a^{−½}σ_ρ‖² above becomes ‖a^{−½}σ_ρ‖² + ‖α^{−½}σ_ρ·n‖²_{Γ_R}, both
// parts of |||φ|||² (derived here).
//
// Unlike C_alg ‖ρ‖, this bound does not grow as a residual of rounding
// size sits on a patch of tiny area: moving a mass μ across an edge costs
// about |μ| in ‖σ_ρ‖, whatever the size of the triangles.
func (eq *equilibration) treeBound(share []float64) (float64, bool) {
	m := eq.m
	nt := m.NumTriangles()
	// parent[t] is the local index of the edge through which t sends its
	// mass; order lists the triangles in breadth-first order.
	parent, order := eq.takeInt(nt), eq.takeInt(nt)[:0]
	for t := range nt {
		parent[t] = -1
		for i := range 3 {
			if eq.dirE[m.TriEdge[3*t+i]] {
				parent[t] = int32(i)
				order = append(order, int32(t))
				break
			}
		}
	}
	// Then the triangles with a Robin edge of constant α > 0 and no
	// Dirichlet edge.
	for t := range nt {
		if parent[t] >= 0 {
			continue
		}
		for i := range 3 {
			if _, ok := eq.robinRoot(int(m.TriEdge[3*t+i])); ok {
				parent[t] = int32(i)
				order = append(order, int32(t))
				break
			}
		}
	}
	if len(order) == 0 {
		return 0, false
	}
	for h := 0; h < len(order); h++ {
		t := int(order[h])
		for i := range 3 {
			o, j := across(m, t, i)
			if o < 0 || parent[o] >= 0 {
				continue
			}
			parent[o] = int32(j)
			order = append(order, int32(o))
		}
	}
	if len(order) < nt {
		return 0, false
	}
	// sub[t] starts as (ρ, 1)_T and becomes the mass of t's subtree; flux
	// holds the outward fluxes of σ_ρ through the three edges of each t.
	// The per-triangle values are computed in parallel, the sums in
	// triangle order.
	sub, flux := eq.take(nt), eq.take(3*nt)
	_ = parallel.For(nt, 1024, func(lo, hi int) error {
		for t := lo; t < hi; t++ {
			var r [3]float64
			for i := range 3 {
				r[i] = eq.rtilde[m.Tri[3*t+i]]
			}
			s := r[0] + r[1] + r[2]
			area := m.Area(t)
			sub[t] = area * s / 3
			// ‖ρ − ρ_T‖²_T for ρ linear with vertex values r_i.
			d2 := max(area/36*(3*(r[0]*r[0]+r[1]*r[1]+r[2]*r[2])-s*s), 0)
			share[t] = eq.meanWeight(t) * d2
			flux[3*t], flux[3*t+1], flux[3*t+2] = 0, 0, 0
		}
		return nil
	})
	poinc := sum(share)
	for h := nt - 1; h >= 0; h-- {
		t := int(order[h])
		i := int(parent[t])
		flux[3*t+i] = sub[t]
		o, j := across(m, t, i)
		if o < 0 {
			continue
		}
		sub[o] += sub[t]
		flux[3*o+j] = -sub[t]
	}
	// sub now holds the energy of σ_ρ on each triangle.
	_ = parallel.For(nt, 1024, func(lo, hi int) error {
		for t := lo; t < hi; t++ {
			f2 := rt0Energy(eq.m.Tri[3*t:3*t+3], eq.m.X, m.Area(t), flux[3*t:3*t+3], eq.co.At(m.Region[t]))
			// A root on a Robin edge E: σ_ρ·n = μ/|E| there, μ the mass it
			// sends out, and ‖α^{−½} σ_ρ·n‖²_E = μ²/(|E| α).
			e := int(m.TriEdge[3*t+int(parent[t])])
			if alpha, ok := eq.robinRoot(e); ok {
				mu := flux[3*t+int(parent[t])]
				f2 += mu * mu / (m.EdgeLength(e) * alpha)
			}
			sub[t] = f2
			share[t] += f2
		}
		return nil
	})
	tree := sum(sub)
	eta := math.Sqrt(tree) + math.Sqrt(poinc)
	if total := tree + poinc; total > 0 {
		_ = parallel.For(nt, 4096, func(lo, hi int) error {
			for t := lo; t < hi; t++ {
				share[t] /= total
			}
			return nil
		})
	}
	return eta, true
}

// robinRoot returns α and true if edge e is a Robin edge whose tag has a
// constant α > 0 (RobinData.Alpha, no AlphaFunc): an edge through which the
// tree of treeBound may send mass out of the domain.
func (eq *equilibration) robinRoot(e int) (float64, bool) {
	m := eq.m
	if !m.IsBoundary(e) || eq.dirE[e] {
		return 0, false
	}
	r, ok := eq.p.Robin[m.EdgeTag[e]]
	if !ok || r.AlphaFunc != nil || !(r.Alpha > 0) {
		return 0, false
	}
	return r.Alpha, true
}

// across returns the triangle o on the other side of the edge opposite
// local vertex i of triangle t, and the local index j of that edge in o;
// o = −1 for a boundary edge.
func across(m *mesh.Mesh, t, i int) (o, j int) {
	e := m.TriEdge[3*t+i]
	if m.IsBoundary(int(e)) {
		return -1, 0
	}
	o = int(m.EdgeTri[2*e])
	if o == t {
		o = int(m.EdgeTri[2*e+1])
	}
	for j = range 3 {
		if m.TriEdge[3*o+j] == e {
			break
		}
	}
	return o, j
}

// meanWeight returns m_T², the square of the factor of the Poincaré bound
// of a mean-zero function on triangle t (see Equilibrated).
func (eq *equilibration) meanWeight(t int) float64 {
	h := eq.m.Diameter(t)
	_, amin := eq.co.AtMin(eq.m.Region[t])
	w := h * h / (math.Pi * math.Pi * amin)
	if c := eq.p.C; c > 0 {
		w = min(w, 1/c)
	}
	return w
}

// rt0Energy returns ∫_T σ·a^{−1}σ for the RT_0 field on the triangle with
// vertices tri whose outward flux through the edge opposite vertex i is
// f[i]: σ = Σ_i f_i (x − p_i)/(2|T|). The integrand is quadratic, so the
// rule of the three edge midpoints is exact.
func rt0Energy(tri []int32, xy []float64, area float64, f []float64, a fem.Tensor) float64 {
	det := a.XX*a.YY - a.XY*a.XY
	kxx, kxy, kyy := a.YY/det, -a.XY/det, a.XX/det
	var px, py [3]float64
	for i := range 3 {
		px[i], py[i] = xy[2*tri[i]], xy[2*tri[i]+1]
	}
	s := 0.0
	for k := range 3 {
		// midpoint of the edge opposite vertex k
		mx := (px[(k+1)%3] + px[(k+2)%3]) / 2
		my := (py[(k+1)%3] + py[(k+2)%3]) / 2
		sx, sy := 0.0, 0.0
		for i := range 3 {
			sx += f[i] * (mx - px[i])
			sy += f[i] * (my - py[i])
		}
		s += kxx*sx*sx + 2*kxy*sx*sy + kyy*sy*sy
	}
	return s / 3 * area / (4 * area * area)
}
