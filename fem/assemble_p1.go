package fem

import (
	"fmt"
	"math"
	"runtime"
	"slices"

	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/mesh"
)

// P1 assembly works on the mesh's graph. The off-diagonal entry of edge
// e = v–w is the sum of one contribution from each triangle of e, and the
// diagonal follows from the row: for every element, Σ_j ∇λ_j = 0 gives
// K_ii = −Σ_{j≠i} K_ij for the stiffness, and the P1 mass matrix has
// M_ii = Σ_{j≠i} M_ij (c|T|/6 = 2 · c|T|/12). The load of vertex i in
// triangle T is split in two halves, one on each of the two edges of T at
// i, and b_i is summed over the edges of row i. Every value is therefore
// written once by one triangle into its own slot and gathered in row
// order: the three passes (pattern, triangles, rows) are parallel, need
// no vertex-to-triangle lists, and give the same result whatever
// GOMAXPROCS is.

// patternP1 returns the P1 matrix of m with zero values, and for each
// entry q its slot: −1 for the diagonal, 2e + d for edge e, where the
// row's vertex is Edge[2e+d]. The rows are filled in edge order (each
// goroutine scans all edges and fills the rows of the vertices it owns)
// and sorted.
func patternP1(m *mesh.Mesh, w *Workspace) (*Matrix, []int32) {
	n, ne := m.NumVertices(), m.NumEdges()
	nw := max(1, min(runtime.GOMAXPROCS(0), n/(1<<15)))
	b := parallel.Even(nil, nw, n)
	bounds := func(w int) (int32, int32) { return int32(b[w]), int32(b[w+1]) }
	// Each goroutine w owns the vertices [lo, hi) and scans all edges.
	rowPtr := w.int32s(n+1, true)
	parallel.Run(nw, func(w int) {
		lo, hi := bounds(w)
		for _, v := range m.Edge {
			if v >= lo && v < hi {
				rowPtr[v+1]++
			}
		}
	})
	for v := range n {
		rowPtr[v+1] += rowPtr[v] + 1 // the diagonal
	}
	nnz := int(rowPtr[n])
	col := w.int32s(nnz, false)
	slot := w.int32s(nnz, false)
	fill := w.int32s(n, false)
	defer w.give([][]int32{fill})
	parallel.Run(nw, func(w int) {
		lo, hi := bounds(w)
		for v := lo; v < hi; v++ {
			q := rowPtr[v]
			col[q], slot[q] = v, -1
			fill[v] = q + 1
		}
		for e := range int32(ne) {
			for d := range int32(2) {
				v := m.Edge[2*e+d]
				if v < lo || v >= hi {
					continue
				}
				q := fill[v]
				col[q], slot[q] = m.Edge[2*e+1-d], 2*e+d
				fill[v] = q + 1
			}
		}
		// Each row sorted by column, its slots alike: (column, slot)
		// packed into one key (columns within a row are distinct).
		var key []int64
		for v := lo; v < hi; v++ {
			c, s := col[rowPtr[v]:rowPtr[v+1]], slot[rowPtr[v]:rowPtr[v+1]]
			key = key[:0]
			for j, cj := range c {
				key = append(key, int64(cj)<<32|int64(uint32(s[j])))
			}
			slices.Sort(key)
			for j, k := range key {
				c[j], s[j] = int32(k>>32), int32(uint32(k))
			}
		}
	})
	return &Matrix{Rows: n, Cols: n, RowPtr: rowPtr, Col: col, Val: w.float64s(nnz, false)}, slot
}

// assembleP1 returns the P1 stiffness matrix (with the reaction term) and
// the load vector of p, before boundary conditions; its arrays come from ws.
func assembleP1(s *Space, p *Problem, r rules, ws *Workspace) (*Matrix, []float64, error) {
	m := s.Mesh
	n, ne, nt := m.NumVertices(), m.NumEdges(), m.NumTriangles()
	a, slot := patternP1(m, ws)
	// ek[2e+s]: stiffness of edge e from its triangle EdgeTri[2e+s];
	// ea likewise the area (for the mass term), eb[2(2e+d)+s] the half load
	// of vertex Edge[2e+d] from that triangle.
	ek := ws.float64s(2*ne, true)
	var ea, eb []float64
	if p.C != 0 {
		ea = ws.float64s(2*ne, true)
	}
	if p.HasSource() {
		eb = ws.float64s(4*ne, true)
	}
	defer ws.give([][]int32{slot}, ek, ea, eb)
	rt := NewRegionTable(p)
	pc := p.PiecewiseConstant()
	err := parallel.For(nt, 4096, func(lo, hi int) error {
		var g geometry
		for k := lo; k < hi; k++ {
			// r_i = 2|T| ∇λ_i = (y_j − y_l, x_l − x_j) for (i, j, l) in
			// cyclic order, so K_ij = |T| ∇λ_i·t∇λ_j = r_i·t r_j / (4|T|):
			// one division per triangle. The full geometry is needed only
			// for quadrature (AFunc, f).
			v := m.Tri[3*k : 3*k+3]
			x0, y0 := m.X[2*v[0]], m.X[2*v[0]+1]
			x1, y1 := m.X[2*v[1]], m.X[2*v[1]+1]
			x2, y2 := m.X[2*v[2]], m.X[2*v[2]+1]
			rv := [3][2]float64{{y1 - y2, x2 - x1}, {y2 - y0, x0 - x2}, {y0 - y1, x1 - x0}}
			det := (x1-x0)*(y2-y0) - (y1-y0)*(x2-x0) // 2|T|
			area, scale := 0.5*det, 0.5/det
			if !pc || eb != nil {
				s.geom(&g, k)
			}
			var t Tensor
			if pc {
				t = rt.At(m.Region[k])
			} else {
				var err error
				if t, err = meanTensor(p, r, &g, k); err != nil {
					return err
				}
			}
			var f [3]float64
			if eb != nil {
				var err error
				if f, err = loadP1(p, r, &g, k); err != nil {
					return err
				}
			}
			for l := range 3 {
				i, j := (l+1)%3, (l+2)%3
				e := int(m.TriEdge[3*k+l])
				// The triangle runs along e from local vertex i to j. The
				// two triangles of an edge run along it in opposite
				// directions (New rejects meshes where they do not, and
				// Refine keeps the orientation), so the direction picks
				// the triangle's slot: 0 from Edge[2e] (the lower vertex)
				// up, 1 down. It is also the side d of vertex i.
				side := 0
				if m.Tri[3*k+i] > m.Tri[3*k+j] {
					side = 1
				}
				fx, fy := t.Apply(rv[i][0], rv[i][1])
				ek[2*e+side] = scale * (fx*rv[j][0] + fy*rv[j][1])
				if ea != nil {
					ea[2*e+side] = area
				}
				if eb != nil { // vertex i is Edge[2e+side], j the other end
					eb[2*(2*e+side)+side] = 0.5 * f[i]
					eb[2*(2*e+1-side)+side] = 0.5 * f[j]
				}
			}
		}
		return nil
	})
	if err != nil {
		return nil, nil, err
	}
	b := ws.float64s(n, false)
	c := p.C / 12
	_ = parallel.For(n, 4096, func(lo, hi int) error {
		for v := lo; v < hi; v++ {
			dq, diag, load := int32(-1), 0.0, 0.0
			for q := a.RowPtr[v]; q < a.RowPtr[v+1]; q++ {
				sl := slot[q]
				if sl < 0 {
					dq = q
					continue
				}
				e := sl >> 1
				k := ek[2*e] + ek[2*e+1]
				val := k
				diag -= k
				if ea != nil {
					mass := c * (ea[2*e] + ea[2*e+1])
					val += mass
					diag += mass
				}
				a.Val[q] = val
				if eb != nil {
					load += eb[2*sl] + eb[2*sl+1]
				}
			}
			a.Val[dq], b[v] = diag, load
		}
		return nil
	})
	return a, b, nil
}

// meanTensor returns the stiffness rule's mean of the diffusion over
// triangle k: for P1 the gradients are constant, so the element matrix
// with the rule is that of this constant tensor.
func meanTensor(p *Problem, r rules, g *geometry, k int) (Tensor, error) {
	var t Tensor
	for q := range r.stiff.Len() {
		x, y := g.point([3]float64{r.stiff.Bary[3*q], r.stiff.Bary[3*q+1], r.stiff.Bary[3*q+2]})
		tq := p.Diffusion(x, y, g.region)
		if !tq.valid() {
			return t, atTriangle(k, x, y, fmt.Errorf("%w: %+v", ErrDiffusion, tq))
		}
		w := r.stiff.W[q]
		t.XX += w * tq.XX
		t.XY += w * tq.XY
		t.YY += w * tq.YY
	}
	return t, nil
}

// loadP1 returns ∫_T f λ_i by the load rule.
func loadP1(p *Problem, r rules, g *geometry, k int) ([3]float64, error) {
	var fe [3]float64
	for q := range r.load.Len() {
		l := [3]float64{r.load.Bary[3*q], r.load.Bary[3*q+1], r.load.Bary[3*q+2]}
		x, y := g.point(l)
		f := p.Source(x, y, g.region)
		if math.IsNaN(f) || math.IsInf(f, 0) {
			return fe, atTriangle(k, x, y, fmt.Errorf("%w: source f = %g", ErrNotFinite, f))
		}
		wq := f * r.load.W[q] * g.area
		fe[0] += wq * l[0]
		fe[1] += wq * l[1]
		fe[2] += wq * l[2]
	}
	return fe, nil
}
