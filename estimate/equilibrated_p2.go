package estimate

import (
	"math"
	"sync"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
	"github.com/posteriori-fem/posteriori/mesh"
)

// The data solveP2 keeps per triangle in equilibration.tdat, at these
// offsets: G₀₀, G₁₁, G₀₁ of G = Jᵀ a⁻¹ J divided by det J; the reference
// gradients ĝ_m = Jᵀ ∇u_h at the vertices m = 0, 1, 2; the reference
// fluxes ŵ_m = adj(J) a∇u_h there (the Piola pull-back of a∇u_h, which is
// linear, is Σ_m λ_m ŵ_m); the moments (g_i, q̂_m)_T of
// g_i = ψ_i (f − c u_h) − a∇u_h·∇ψ_i for the vertices i = 0, 1, 2 and the
// monomials q̂_m = 1, x̂, ŷ, x̂², x̂ŷ, ŷ² of the reference coordinates; the
// area.
const (
	tdP2Gs   = 0
	tdP2Grad = 3
	tdP2W    = 9
	tdP2Gm   = 15
	tdP2Area = 33
	p2Stride = 34
)

// rt2Reference holds the reference-element tables of RT_2 that the P2 path
// of Equilibrated uses, in the local DOF order of fem.RTSpace and without
// the global signs (the global basis function of local DOF i is s_i times
// the Piola image of the reference function φ̂_i). With the contravariant
// Piola map of a triangle with Jacobian J (det J > 0) and constant
// diffusion a, and ψ the hat function of local vertex i,
//
//	(a⁻¹ φ_i, φ_j)_T  = s_i s_j (G₀₀ M̂₀₀ + G₁₁ M̂₁₁ + G₀₁ M̂₀₁)_{ij} / det J,   G = Jᵀ a⁻¹ J,
//	(div φ_i, q_m)_T  = s_i ∫_T̂ div̂ φ̂_i q̂_m dx̂,
//	(ψ ∇u_h, φ_j)_T   = s_j Σ_{m,c} ĝ_{m,c} ∫_T̂ λ_i λ_m φ̂_{j,c} dx̂,   ĝ_m = Jᵀ ∇u_h(x_m),
//
// the last because ∇u_h is linear for u_h ∈ P_2, so Jᵀ∇u_h = Σ_m λ_m ĝ_m.
// The tables are computed once, on the one-triangle mesh (0,0), (1,0),
// (0,1), with fem's RT_2 basis and a rule exact for these polynomials.
type rt2Reference struct {
	mass [3][15][15]float64   // M̂₀₀, M̂₁₁, M̂₀₁ + M̂₁₀
	pack [3][120]float64      // mass[kl][i][j] for i ≤ j, row by row, off-diagonal entries doubled
	ldof [3][2][15]float64    // DOFs of λ_m e_c
	div  [6][15]float64       // ∫_T̂ div̂ φ̂_i q̂_m
	lam  [3][3][2][15]float64 // ∫_T̂ λ_i λ_m φ̂_{j,c}
	lamq [3][6]float64        // ∫_T λ_i q̂_m / |T|
	// The interior block B of div (rows q̂_1..q̂_5, the interior DOFs; the
	// row of q̂_0 is zero there, and is taken as zero where the table holds
	// the rounding of fem's basis, about 1e-14): its right inverse P = Bᵀ(BBᵀ)⁻¹, a unit
	// vector n₀ spanning its null space, and for each local vertex ia the
	// products P B_E with the columns of the moments of the edges ia+1 and
	// ia+2 (see p2Patch.element).
	pinv [6][5]float64
	n0   [6]float64
	q    [3][6][6]float64
}

var rt2Ref = sync.OnceValue(buildRT2Reference)

func buildRT2Reference() *rt2Reference {
	r := &rt2Reference{}
	m, _, err := mesh.New(mesh.Arrays{X: []float64{0, 0, 1, 0, 0, 1}, Tri: []int32{0, 1, 2}})
	if err != nil {
		panic(err) // a fixed, valid mesh
	}
	s, err := fem.NewRTSpace(m, 2)
	if err != nil {
		panic(err)
	}
	el := s.NewElement()
	sign := el.Signs()
	rule, err := quadrature.ForTriangle(8)
	if err != nil {
		panic(err)
	}
	var val [15][2]float64
	var dv [15]float64
	var mono [6]float64
	for q := range rule.Len() {
		l := [3]float64{rule.Bary[3*q], rule.Bary[3*q+1], rule.Bary[3*q+2]}
		el.Basis(l, val[:])
		el.Div(l, dv[:])
		w := 0.5 * rule.W[q]
		monomials(l[1], l[2], 2, mono[:])
		for i := range 15 {
			vi := [2]float64{sign[i] * val[i][0], sign[i] * val[i][1]}
			for j := range 15 {
				vj := [2]float64{sign[j] * val[j][0], sign[j] * val[j][1]}
				r.mass[0][i][j] += w * vi[0] * vj[0]
				r.mass[1][i][j] += w * vi[1] * vj[1]
				r.mass[2][i][j] += w * (vi[0]*vj[1] + vi[1]*vj[0])
			}
			for mm := range 6 {
				r.div[mm][i] += w * sign[i] * dv[i] * mono[mm]
			}
			for a := range 3 {
				for b := range 3 {
					for c := range 2 {
						r.lam[a][b][c][i] += w * l[a] * l[b] * vi[c]
					}
				}
			}
		}
		for a := range 3 {
			for mm := range 6 {
				r.lamq[a][mm] += rule.W[q] * l[a] * mono[mm]
			}
		}
	}
	for kl := range 3 {
		p := 0
		for i := range 15 {
			for j := i; j < 15; j++ {
				r.pack[kl][p] = r.mass[kl][i][j]
				if j > i {
					r.pack[kl][p] *= 2
				}
				p++
			}
		}
	}
	r.nullSpace()
	dofs := el.DOFs()
	for mv := range 3 {
		for c := range 2 {
			v, err := fem.InterpolateRT(s, func(x, y float64) (float64, float64) {
				l := [3]float64{1 - x - y, x, y}[mv]
				if c == 0 {
					return l, 0
				}
				return 0, l
			})
			if err != nil {
				panic(err)
			}
			for i, d := range dofs {
				r.ldof[mv][c][i] = sign[i] * v.U[d]
			}
		}
	}
	return r
}

// rt2Signs returns the sign of each local RT_2 DOF of triangle t (see
// fem.RTElement.Signs): s_E^{j+1} for moment j of edge E, 1 inside.
func rt2Signs(tri []int32, t int) [15]float64 {
	es := edgeSigns(tri, t)
	var sign [15]float64
	for e, s := range es {
		sign[3*e], sign[3*e+1], sign[3*e+2] = s, 1, s
	}
	for i := 9; i < 15; i++ {
		sign[i] = 1
	}
	return sign
}

// triangleP2 writes the terms of triangle t into v (see termCount) for the
// P2 path: the flux term as the quadratic form of the weighted RT_2 mass
// matrix (the rule of triangle is exact for it), the oscillations as
// triangle does.
func (tw *termWork) triangleP2(t int, v []float64) error {
	eq := tw.eq
	ref := rt2Ref()
	d := eq.tdat[p2Stride*t : p2Stride*(t+1) : p2Stride*(t+1)]
	sign := rt2Signs(eq.m.Tri, t)
	var c [15]float64
	eq.local(t, c[:])
	// Local DOFs of σ_h + a∇u_h, without the signs.
	wh := d[tdP2W : tdP2W+6]
	for j := range 15 {
		c[j] = sign[j]*c[j] + wh[0]*ref.ldof[0][0][j] + wh[1]*ref.ldof[0][1][j] +
			wh[2]*ref.ldof[1][0][j] + wh[3]*ref.ldof[1][1][j] + wh[4]*ref.ldof[2][0][j] + wh[5]*ref.ldof[2][1][j]
	}
	g0, g1, g2 := d[tdP2Gs], d[tdP2Gs+1], d[tdP2Gs+2]
	p0, p1, p2 := &ref.pack[0], &ref.pack[1], &ref.pack[2]
	var acc [4]float64
	q := 0
	for i := range 15 {
		for j := i; j < 15; j++ {
			acc[q%4] += (g0*p0[q] + g1*p1[q] + g2*p2[q]) * (c[i] * c[j])
			q++
		}
	}
	flux2 := (acc[0] + acc[1]) + (acc[2] + acc[3])
	nq := eq.rule.Len()
	area := d[tdP2Area]
	f := eq.fq[t*nq : (t+1)*nq]
	return tw.finish(t, flux2, tw.projectionError(f, 2, area), tw.projectionError(f, 1, area), area, v)
}

// solveP2 is the P2 path of dispatch. It computes the same σ_h as
// solveGeneral, up to rounding: the data are the same (f at the points of
// the same rule), and each patch problem is the same strictly convex
// minimisation under the same constraints, with a unique minimiser, solved
// in another way. The element matrices come from the reference tables of
// rt2Reference through the Piola map (the data moments from one pass over
// the rule's points per triangle, triangleData), and on each triangle of a
// patch the unknowns that only it sees, its six interior DOFs, are
// eliminated: the constraints of the five non-constant monomials fix them
// up to the one divergence-free interior field n₀ (the divergence maps the
// interior fields of RT_2 onto the polynomials of P_2 with mean zero), and
// the energy fixes the multiple of n₀ (see p2Patch.element). What remains
// per patch is a system in the free edge moments and one constant
// multiplier per triangle, about 4n unknowns for n triangles instead of
// the 15n of the general path, solved by LU factorisation with partial
// pivoting; the interior DOFs follow triangle by triangle. The flux term
// of the indicators is the quadratic form of the weighted mass matrix.
//
// The general path's constraint of the constant monomial carries, for the
// interior DOFs, the rounding (about 1e-14) of fem's RT_2 basis where the
// exact value is zero; this path uses the zero. The two fluxes differ by
// this rounding amplified by the conditioning of the patch problems: in
// TestEquilibratedFastMatchesGeneral, 4.2e-13 of the largest coefficient
// on a discrete Kellogg solution (contrast 161), at most 5e-14 on the
// other cases; with those entries set to zero in the general path, below
// 1e-14 on every case.
func (eq *equilibration) solveP2() error {
	m := eq.m
	nt := m.NumTriangles()
	eq.tdat = eq.take(p2Stride * nt)
	if err := eq.triangleData(true); err != nil {
		return err
	}
	if err := eq.neumannData(); err != nil {
		return err
	}
	eq.vertexResiduals()
	eq.sig = eq.take(3 * nt * eq.nloc)
	eq.terms = (*termWork).triangleP2
	ref := rt2Ref()
	return parallel.For(m.NumVertices(), 64, func(lo, hi int) error {
		w := &p2Patch{pw: newPatchWork(eq), ref: ref}
		for a := lo; a < hi; a++ {
			if err := w.solve(a); err != nil {
				return err
			}
		}
		return nil
	})
}

// p2Geometry clears the solveP2 data d of triangle t and writes its
// geometry, diffusion and the reference gradients of u_h at its vertices;
// ev holds triangle t.
func (eq *equilibration) p2Geometry(ev *fem.Evaluator, t int, d []float64) {
	m := eq.m
	clear(d)
	x, tri := m.X, m.Tri[3*t:3*t+3:3*t+3]
	x0, y0 := x[2*tri[0]], x[2*tri[0]+1]
	j00, j10 := x[2*tri[1]]-x0, x[2*tri[1]+1]-y0
	j01, j11 := x[2*tri[2]]-x0, x[2*tri[2]+1]-y0
	det := j00*j11 - j10*j01
	a := eq.co.At(m.Region[t])
	da := a.XX*a.YY - a.XY*a.XY
	ixx, ixy, iyy := a.YY/da, -a.XY/da, a.XX/da
	q := func(ux, uy, vx, vy float64) float64 { return ux*(ixx*vx+ixy*vy) + uy*(ixy*vx+iyy*vy) }
	d[tdP2Gs] = q(j00, j10, j00, j10) / det
	d[tdP2Gs+1] = q(j01, j11, j01, j11) / det
	d[tdP2Gs+2] = q(j00, j10, j01, j11) / det
	for v := range 3 {
		var l [3]float64
		l[v] = 1
		_, gx, gy := ev.Eval(l)
		d[tdP2Grad+2*v] = j00*gx + j10*gy
		d[tdP2Grad+2*v+1] = j01*gx + j11*gy
		wx, wy := a.Apply(gx, gy)
		d[tdP2W+2*v] = j11*wx - j01*wy
		d[tdP2W+2*v+1] = -j10*wx + j00*wy
	}
	d[tdP2Area] = 0.5 * det
}

// nullSpace sets pinv, n0 and q from div.
func (r *rt2Reference) nullSpace() {
	var bbt [25]float64
	for i := range 5 {
		for j := range 5 {
			for k := 9; k < 15; k++ {
				bbt[5*i+j] += r.div[1+i][k] * r.div[1+j][k]
			}
		}
	}
	var piv [5]int
	if !luFactor(bbt[:], 5, piv[:]) {
		panic("estimate: singular interior divergence block of RT_2") // broken internal invariant
	}
	// (BBᵀ)⁻¹ B, then its transpose P.
	var x [5 * 6]float64
	for i := range 5 {
		for k := range 6 {
			x[6*i+k] = r.div[1+i][9+k]
		}
	}
	luSolve(bbt[:], 5, piv[:], x[:], 6)
	for k := range 6 {
		for i := range 5 {
			r.pinv[k][i] = x[6*i+k]
		}
	}
	// n₀: the largest column of I − P B, normalised.
	best := -1.0
	for c := range 6 {
		var v [6]float64
		s := 0.0
		for k := range 6 {
			v[k] = 0
			if k == c {
				v[k] = 1
			}
			for i := range 5 {
				v[k] -= r.pinv[k][i] * r.div[1+i][9+c]
			}
			s += v[k] * v[k]
		}
		if s > best {
			best = s
			for k := range 6 {
				r.n0[k] = v[k] / math.Sqrt(s)
			}
		}
	}
	for ia := range 3 {
		for s := range 2 {
			e := (ia + 1 + s) % 3
			for j := range 3 {
				col := 3*e + j
				for k := range 6 {
					v := 0.0
					for i := range 5 {
						v += r.pinv[k][i] * r.div[1+i][col]
					}
					r.q[ia][k][3*s+j] = v
				}
			}
		}
	}
}
