package estimate

import (
	"fmt"
)

// Kinds of the edges of a patch at its vertex.
const (
	patchInterior   = iota // interior edge: free moments
	patchDirichlet         // Dirichlet edge: free moments, no condition
	patchPrescribed        // Neumann or untagged boundary edge: τ·n prescribed
)

// p1Patch is the scratch of one goroutine solving P1 patch problems (see
// solveP1).
type p1Patch struct {
	eq  *equilibration
	ref *rt1Reference
	// Per patch triangle, in the order of the vertex's triangles.
	tri  []p1Slot
	ia   []int8       // local index of the vertex
	pe   [][2]int32   // patch edges of the local edges ia+1 and ia+2
	sp   [][6]float64 // σ_p in the active DOFs
	done []bool
	// Per patch edge.
	edge   []int32
	inc    [][2]int32 // patch triangles on its sides, −1 for none
	kind   []int8
	g0, g1 []float64 // global moments 0 and 1 of σ_p
	zm     []int32   // index of the midpoint value of ζ, −1 if zero
	// The system K ζ = b.
	k, b []float64
}

// p1Slot is the data of one triangle of a patch.
type p1Slot struct {
	sign [3]float64 // RTSpace.Sign of the edges
	gs   [3]float64 // see tdGs
	what [2]float64 // see tdW
	gm   [3]float64 // (g_a − ρ_a, q)_T for q = 1, λ_1, λ_2
}

// solve solves the patch problem of vertex a and writes σ_a into the
// vertex slots of its triangles.
func (w *p1Patch) solve(a int) error {
	eq, ref := w.eq, w.ref
	m := eq.m
	tris := eq.vtri[eq.vstart[a]:eq.vstart[a+1]]
	n := len(tris)
	w.tri, w.ia, w.pe = resize(w.tri, n), resize(w.ia, n), resize(w.pe, n)
	w.sp, w.done = resize(w.sp, n), resize(w.done, n)
	w.edge, w.inc, w.kind = w.edge[:0], w.inc[:0], w.kind[:0]
	rt := eq.rtilde[a]
	tri, triEdge := m.Tri, m.TriEdge
	for pt, t := range tris {
		g := &w.tri[pt]
		ia := 0
		for tri[3*int(t)+ia] != int32(a) {
			ia++
		}
		w.ia[pt] = int8(ia)
		w.done[pt] = false
		d := eq.tdat[p1Stride*int(t) : p1Stride*(int(t)+1) : p1Stride*(int(t)+1)]
		g.sign = edgeSigns(tri, int(t))
		g.gs = [3]float64{d[tdGs], d[tdGs+1], d[tdGs+2]}
		g.what = [2]float64{d[tdW], d[tdW+1]}
		// (g_a − ρ_a, q)_T for q = 1, λ_1, λ_2, with ρ_a = r̃_a ψ_a and
		// ∫ λ_i λ_j = |T|(1 + δ_ij)/12.
		ar := d[tdArea]
		g.gm[0] = eq.rt3[3*int(t)+ia] - rt*ar/3
		for mm := 1; mm < 3; mm++ {
			dl := 1.0
			if ia == mm {
				dl = 2
			}
			g.gm[mm] = d[tdGq+2*ia+mm-1] - rt*ar*dl/12
		}
		for s := range 2 {
			e := triEdge[3*int(t)+(ia+1+s)%3]
			pe := indexOf(w.edge, e)
			if pe < 0 {
				pe = len(w.edge)
				w.edge = append(w.edge, e)
				w.inc = append(w.inc, [2]int32{int32(pt), -1})
				k := int8(patchInterior)
				switch {
				case !m.IsBoundary(int(e)):
				case eq.dirE[e]:
					k = patchDirichlet
				default:
					k = patchPrescribed
				}
				w.kind = append(w.kind, k)
			} else {
				w.inc[pe][1] = int32(pt)
			}
			w.pe[pt][s] = int32(pe)
		}
	}
	ne := len(w.edge)
	w.g0, w.g1, w.zm = resize(w.g0, ne), resize(w.g1, ne), resize(w.zm, ne)
	// Prescribed moments, and the boundary edges of the fan.
	k := eq.k
	ends := [2]int{-1, -1}
	nb := 0
	for pe, e := range w.edge {
		w.g0[pe], w.g1[pe] = 0, 0
		if w.kind[pe] == patchInterior {
			continue
		}
		if nb == 2 {
			return errNotFan
		}
		ends[nb] = pe
		nb++
		if w.kind[pe] != patchPrescribed {
			continue
		}
		pt := int(w.inc[pe][0])
		t := int(tris[pt])
		end := 0
		if m.Edge[2*e+1] == int32(a) {
			end = 1
		}
		s := w.tri[pt].sign[localEdge(m, t, int(e))] // n_E·n_out
		w.g0[pe] = -s * eq.neu[(2*int(e)+end)*(k+1)]
		w.g1[pe] = -s * eq.neu[(2*int(e)+end)*(k+1)+1]
	}
	if nb == 1 {
		return errNotFan
	}
	// The sweep: from a start edge of known mean, through each triangle to
	// its other edge at the vertex. Around an interior vertex it starts with
	// a zero mean on the first triangle's first edge and ends at that
	// triangle, whose equation is left out (it follows from the others as
	// r_a is taken out by ρ_a); along a boundary fan it starts at a
	// prescribed edge if there is one, and a prescribed edge at its end
	// keeps its value (again one equation follows from the others).
	start, pt := 0, 0
	if nb == 0 {
		start = int(w.pe[0][0])
		pt = int(w.inc[start][0])
		if pt == 0 {
			pt = int(w.inc[start][1])
		}
		w.done[0] = true
	} else {
		start = ends[0]
		if w.kind[ends[0]] != patchPrescribed && w.kind[ends[1]] == patchPrescribed {
			start = ends[1]
		}
		pt = int(w.inc[start][0])
	}
	visited := 0
	if nb == 0 {
		visited = 1
	}
	for cur := start; pt >= 0 && !w.done[pt]; {
		w.done[pt] = true
		visited++
		g := &w.tri[pt]
		ia := int(w.ia[pt])
		s := 0
		if int(w.pe[pt][0]) == cur {
			s = 1
		}
		next := int(w.pe[pt][s])
		ik, in := (ia+2-s)%3, (ia+1+s)%3 // local edges of cur and next
		if w.kind[next] != patchPrescribed {
			w.g0[next] = g.sign[in] * (g.gm[0] - g.sign[ik]*w.g0[cur])
		}
		cur = next
		if o := int(w.inc[next][0]); o != pt {
			pt = o
		} else {
			pt = int(w.inc[next][1])
		}
	}
	if visited != n {
		return errNotFan
	}
	// The unknowns of ζ: its value at the vertex unless the vertex is on a
	// prescribed edge, and at the midpoints of the free edges.
	nz := 0
	za := -1
	if nb == 0 || (w.kind[ends[0]] != patchPrescribed && w.kind[ends[1]] != patchPrescribed) {
		za, nz = 0, 1
	}
	for pe := range w.edge {
		w.zm[pe] = -1
		if w.kind[pe] != patchPrescribed {
			w.zm[pe] = int32(nz)
			nz++
		}
	}
	w.k, w.b = resize(w.k, nz*nz), resize(w.b, nz)
	clear(w.k)
	clear(w.b)
	for pt := range n {
		g := &w.tri[pt]
		ia := int(w.ia[pt])
		ra := &ref.act[ia]
		// σ_p in the active DOFs (see rt1Reference.act): the edge moments,
		// then the interior DOFs from the linear part of the divergence.
		sp := &w.sp[pt]
		pe0, pe1 := w.pe[pt][0], w.pe[pt][1]
		sp[0], sp[1] = g.sign[(ia+1)%3]*w.g0[pe0], w.g1[pe0]
		sp[2], sp[3] = g.sign[(ia+2)%3]*w.g0[pe1], w.g1[pe1]
		r1, r2 := g.gm[1], g.gm[2]
		for l := range 4 {
			r1 -= ra.div[0][l] * sp[l]
			r2 -= ra.div[1][l] * sp[l]
		}
		sp[4] = ref.binv[0][0]*r1 + ref.binv[0][1]*r2
		sp[5] = ref.binv[1][0]*r1 + ref.binv[1][1]*r2
		var st [6]float64
		for j := range 6 {
			st[j] = sp[j] + g.what[0]*ra.lam[0][j] + g.what[1]*ra.lam[1][j]
		}
		idx := [3]int{za, int(w.zm[pe0]), int(w.zm[pe1])}
		for ci, I := range idx {
			if I < 0 {
				continue
			}
			var s [3]float64
			for kl := range 3 {
				p := &ra.pref[kl][ci]
				s[kl] = p[0]*st[0] + p[1]*st[1] + p[2]*st[2] + p[3]*st[3] + p[4]*st[4] + p[5]*st[5]
			}
			w.b[I] -= g.gs[0]*s[0] + g.gs[1]*s[1] + g.gs[2]*s[2]
			for di, J := range idx {
				if J < 0 || J > I {
					continue // the lower triangle
				}
				w.k[I*nz+J] += g.gs[0]*ra.kref[0][ci][di] + g.gs[1]*ra.kref[1][ci][di] + g.gs[2]*ra.kref[2][ci][di]
			}
		}
	}
	if !cholesky(w.k, nz, 0) {
		return fmt.Errorf("estimate: Equilibrated: the patch problem of vertex %d is singular: %w", a, ErrNotFinite)
	}
	cholSolve(w.k, nz, w.b, w.b)
	// One check of the sum: it is not finite if a value is not (or if the
	// sum overflows, which σ_a's values would then do as well).
	sb := 0.0
	for _, v := range w.b {
		sb += v
	}
	if sb-sb != 0 {
		return fmt.Errorf("estimate: Equilibrated: the patch problem of vertex %d: %w", a, ErrNotFinite)
	}
	nloc := eq.nloc
	for pt, t := range tris {
		g := &w.tri[pt]
		ia := int(w.ia[pt])
		var z [3]float64
		for ci, I := range [3]int{za, int(w.zm[w.pe[pt][0]]), int(w.zm[w.pe[pt][1]])} {
			if I >= 0 {
				z[ci] = w.b[I]
			}
		}
		out := eq.sig[(3*int(t)+ia)*nloc : (3*int(t)+ia+1)*nloc]
		ra := &ref.act[ia]
		sp := &w.sp[pt]
		out[2*ia], out[2*ia+1] = 0, 0
		for j, i := range ra.dof {
			out[i] = sp[j] + ra.curl[j][0]*z[0] + ra.curl[j][1]*z[1] + ra.curl[j][2]*z[2]
		}
		out[ra.dof[0]] *= g.sign[(ia+1)%3]
		out[ra.dof[2]] *= g.sign[(ia+2)%3]
	}
	return nil
}
