package estimate

import (
	"fmt"
	"math"
)

// p2Patch is the scratch of one goroutine solving P2 patch problems (see
// solveP2).
type p2Patch struct {
	pw  *patchWork // the edges of the patch and the DOF map of its triangles
	ref *rt2Reference
	// Per patch triangle: c₀ and C of x_I = c₀ + C x_E (6 + 6×6).
	z    []float64
	kkt  []float64
	rhs  []float64
	ipiv []int
	// One triangle: the condensed element system (see element).
	kgg [7 * 7]float64
	rg  [7]float64
}

// p2Z is the length of the data of one patch triangle in p2Patch.z.
const p2Z = 6 + 6*6

// solve solves the patch problem of vertex a and writes σ_a into the
// vertex slots of its triangles.
func (w *p2Patch) solve(a int) error {
	pw := w.pw
	eq := pw.eq
	tris := eq.vtri[eq.vstart[a]:eq.vstart[a+1]]
	nt := len(tris)
	nflux := pw.gather(a, tris)
	drop := 0
	if eq.free[a] {
		drop = 1 // the constant multiplier of the first triangle, as in patchWork.solve
	}
	n := nflux + nt - drop
	w.kkt, w.rhs = resize(w.kkt, n*n), resize(w.rhs, n)
	clear(w.kkt)
	clear(w.rhs)
	if cap(w.ipiv) < n {
		w.ipiv = make([]int, n)
	}
	w.z = resize(w.z, nt*p2Z)
	nloc := eq.nloc
	if cap(pw.sys) < nloc {
		pw.sys = make([]int, nloc)
		pw.fix = make([]float64, nloc)
	}
	sys, fix := pw.sys[:nloc], pw.fix[:nloc]
	rt := eq.rtilde[a]
	var idx [7]int // system index of each kept unknown: ≥ 0, −1 prescribed, −2 dropped
	var val [7]float64
	for pt, t := range tris {
		ia := pw.local(int(t), a, pt, 0, sys, fix)
		w.element(int(t), ia, rt, w.z[pt*p2Z:(pt+1)*p2Z])
		w.keep(pt, ia, nflux, drop, sys, fix, &idx, &val)
		for i, I := range idx {
			if I < 0 {
				continue
			}
			r := w.rg[i]
			for j, J := range idx {
				s := w.kgg[i*7+j]
				switch {
				case J >= 0:
					w.kkt[I*n+J] += s
				case J == -1:
					r -= s * val[j]
				}
			}
			w.rhs[I] += r
		}
	}
	if !luFactor(w.kkt, n, w.ipiv[:n]) {
		return fmt.Errorf("estimate: Equilibrated: the patch problem of vertex %d is singular: %w", a, ErrNotFinite)
	}
	luSolve(w.kkt, n, w.ipiv[:n], w.rhs, 1)
	for _, v := range w.rhs {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("estimate: Equilibrated: the patch problem of vertex %d: %w", a, ErrNotFinite)
		}
	}
	for pt, t := range tris {
		ia := pw.local(int(t), a, pt, 0, sys, fix)
		w.keep(pt, ia, nflux, drop, sys, fix, &idx, &val)
		for i, I := range idx {
			if I >= 0 {
				val[i] = w.rhs[I]
			}
		}
		out := eq.sig[(3*int(t)+ia)*nloc : (3*int(t)+ia+1)*nloc]
		for j := range 3 {
			out[3*ia+j] = 0
		}
		for s := range 2 {
			e := (ia + 1 + s) % 3
			for j := range 3 {
				out[3*e+j] = val[3*s+j]
			}
		}
		// The interior DOFs: x_I = c₀ + C x_E.
		z := w.z[pt*p2Z : (pt+1)*p2Z]
		for i := range 6 {
			v := z[i]
			c := z[6+6*i : 12+6*i]
			for j := range 6 {
				v += c[j] * val[j]
			}
			out[9+i] = v
		}
	}
	return nil
}

// keep fills, for triangle pt of the patch with the vertex at local index
// ia, the system index of each kept unknown (idx: the moments of the edges
// ia+1 and ia+2, then the constant multiplier) and the prescribed values
// (val; 0 for the dropped multiplier).
func (w *p2Patch) keep(pt, ia, nflux, drop int, sys []int, fix []float64, idx *[7]int, val *[7]float64) {
	for s := range 2 {
		e := (ia + 1 + s) % 3
		for j := range 3 {
			idx[3*s+j] = sys[3*e+j]
			val[3*s+j] = 0
			if sys[3*e+j] == -1 {
				val[3*s+j] = fix[3*e+j]
			}
		}
	}
	idx[6], val[6] = nflux+pt-drop, 0
	if pt == 0 && drop == 1 {
		idx[6] = -2
	}
}

// element writes the condensed element system of triangle t for the vertex
// at local index ia, in the global signs: the patch problem restricted to
// t (that of patchWork.element: the weighted mass matrix M, the loads
// f_i = −(ψ_a ∇u_h, φ_i) and the divergence moments against the monomials
// q̂_m, with data g_m = (g_a − ρ_a, q̂_m), from the tables of rt2Reference)
// with its interior DOFs x_I eliminated. The constraints of q̂_1..q̂_5 read
// B x_I = g_R − B_E x_E with B the constant 5×6 interior block, whose null
// space is spanned by n₀; with P = Bᵀ(BBᵀ)⁻¹,
//
//	x_I = P (g_R − B_E x_E) + α n₀,   α minimising the energy for given x_E,
//
// so x_I = c₀ + C x_E (written to z: c₀, then C by rows), and the energy
// in x_E has the Hessian and load
//
//	S = M_EE + M_EI C + Cᵀ (M_IE + M_II C),   r = f_E − M_EI c₀ + Cᵀ (f_I − M_II c₀).
//
// The element system (kgg, rg) is [[S, b₀], [b₀ᵀ, 0]] and [r, g₀] with b₀
// the moments (div φ_i, 1) of the kept edge DOFs (those of the interior
// DOFs are zero: a field with zero normal trace has zero mean divergence).
func (w *p2Patch) element(t, ia int, rt float64, z []float64) {
	eq, ref := w.pw.eq, w.ref
	d := eq.tdat[p2Stride*t : p2Stride*(t+1) : p2Stride*(t+1)]
	sign := rt2Signs(eq.m.Tri, t)
	// The local DOFs: the kept edge moments, then the interior.
	var dof [12]int
	for s := range 2 {
		e := (ia + 1 + s) % 3
		for j := range 3 {
			dof[3*s+j] = 3*e + j
		}
	}
	for l := range 6 {
		dof[6+l] = 9 + l
	}
	g0, g1, g2 := d[tdP2Gs], d[tdP2Gs+1], d[tdP2Gs+2]
	var m [12][12]float64
	for i, di := range dof {
		m0, m1, m2 := &ref.mass[0][di], &ref.mass[1][di], &ref.mass[2][di]
		for j := i; j < 12; j++ {
			dj := dof[j]
			v := sign[di] * sign[dj] * (g0*m0[dj] + g1*m1[dj] + g2*m2[dj])
			m[i][j], m[j][i] = v, v
		}
	}
	gr := d[tdP2Grad : tdP2Grad+6]
	var f [12]float64
	for i, di := range dof {
		s := 0.0
		for mv := range 3 {
			s += gr[2*mv]*ref.lam[ia][mv][0][di] + gr[2*mv+1]*ref.lam[ia][mv][1][di]
		}
		f[i] = -sign[di] * s
	}
	area := d[tdP2Area]
	gm := d[tdP2Gm+6*ia : tdP2Gm+6*ia+6]
	var gR [5]float64
	for k := range 5 {
		gR[k] = gm[k+1] - rt*area*ref.lamq[ia][k+1]
	}
	// x_I = c₀ + C x_E: the particular part P g_R − Q_s x_E with Q_s = P B_E,
	// and α = (n₀·(f_I − M_IE x_E − M_II x_p))/(n₀·M_II n₀).
	n0, pinv, q := &ref.n0, &ref.pinv, &ref.q[ia]
	var c0 [6]float64
	var c [6][6]float64
	var h [6]float64
	nu := 0.0
	for i := range 6 {
		for k := range 5 {
			c0[i] += pinv[i][k] * gR[k]
		}
		for j := range 6 {
			c[i][j] = -q[i][j] * sign[dof[j]]
			h[i] += m[6+i][6+j] * n0[j]
		}
	}
	for i := range 6 {
		nu += n0[i] * h[i]
	}
	a0 := 0.0
	var kv [6]float64
	for i := range 6 {
		a0 += n0[i]*f[6+i] - h[i]*c0[i]
		for j := range 6 {
			kv[j] += n0[i]*m[6+i][j] + h[i]*c[i][j]
		}
	}
	a0 /= nu
	for i := range 6 {
		c0[i] += a0 * n0[i]
		for j := range 6 {
			c[i][j] -= n0[i] * kv[j] / nu
		}
	}
	for i := range 6 {
		z[i] = c0[i]
		copy(z[6+6*i:12+6*i], c[i][:])
	}
	// T = M_IE + M_II C and u = f_I − M_II c₀.
	var tt [6][6]float64
	var u [6]float64
	for i := range 6 {
		u[i] = f[6+i]
		for j := range 6 {
			tt[i][j] = m[6+i][j]
		}
		for k := range 6 {
			mik := m[6+i][6+k]
			u[i] -= mik * c0[k]
			for j := range 6 {
				tt[i][j] += mik * c[k][j]
			}
		}
	}
	for i := range 6 {
		r := f[i]
		for k := range 6 {
			r += -m[i][6+k]*c0[k] + c[k][i]*u[k]
		}
		w.rg[i] = r
		for j := i; j < 6; j++ { // S is symmetric: the upper triangle, mirrored
			s := m[i][j]
			for k := range 6 {
				s += m[i][6+k]*c[k][j] + c[k][i]*tt[k][j]
			}
			w.kgg[i*7+j], w.kgg[j*7+i] = s, s
		}
		b := sign[dof[i]] * ref.div[0][dof[i]]
		w.kgg[i*7+6], w.kgg[6*7+i] = b, b
	}
	w.kgg[6*7+6] = 0
	w.rg[6] = gm[0] - rt*area*ref.lamq[ia][0]
}

// luFactor overwrites the n×n matrix a (row major, stride n) with its LU
// factorisation with partial pivoting, P a = L U (L unit lower triangular,
// below the diagonal; the row exchanges in piv, as LAPACK's getrf), and
// reports whether every pivot is nonzero. For the small dense systems of
// solveP2, where the call overhead of the general routines dominates.
func luFactor(a []float64, n int, piv []int) bool {
	for k := range n {
		p, pmax := k, math.Abs(a[k*n+k])
		for i := k + 1; i < n; i++ {
			if v := math.Abs(a[i*n+k]); v > pmax {
				p, pmax = i, v
			}
		}
		if !(pmax > 0) {
			return false
		}
		piv[k] = p
		rk := a[k*n : (k+1)*n : (k+1)*n]
		if p != k {
			rp := a[p*n : (p+1)*n : (p+1)*n]
			for j := range rk {
				rk[j], rp[j] = rp[j], rk[j]
			}
		}
		inv := 1 / rk[k]
		uk := rk[k+1:]
		for i := k + 1; i < n; i++ {
			ri := a[i*n : (i+1)*n : (i+1)*n]
			l := ri[k] * inv
			ri[k] = l
			if l == 0 {
				continue
			}
			ui := ri[k+1:]
			for j, v := range uk {
				ui[j] -= l * v
			}
		}
	}
	return true
}

// luSolve solves a x = b with the factorisation of luFactor for the nrhs
// columns of b (row major, n × nrhs), overwriting b with x.
func luSolve(a []float64, n int, piv []int, b []float64, nrhs int) {
	row := func(i int) []float64 { return b[i*nrhs : (i+1)*nrhs : (i+1)*nrhs] }
	for k := range n {
		if p := piv[k]; p != k {
			bk, bp := row(k), row(p)
			for c := range bk {
				bk[c], bp[c] = bp[c], bk[c]
			}
		}
	}
	for i := 1; i < n; i++ {
		bi := row(i)
		for k, l := range a[i*n : i*n+i] {
			if l == 0 {
				continue
			}
			for c, v := range row(k) {
				bi[c] -= l * v
			}
		}
	}
	for i := n - 1; i >= 0; i-- {
		bi := row(i)
		for k := i + 1; k < n; k++ {
			u := a[i*n+k]
			if u == 0 {
				continue
			}
			for c, v := range row(k) {
				bi[c] -= u * v
			}
		}
		inv := 1 / a[i*n+i]
		for c := range bi {
			bi[c] *= inv
		}
	}
}
