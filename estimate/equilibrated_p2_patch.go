package estimate

import (
	"fmt"
	"math"
)

// The sizes of the condensed element system of solveP2: the unknowns that
// stay in the patch system (the six moments of the two edges at the vertex
// and the constant multiplier), the eliminated ones (six interior DOFs and
// five multipliers), and the columns of the eliminated block's right-hand
// sides (one per kept unknown, then the load).
const (
	p2Kept  = 7
	p2Local = 11
	p2Cols  = p2Kept + 1
)

// p2Patch is the scratch of one goroutine solving P2 patch problems (see
// solveP2).
type p2Patch struct {
	pw  *patchWork // the edges of the patch and the DOF map of its triangles
	ref *rt2Reference
	// Per patch triangle: Z = K_LL⁻¹ [K_LG | r_L], p2Local × p2Cols.
	z    []float64
	ia   []int8
	kkt  []float64
	rhs  []float64
	ipiv []int
	// One triangle.
	kll  [p2Local * p2Local]float64
	kgg  [p2Kept * p2Kept]float64
	klg  [p2Local * p2Kept]float64
	rg   [p2Kept]float64
	lpiv [p2Local]int
}

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
	w.z, w.ia = resize(w.z, nt*p2Local*p2Cols), resize(w.ia, nt)
	nloc := eq.nloc
	if cap(pw.sys) < nloc {
		pw.sys = make([]int, nloc)
		pw.fix = make([]float64, nloc)
	}
	sys, fix := pw.sys[:nloc], pw.fix[:nloc]
	rt := eq.rtilde[a]
	var idx [p2Kept]int // system index of each kept unknown: ≥ 0, −1 prescribed, −2 dropped
	var val [p2Kept]float64
	for pt, t := range tris {
		ia := pw.local(int(t), a, pt, 0, sys, fix)
		w.ia[pt] = int8(ia)
		z := w.z[pt*p2Local*p2Cols : (pt+1)*p2Local*p2Cols]
		w.element(int(t), ia, rt, z)
		w.keep(pt, ia, nflux, drop, sys, fix, &idx, &val)
		// Eliminate: K_LL Z = [K_LG | r_L].
		if !luFactor(w.kll[:], p2Local, w.lpiv[:]) {
			return fmt.Errorf("estimate: Equilibrated: the patch problem of vertex %d is singular: %w", a, ErrNotFinite)
		}
		luSolve(w.kll[:], p2Local, w.lpiv[:], z, p2Cols)
		// The Schur complement K_GG − K_LGᵀ K_LL⁻¹ K_LG and its load
		// r_G − K_LGᵀ K_LL⁻¹ r_L, into the patch system. K_LG is kept in
		// w.klg by element.
		for i := range p2Kept {
			I := idx[i]
			if I < 0 {
				continue
			}
			r := w.rg[i]
			for l := range p2Local {
				r -= w.klg[l*p2Kept+i] * z[l*p2Cols+p2Kept]
			}
			for j := range p2Kept {
				s := w.kgg[i*p2Kept+j]
				for l := range p2Local {
					s -= w.klg[l*p2Kept+i] * z[l*p2Cols+j]
				}
				switch J := idx[j]; {
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
		// The interior DOFs: x_L = K_LL⁻¹ r_L − K_LL⁻¹ K_LG x_G.
		z := w.z[pt*p2Local*p2Cols : (pt+1)*p2Local*p2Cols]
		for l := range 6 {
			v := z[l*p2Cols+p2Kept]
			for j := range p2Kept {
				v -= z[l*p2Cols+j] * val[j]
			}
			out[9+l] = v
		}
	}
	return nil
}

// keep fills, for triangle pt of the patch with the vertex at local index
// ia, the system index of each kept unknown (idx: the moments of the edges
// ia+1 and ia+2, then the constant multiplier) and the prescribed values
// (val; 0 for the dropped multiplier).
func (w *p2Patch) keep(pt, ia, nflux, drop int, sys []int, fix []float64, idx *[p2Kept]int, val *[p2Kept]float64) {
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

// element fills the blocks of the element system of triangle t for the
// vertex at local index ia, in the global signs: K_LL (kll), K_LG (klg),
// K_GG (kgg), r_G (rg) and [K_LG | r_L] (z, which the elimination
// overwrites). The system is that of patchWork.element: the weighted mass
// matrix, the divergence moments and the loads −(ψ_a ∇u_h, φ_i) and
// (g_a − ρ_a, q̂_m), from the tables of rt2Reference.
func (w *p2Patch) element(t, ia int, rt float64, z []float64) {
	eq, ref := w.pw.eq, w.ref
	d := eq.tdat[p2Stride*t : p2Stride*(t+1) : p2Stride*(t+1)]
	sign := rt2Signs(eq.m.Tri, t)
	// The local DOFs of the kept edge moments and of the interior.
	var dof [p2Kept - 1 + 6]int
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
	mass := func(i, j int) float64 {
		return sign[i] * sign[j] * (g0*ref.mass[0][i][j] + g1*ref.mass[1][i][j] + g2*ref.mass[2][i][j])
	}
	div := func(mm, i int) float64 { return sign[i] * ref.div[mm][i] }
	gr := d[tdP2Grad : tdP2Grad+6]
	load := func(i int) float64 {
		s := 0.0
		for mv := range 3 {
			s += gr[2*mv]*ref.lam[ia][mv][0][i] + gr[2*mv+1]*ref.lam[ia][mv][1][i]
		}
		return -sign[i] * s
	}
	area := d[tdP2Area]
	gm := d[tdP2Gm+6*ia : tdP2Gm+6*ia+6]
	cons := func(mm int) float64 { return gm[mm] - rt*area*ref.lamq[ia][mm] }
	// Eliminated unknowns l: interior DOFs 0..5, multipliers of q̂_1..q̂_5.
	for l := range p2Local {
		for l2 := range p2Local {
			v := 0.0
			switch {
			case l < 6 && l2 < 6:
				v = mass(dof[6+l], dof[6+l2])
			case l < 6:
				v = div(l2-5, dof[6+l])
			case l2 < 6:
				v = div(l-5, dof[6+l2])
			}
			w.kll[l*p2Local+l2] = v
		}
		for k := range p2Kept {
			v := 0.0
			switch {
			case l < 6 && k < 6:
				v = mass(dof[6+l], dof[k])
			case l < 6:
				v = div(0, dof[6+l])
			case k < 6:
				v = div(l-5, dof[k])
			}
			w.klg[l*p2Kept+k] = v
			z[l*p2Cols+k] = v
		}
		if l < 6 {
			z[l*p2Cols+p2Kept] = load(dof[6+l])
		} else {
			z[l*p2Cols+p2Kept] = cons(l - 5)
		}
	}
	for k := range p2Kept {
		for k2 := range p2Kept {
			v := 0.0
			switch {
			case k < 6 && k2 < 6:
				v = mass(dof[k], dof[k2])
			case k < 6:
				v = div(0, dof[k])
			case k2 < 6:
				v = div(0, dof[k2])
			}
			w.kgg[k*p2Kept+k2] = v
		}
	}
	for k := range 6 {
		w.rg[k] = load(dof[k])
	}
	w.rg[6] = cons(0)
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
