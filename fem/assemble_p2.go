package fem

import (
	"github.com/posteriori-fem/posteriori/internal/parallel"
)

// P2 assembly by the scheme of P1 (see assemble_p1.go), on the pattern of
// pattern. Of the 36 entries of an element matrix, those that pair a
// vertex with the midpoint of the opposite edge, or two midpoints, belong
// to that triangle alone and are written into the matrix directly. Those of
// an edge (its two vertices, a vertex with the edge's own midpoint, the
// midpoint with itself) belong to the one or two triangles of the edge:
// each triangle writes them into its own slot, 0 or 1 by the direction it
// runs along the edge, and a pass over the edges adds the two slots. The
// diagonal of a vertex row is minus the sum of the row: the stiffness rows
// sum to zero because Σ_j φ_j = 1, and the mass rows of a vertex because
// ∫_T φ_i = 0 for the P2 vertex functions. The loads are added by owner
// goroutines in triangle order. Every value is computed in an order that
// does not depend on GOMAXPROCS.

// Slots of an edge per side: the vertex–vertex entry, the entries of the
// lower and of the higher vertex with the midpoint, the midpoint's
// diagonal.
const (
	slotVV = iota
	slotLoMid
	slotHiMid
	slotMid
	slotsPerSide
)

// assembleP2 adds the element matrices and loads of every triangle to a
// (with the pattern of s, zero values) and b; its scratch comes from ws.
func assembleP2(s *Space, p *Problem, r rules, a *Matrix, b []float64, ws *Workspace) error {
	m := s.Mesh
	nt, ne := m.NumTriangles(), m.NumEdges()
	nv := int32(m.NumVertices())
	slot := ws.float64s(2*slotsPerSide*ne, true)
	fe := ws.float64s(6*nt, true)
	defer ws.give(nil, slot, fe)
	at := func(row, col int32) int32 {
		return a.RowPtr[row] + int32(search(a.Col[a.RowPtr[row]:a.RowPtr[row+1]], col))
	}
	err := parallel.For(nt, 2048, func(lo, hi int) error {
		w := newElementWork(6)
		ke := make([]float64, 36)
		dofs := make([]int32, 0, 6)
		for k := lo; k < hi; k++ {
			if err := element(s, p, r, w, k, ke, fe[6*k:6*k+6]); err != nil {
				return err
			}
			dofs = s.ElementDOFs(dofs, k)
			for mm := range 3 {
				i, j := (mm+1)%3, (mm+2)%3 // the ends of edge mm, run from i to j
				e := int(m.TriEdge[3*k+mm])
				side := 0
				if dofs[i] > dofs[j] {
					side = 1
				}
				sl := slot[2*slotsPerSide*e+slotsPerSide*side:]
				lo, hi := i, j // local vertices of Edge[2e] and Edge[2e+1]
				if side == 1 {
					lo, hi = j, i
				}
				mid := 3 + mm
				sl[slotVV] = ke[6*i+j]
				sl[slotLoMid] = ke[6*lo+mid]
				sl[slotHiMid] = ke[6*hi+mid]
				sl[slotMid] = ke[6*mid+mid]
				// The triangle's own entries: vertex mm with this midpoint,
				// and this midpoint with the other two.
				v, dm := dofs[mm], dofs[mid]
				a.Val[at(v, dm)] = ke[6*mm+mid]
				a.Val[at(dm, v)] = ke[6*mid+mm]
				for n := range 3 {
					if n != mm {
						a.Val[at(dm, dofs[3+n])] = ke[6*mid+3+n]
					}
				}
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	_ = parallel.For(ne, 4096, func(lo, hi int) error {
		for e := lo; e < hi; e++ {
			sl := slot[2*slotsPerSide*e:]
			va, vb, dm := m.Edge[2*e], m.Edge[2*e+1], nv+int32(e)
			vv := sl[slotVV] + sl[slotsPerSide+slotVV]
			am := sl[slotLoMid] + sl[slotsPerSide+slotLoMid]
			bm := sl[slotHiMid] + sl[slotsPerSide+slotHiMid]
			a.Val[at(va, vb)], a.Val[at(vb, va)] = vv, vv
			a.Val[at(va, dm)], a.Val[at(dm, va)] = am, am
			a.Val[at(vb, dm)], a.Val[at(dm, vb)] = bm, bm
			a.Val[at(dm, dm)] = sl[slotMid] + sl[slotsPerSide+slotMid]
		}
		return nil
	})
	_ = parallel.For(int(nv), 4096, func(lo, hi int) error {
		for v := lo; v < hi; v++ {
			dq, sum := int32(-1), 0.0
			for q := a.RowPtr[v]; q < a.RowPtr[v+1]; q++ {
				if a.Col[q] == int32(v) {
					dq = q
					continue
				}
				sum += a.Val[q]
			}
			a.Val[dq] = -sum
		}
		return nil
	})
	// Loads: each goroutine adds those of the DOFs it owns, in triangle
	// order.
	if p.HasSource() {
		_ = parallel.For(a.Rows, 1<<14, func(lo, hi int) error {
			l, h := int32(lo), int32(hi)
			dofs := make([]int32, 0, 6)
			for k := range nt {
				dofs = s.ElementDOFs(dofs, k)
				for i, d := range dofs {
					if d >= l && d < h {
						b[d] += fe[6*k+i]
					}
				}
			}
			return nil
		})
	}
	return nil
}
