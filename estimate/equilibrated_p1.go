package estimate

import (
	"errors"
	"math"

	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
)

// errNotFan is returned by solveP1 when the triangles of a vertex do not
// form one fan; dispatch then takes the general path.
var errNotFan = errors.New("estimate: a vertex patch is not one fan")

// The data solveP1 keeps per triangle in equilibration.tdat, at these
// offsets: (g_i, λ_m)_T for the vertices i = 0, 1, 2 and m = 1, 2, with
// g_i = ψ_i (f − c u_h) − a∇u_h·∇ψ_i (the moment with 1 is rt3); G₀₀, G₁₁,
// G₀₁ of G = Jᵀ a⁻¹ J divided by det J; ŵ = adj(J) a∇u_h; the area;
// ‖f − Π_1 f‖²_T and ‖f − Π_0 f‖²_T.
const (
	tdGq     = 0
	tdGs     = 6
	tdW      = 9
	tdArea   = 11
	tdOsc    = 12
	p1Stride = 14
)

// tri3[i][j][k] is ∫_T λ_i λ_j λ_k / |T| = 2 α!β!γ!/(α+β+γ+2)!: 1/10 if
// i = j = k, 1/30 if two are equal, 1/60 if all differ.
var tri3 = func() (v [3][3][3]float64) {
	for i := range 3 {
		for j := range 3 {
			for k := range 3 {
				switch {
				case i == j && j == k:
					v[i][j][k] = 1. / 10
				case i == j || j == k || i == k:
					v[i][j][k] = 1. / 30
				default:
					v[i][j][k] = 1. / 60
				}
			}
		}
	}
	return v
}()

// symIndex[i][j] is the index of ∫_T f λ_i λ_j in trianglesP1's moments,
// stored for (i, j) = (0, 0), (0, 1), (0, 2), (1, 1), (1, 2), (2, 2).
var symIndex = [3][3]int{{0, 1, 2}, {1, 3, 4}, {2, 4, 5}}

// solveP1 is the P1 path of dispatch. It computes the same σ_h as
// solveGeneral, up to rounding, since each patch problem is a strictly
// convex minimisation with a unique minimiser. The data are the same (f at
// the points of the same rule); the polynomial parts of the divergence
// data are integrated in closed form. On the patch ω_a of n triangles,
// every admissible τ is σ_p + curl ζ, with σ_p ∈ RT_1(ω_a) one field with
// the prescribed divergence and normal components, and ζ ∈ P_2(ω_a)
// continuous and zero on the part of ∂ω_a where τ·n is prescribed (the
// divergence-free fields of RT_1 on a disc are the curls of P_2, and
// curl ζ·n is the tangential derivative of ζ). σ_p has zero first moments
// on the free edges, edge means found by one sweep around the fan (each
// triangle fixes the flux through its second edge at the vertex), and
// interior DOFs from the linear part of the divergence. The correction ζ
// minimises the same functional,
//
//	K ζ = −Σ_T C_Tᵀ M_T (σ_p + ψ_a a∇u_h)_T,   K = Σ_T C_Tᵀ M_T C_T,
//
// with M_T the weighted RT_1 mass matrix and C_T the DOFs of the curls of
// the P2 basis functions, both from the reference tables of rt1Reference;
// K is symmetric positive definite, of order n + 1 at an interior vertex
// and at most n + 2 on the boundary, factorised by Cholesky. The
// indicators' flux term is the quadratic form of M_T in closed form.
//
// References:
//   - D. Boffi, F. Brezzi and M. Fortin, Mixed Finite Element Methods and
//     Applications, Springer, 2013 (the discrete sequence P_{k+1} → RT_k →
//     P_k, curl then divergence, is exact on simply connected domains;
//     from memory, no section quoted).
func (eq *equilibration) solveP1() error {
	m := eq.m
	nt := m.NumTriangles()
	eq.tdat = eq.take(p1Stride * nt)
	eq.rt3 = eq.take(3 * nt)
	if err := eq.trianglesP1(); err != nil {
		return err
	}
	if err := eq.neumannData(); err != nil {
		return err
	}
	eq.vertexResiduals()
	eq.sig = eq.take(3 * nt * eq.nloc)
	eq.terms = (*termWork).triangleP1
	ref := rt1Ref()
	return parallel.For(m.NumVertices(), 64, func(lo, hi int) error {
		w := &p1Patch{eq: eq, ref: ref}
		for a := lo; a < hi; a++ {
			if err := w.solve(a); err != nil {
				return err
			}
		}
		return nil
	})
}

// p1Triangle is the geometry and flux of one triangle of a P1 function.
type p1Triangle struct {
	area  float64
	gs    [3]float64 // G₀₀, G₁₁, G₀₁ of G = Jᵀ a⁻¹ J, divided by det J
	what  [2]float64 // ŵ = adj(J) a∇u_h
	kappa [3]float64 // a∇u_h·∇λ_i
	u     [3]float64 // nodal values
}

// load fills g for triangle t.
func (g *p1Triangle) load(eq *equilibration, t int) {
	m := eq.m
	x, tri := m.X, m.Tri[3*t:3*t+3:3*t+3]
	x0, y0 := x[2*tri[0]], x[2*tri[0]+1]
	j00, j10 := x[2*tri[1]]-x0, x[2*tri[1]+1]-y0
	j01, j11 := x[2*tri[2]]-x0, x[2*tri[2]+1]-y0
	d := j00*j11 - j10*j01
	g.area = 0.5 * d
	for i := range 3 {
		g.u[i] = eq.u.U[tri[i]]
	}
	du1, du2 := g.u[1]-g.u[0], g.u[2]-g.u[0]
	gx, gy := (j11*du1-j10*du2)/d, (j00*du2-j01*du1)/d
	a := eq.co.At(m.Region[t])
	wx, wy := a.Apply(gx, gy)
	for i := range 3 {
		b, c := tri[(i+1)%3], tri[(i+2)%3]
		// ∇λ_i = ((y_b − y_c)/d, (x_c − x_b)/d).
		g.kappa[i] = (wx*(x[2*b+1]-x[2*c+1]) + wy*(x[2*c]-x[2*b])) / d
	}
	g.what = [2]float64{j11*wx - j01*wy, -j10*wx + j00*wy}
	// a⁻¹ = [[YY, −XY], [−XY, XX]] / det a.
	da := a.XX*a.YY - a.XY*a.XY
	ixx, ixy, iyy := a.YY/da, -a.XY/da, a.XX/da
	q := func(ux, uy, vx, vy float64) float64 { return ux*(ixx*vx+ixy*vy) + uy*(ixy*vx+iyy*vy) }
	g.gs = [3]float64{q(j00, j10, j00, j10) / d, q(j01, j11, j01, j11) / d, q(j00, j10, j01, j11) / d}
}

// edgeSigns returns RTSpace.Sign of the three edges of triangle t.
func edgeSigns(tri []int32, t int) [3]float64 {
	v := tri[3*t : 3*t+3 : 3*t+3]
	var s [3]float64
	for i := range 3 {
		// −1 if the edge runs from the higher vertex to the lower, without
		// a branch: the sign bit of the difference.
		d := int64(v[(i+2)%3]) - int64(v[(i+1)%3])
		s[i] = float64(1 + 2*(d>>63))
	}
	return s
}

// trianglesP1 stores the diffusion, the moments of f and the oscillations
// of each triangle (tdat), and the residual contributions rt3 (see
// triangleData), from f at the rule's points.
func (eq *equilibration) trianglesP1() error {
	m, p, rule := eq.m, eq.p, eq.rule
	nq := rule.Len()
	// Gram matrix of 1, λ_1, λ_2 under the rule (weights summing to 1), and
	// its inverse, for the projections onto P_0 and P_1.
	var gram [3][3]float64
	for q := range nq {
		l := [3]float64{1, rule.Bary[3*q+1], rule.Bary[3*q+2]}
		for i := range 3 {
			for j := range 3 {
				gram[i][j] += rule.W[q] * l[i] * l[j]
			}
		}
	}
	ginv, ok := inverse3(gram)
	if !ok {
		panic("estimate: singular Gram matrix of monomials") // broken internal invariant
	}
	// The weights of the moments at each point: W λ_i λ_j in the order of
	// symIndex, then W, W λ_1, W λ_2.
	wl := make([][9]float64, nq)
	for q := range nq {
		l := rule.Bary[3*q : 3*q+3]
		w := rule.W[q]
		wl[q] = [9]float64{w * l[0] * l[0], w * l[0] * l[1], w * l[0] * l[2], w * l[1] * l[1], w * l[1] * l[2], w * l[2] * l[2], w, w * l[1], w * l[2]}
	}
	return parallel.For(m.NumTriangles(), 256, func(lo, hi int) error {
		var fq [quadrature.MaxTrianglePoints]float64
		var g p1Triangle
		for t := lo; t < hi; t++ {
			g.load(eq, t)
			tri := m.Tri[3*t : 3*t+3 : 3*t+3]
			var xs, ys [3]float64
			for i, v := range tri {
				xs[i], ys[i] = m.X[2*v], m.X[2*v+1]
			}
			var mom [6]float64
			var pr [3]float64
			region := m.Region[t]
			sf := 0.0 // not finite if some f is not (or the sum overflows)
			for q := range nq {
				l := rule.Bary[3*q : 3*q+3 : 3*q+3]
				x := l[0]*xs[0] + l[1]*xs[1] + l[2]*xs[2]
				y := l[0]*ys[0] + l[1]*ys[1] + l[2]*ys[2]
				f := p.Source(x, y, region)
				sf += f
				fq[q] = f
				wq := &wl[q]
				for i := range mom {
					mom[i] += f * wq[i]
				}
				pr[0] += f * wq[6]
				pr[1] += f * wq[7]
				pr[2] += f * wq[8]
			}
			if sf-sf != 0 {
				if err := sourceNotFinite("Equilibrated", rule, fq[:nq], &xs, &ys, t); err != nil {
					return err
				}
			}
			area := g.area
			for i := range mom {
				mom[i] *= area
			}
			d := eq.tdat[p1Stride*t : p1Stride*(t+1) : p1Stride*(t+1)]
			d[tdGs], d[tdGs+1], d[tdGs+2] = g.gs[0], g.gs[1], g.gs[2]
			d[tdW], d[tdW+1] = g.what[0], g.what[1]
			d[tdArea] = area
			// ‖f − Π_1 f‖² and ‖f − Π_0 f‖², as termWork.projectionError.
			var c [3]float64
			for i := range 3 {
				c[i] = ginv[i][0]*pr[0] + ginv[i][1]*pr[1] + ginv[i][2]*pr[2]
			}
			mean := pr[0] / gram[0][0]
			o1, o0 := 0.0, 0.0
			for q, f := range fq[:nq] {
				e1 := f - (c[0] + c[1]*rule.Bary[3*q+1] + c[2]*rule.Bary[3*q+2])
				e0 := f - mean
				o1 += rule.W[q] * e1 * e1
				o0 += rule.W[q] * e0 * e0
			}
			d[tdOsc], d[tdOsc+1] = o1*area, o0*area
			// (g_i, q)_T for q = 1, λ_1, λ_2, with ∫ λ_i λ_j = |T|(1 + δ_ij)/12
			// and ∫ λ_i λ_j λ_k = |T| 2 α!β!γ!/(α+β+γ+2)!.
			su := g.u[0] + g.u[1] + g.u[2]
			for i := range 3 {
				fi := mom[symIndex[i][0]] + mom[symIndex[i][1]] + mom[symIndex[i][2]]
				eq.rt3[3*t+i] = fi - p.C*area*(su+g.u[i])/12 - area*g.kappa[i]
				for mm := 1; mm < 3; mm++ {
					t3 := &tri3[i][mm]
					uq := g.u[0]*t3[0] + g.u[1]*t3[1] + g.u[2]*t3[2]
					d[tdGq+2*i+mm-1] = mom[symIndex[i][mm]] - p.C*area*uq - area*g.kappa[i]/3
				}
			}
		}
		return nil
	})
}

// inverse3 returns the inverse of a 3×3 matrix by cofactors and whether
// it is regular.
func inverse3(a [3][3]float64) ([3][3]float64, bool) {
	var c [3][3]float64
	for i := range 3 {
		for j := range 3 {
			i1, i2, j1, j2 := (i+1)%3, (i+2)%3, (j+1)%3, (j+2)%3
			c[j][i] = a[i1][j1]*a[i2][j2] - a[i1][j2]*a[i2][j1]
		}
	}
	det := a[0][0]*c[0][0] + a[0][1]*c[1][0] + a[0][2]*c[2][0]
	if det == 0 || math.IsNaN(det) {
		return c, false
	}
	for i := range 3 {
		for j := range 3 {
			c[i][j] /= det
		}
	}
	return c, true
}

// triangleP1 writes the terms of triangle t into v (see termCount) for the
// P1 path: the flux term as the quadratic form of the weighted RT_1 mass
// matrix, the oscillations from tdat.
func (tw *termWork) triangleP1(t int, v []float64) error {
	eq := tw.eq
	ref := rt1Ref()
	d := eq.tdat[p1Stride*t : p1Stride*(t+1) : p1Stride*(t+1)]
	sign := edgeSigns(eq.m.Tri, t)
	var c [8]float64
	eq.local(t, c[:])
	// Local DOFs of σ_h + a∇u_h: the signs of the edge means, and the DOFs
	// of a∇u_h = Σ_i λ_i a∇u_h.
	for i := range 3 {
		c[2*i] *= sign[i]
	}
	w0, w1 := d[tdW], d[tdW+1]
	for j := range 8 {
		c[j] += w0*ref.lamSum[0][j] + w1*ref.lamSum[1][j]
	}
	// flux2 = cᵀ M_T c with M_T = Σ_kl G_kl M̂_kl / det J, by the packed
	// upper triangles, in four partial sums (independent chains of adds).
	g0, g1, g2 := d[tdGs], d[tdGs+1], d[tdGs+2]
	p0, p1, p2 := &ref.packed[0], &ref.packed[1], &ref.packed[2]
	var acc [4]float64
	q := 0
	for i := range 8 {
		for j := i; j < 8; j++ {
			acc[q%4] += (g0*p0[q] + g1*p1[q] + g2*p2[q]) * (c[i] * c[j])
			q++
		}
	}
	flux2 := (acc[0] + acc[1]) + (acc[2] + acc[3])
	return tw.finish(t, flux2, d[tdOsc], d[tdOsc+1], d[tdArea], v)
}
