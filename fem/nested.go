package fem

import (
	"fmt"

	"github.com/posteriori-fem/posteriori/internal/amg"
	"github.com/posteriori-fem/posteriori/internal/sparse"
	"github.com/posteriori-fem/posteriori/mesh"
)

// DefaultNestedRatio is the growth of the number of unknowns after which
// Nested makes the hierarchy of the current system the base of the next
// ones (Nested.Ratio = 0). Measured on the adaptive L-shape loop of package
// adapt to 1.14e6 DOFs (a program calling adapt.Run as examples/bench
// does, three runs of each, alternated, on a two-core machine): with ratio
// 8 the loop took 3.5–4.1 s with a peak of 913–932 MB resident; with 4,
// 4.8–5.7 s and 1.32–1.34 GB (a larger base is kept at the last steps);
// with 16, 3.6–4.9 s and 892–914 MB; with a new hierarchy at every step,
// 5.8–6.9 s and 938–942 MB. Every solve took at most 5 iterations (199 in
// all) in each case.
//
// Memory: the base is kept from one Prepare to the next, so the peak of a
// sequence grows by the base's hierarchy, which right after the base has
// moved on is that of the previous system. On the adaptive loop (unknowns
// growing about 1.3 times a step) that is within the figures above, which
// depend on where the loop stops; on a loop that bisects every triangle
// (unknowns doubling at each step, to 788,481) the peak was 1.00 GB
// against 0.66 GB with a new hierarchy at every step (one run each).
const DefaultNestedRatio = 8

// Nested prepares multigrid preconditioners for a sequence of P1 systems
// on meshes each refined from the one before, such as the steps of an
// adaptive loop, by reusing the hierarchy of an earlier system (the base)
// as the coarse levels of the next ones. The hierarchy of a system is its
// own matrix, smoothed as System.Prepare smooths it, the interpolation P
// from the base's P1 space to its own, and below that the base's levels:
// for nested spaces and a bilinear form integrated exactly on both meshes
// (piecewise-constant diffusion, constant reaction and Robin coefficients),
// the base's matrix is the Galerkin product Pᵀ A P, so the V-cycle is
// that of a multigrid method whose first coarse space is the base's, and
// its setup costs the smoother's data and P, not a new aggregation and
// Galerkin product. When the number of unknowns has grown by Ratio since
// the base, the current hierarchy becomes the base of the next systems, so
// that the levels keep a ratio of about Ratio between them.
//
// P is the P1 interpolation through the refinements, composed from the
// parent maps: a vertex kept keeps its row, and the new vertex on an edge
// a–b takes half of each of the rows of a and b, as the P1 interpolant of a
// function of the coarse space has at the chord midpoint. Where a vertex
// was moved onto a curve the spaces are not nested; the coarse levels then
// are not the Galerkin ones, which weakens the preconditioner but keeps it
// symmetric positive definite (see internal/amg's NewOn). Rows of the fine
// Dirichlet DOFs and columns of the base's are left out.
//
// The first Prepare, a Prepare of a P2 system, and one that does not
// follow a Refine of the mesh of the Prepare before, build a whole new
// hierarchy (System.Prepare(Multigrid)) and make it the base. A Nested
// keeps the base's system and hierarchy, and P's rows, between calls. It
// is not safe for concurrent use; a Prepared it returned must not be used
// once the next Prepare has been called. The zero value is ready to use.
type Nested struct {
	// Ratio is the growth of the number of unknowns after which the
	// current hierarchy becomes the base; zero means DefaultNestedRatio.
	// Values in (0, 1] make every hierarchy a base.
	Ratio float64

	base    *amg.Hierarchy
	baseN   int    // unknowns of the base (vertices of its mesh)
	baseDir []bool // the base's Dirichlet DOFs
	// rows is P from the base's vertices to those of the mesh of the last
	// Prepare, or, after Refine, of its refinement; nil is the identity.
	rows    *sparse.CSR
	last    *mesh.Mesh // the mesh of the last Prepare
	refined bool       // Refine has carried rows to the refinement of last
	n       int        // vertices of the mesh rows leads to
}

// Refine carries n through the refinement of the mesh of its last Prepare
// (old) to a new mesh, given the parent map of the refinement (composed
// with any renumbering, mesh.Parents.Compose). It must be called after
// that Prepare and before the next one, while old is still at hand; the
// next Prepare then reuses the base. Any other call makes the next Prepare
// start afresh.
func (n *Nested) Refine(old *mesh.Mesh, par *mesh.Parents) {
	n.refined = false
	if n.base == nil || old == nil || old != n.last || par == nil || par.OldVertices != old.NumVertices() {
		n.base = nil
		return
	}
	nv := len(par.Vertex)
	prev := n.rows
	row := func(v int32) ([]int32, []float64) {
		if prev == nil {
			return []int32{v}, []float64{1}
		}
		return prev.Col[prev.RowPtr[v]:prev.RowPtr[v+1]], prev.Val[prev.RowPtr[v]:prev.RowPtr[v+1]]
	}
	nnz := nv
	if prev != nil {
		nnz = len(prev.Col) + 2*(nv-prev.Rows)
	}
	p := &sparse.CSR{Rows: nv, Cols: n.baseN, RowPtr: make([]int32, 1, nv+1), Col: make([]int32, 0, nnz), Val: make([]float64, 0, nnz)}
	ov := int32(par.OldVertices)
	for _, pv := range par.Vertex {
		if pv < ov {
			c, v := row(pv)
			p.Col, p.Val = append(p.Col, c...), append(p.Val, v...)
		} else {
			e := pv - ov
			ca, va := row(old.Edge[2*e])
			cb, vb := row(old.Edge[2*e+1])
			// Merge the two sorted rows, each with weight ½.
			i, j := 0, 0
			for i < len(ca) || j < len(cb) {
				switch {
				case j == len(cb) || i < len(ca) && ca[i] < cb[j]:
					p.Col, p.Val = append(p.Col, ca[i]), append(p.Val, 0.5*va[i])
					i++
				case i == len(ca) || cb[j] < ca[i]:
					p.Col, p.Val = append(p.Col, cb[j]), append(p.Val, 0.5*vb[j])
					j++
				default:
					p.Col, p.Val = append(p.Col, ca[i]), append(p.Val, 0.5*va[i]+0.5*vb[j])
					i++
					j++
				}
			}
		}
		p.RowPtr = append(p.RowPtr, int32(len(p.Col)))
	}
	n.rows, n.n, n.refined, n.last = p, nv, true, nil
}

// Prepare returns sys prepared with a multigrid preconditioner: on the
// base's levels if sys's mesh is the one the last Refine led to, else a new
// hierarchy, which becomes the base (see Nested).
func (n *Nested) Prepare(sys *System) (*Prepared, error) {
	s := sys.Space
	reuse := n.base != nil && n.refined && s.Degree == 1 && s.NumDOF() == n.n && sys.work == nil
	n.refined = false
	if !reuse {
		ps, err := sys.Prepare(Multigrid)
		if err != nil {
			n.base = nil
			return nil, err
		}
		n.rebase(sys, ps.pre.(*amg.Hierarchy))
		return ps, nil
	}
	// Leave out, in place, the rows of the Dirichlet DOFs and the columns
	// of the base's: the rows so reduced are still those of the
	// interpolation of the base's functions that vanish on the Dirichlet
	// edges, which vanish at every Dirichlet vertex, so Refine composes
	// the next rows from them.
	nd := s.NumDOF()
	dir := make([]bool, nd)
	for _, d := range sys.Dirichlet {
		dir[d] = true
	}
	p := n.rows
	k := int32(0)
	for i := range nd {
		lo, hi := p.RowPtr[i], p.RowPtr[i+1]
		p.RowPtr[i] = k
		if dir[i] {
			continue
		}
		for j := lo; j < hi; j++ {
			if c := p.Col[j]; !n.baseDir[c] {
				p.Col[k], p.Val[k] = c, p.Val[j]
				k++
			}
		}
	}
	p.RowPtr[nd] = k
	p.Col, p.Val = p.Col[:k], p.Val[:k]
	h, err := amg.NewOn(sys.A.csr(), p, n.base)
	if err != nil {
		n.base = nil
		return nil, fmt.Errorf("fem: Solve: %w", err)
	}
	ratio := n.Ratio
	if ratio == 0 {
		ratio = DefaultNestedRatio
	}
	if float64(nd) >= ratio*float64(n.baseN) {
		n.rebase(sys, h)
	} else {
		n.last = s.Mesh
	}
	return &Prepared{System: sys, pre: h}, nil
}

// rebase makes sys and its hierarchy h the base.
func (n *Nested) rebase(sys *System, h *amg.Hierarchy) {
	s := sys.Space
	n.base, n.rows, n.last = nil, nil, s.Mesh
	if s.Degree != 1 || sys.work != nil {
		return // the hierarchy of a Workspace is rebuilt by its next Prepare
	}
	h.Release()
	n.base, n.baseN = h, s.NumDOF()
	n.baseDir = make([]bool, n.baseN)
	for _, d := range sys.Dirichlet {
		n.baseDir[d] = true
	}
}
