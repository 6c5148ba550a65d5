package amg

import (
	"fmt"

	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// NewOn builds a hierarchy for a whose coarse levels are those of coarse,
// reached through the prolongation p (a.Rows × coarse.Len()): the first
// level is a with the smoother of coarse, its restriction pᵀ, and then the
// levels of coarse, whose first matrix takes the place of the Galerkin
// product pᵀ a p. When p is the interpolation between nested spaces and
// coarse was built for the matrix of the coarse space, that matrix is the
// Galerkin product (exactly, in exact arithmetic, for a bilinear form
// integrated exactly on both), and the setup costs the smoother's data of
// a and the transpose of p instead of a whole aggregation and Galerkin
// product. For any p and coarse the V-cycle is a symmetric positive
// definite preconditioner when a and coarse's matrix are (a coarse
// correction that is not the Galerkin one weakens it, but keeps it
// symmetric).
//
// The new hierarchy shares the levels of coarse (their matrices and work
// vectors): coarse must not be used, nor Reset, while the new hierarchy is
// in use, and the new hierarchy must not be Reset (Reset returns an error
// wrapping sparse.ErrSettings). a, p and coarse are kept, not copied.
//
// Errors: those of New for a; sparse.ErrDims if p or coarse is nil or their
// sizes do not fit; the errors of p.Validate.
func NewOn(a, p *sparse.CSR, coarse *Hierarchy) (*Hierarchy, error) {
	if a == nil || p == nil || coarse == nil {
		return nil, fmt.Errorf("amg: NewOn: %w: nil matrix, prolongation or coarse hierarchy", sparse.ErrDims)
	}
	if a.Rows != a.Cols {
		return nil, fmt.Errorf("amg: %w: matrix is %dx%d, want square", sparse.ErrDims, a.Rows, a.Cols)
	}
	if p.Rows != a.Rows || p.Cols != coarse.Len() || len(coarse.levels) == 0 {
		return nil, fmt.Errorf("amg: NewOn: %w: prolongation is %dx%d for a matrix of %d rows and a coarse hierarchy of %d unknowns", sparse.ErrDims, p.Rows, p.Cols, a.Rows, coarse.Len())
	}
	for _, m := range []*sparse.CSR{a, p} {
		if !valid(m) {
			if err := m.Validate(); err != nil {
				return nil, fmt.Errorf("amg: %w", err)
			}
		}
	}
	h := &Hierarchy{smoother: coarse.smoother, sweeps: coarse.sweeps, on: true}
	lv := level{a: a}
	ws := &h.ws
	if err := newLevel(&lv, ws, 0); err != nil {
		return nil, err
	}
	if h.multicolour(a.Rows) {
		lv.mem.colours = new(colouring)
		lv.colours = lv.mem.colours
		colour(lv.colours, a, lv.invDiag)
	} else if h.smoother == Chebyshev {
		lv.lmax = chebyshevSafety * powerRho(ws, lv.a, lv.a.Val, ws.diag, lv.invDiag, powerIterations)
		lv.invTheta, lv.c1, lv.c2 = chebyshevCoefficients(lv.lmax/chebyshevRatio, lv.lmax, h.sweeps)
	}
	lv.p = p
	lv.r = transpose(nil, p, ws)
	lv.mem.p, lv.mem.r = lv.p, lv.r
	h.levels = append(make([]level, 0, 1+len(coarse.levels)), lv)
	h.levels = append(h.levels, coarse.levels...)
	// The first level of coarse took its vectors from the caller; here it
	// needs its own (allocate gives them to every level but the first).
	h.levels[1].x, h.levels[1].b = nil, nil
	h.allocate()
	h.ws = workspace{} // the setup's scratch is not needed again
	return h, nil
}

// Release drops the scratch arrays of the setup that h keeps for Reset, for
// a hierarchy that is kept without being Reset (the base of the next ones,
// in NewOn). A later Reset allocates them again.
func (h *Hierarchy) Release() { h.ws = workspace{} }
