package amg

import (
	"fmt"
	"math"
	"runtime"
	"slices"
	"sync"
	"sync/atomic"

	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// Defaults of Settings.
const (
	DefaultTheta      = 0.08 // strength threshold θ
	DefaultMaxLevels  = 20   // most levels, the fine one included
	DefaultCoarseSize = 100  // coarsening stops at or below this many unknowns
	DefaultSmoothing  = 1    // smoothing steps before and after the coarse correction
)

// Smoother selects the smoother of the V-cycle.
type Smoother int

const (
	// DefaultSmoother is the zero value; it selects GaussSeidel.
	DefaultSmoother Smoother = iota
	// GaussSeidel is forward Gauss–Seidel before the coarse correction and
	// backward Gauss–Seidel after it, each Settings.Smoothing sweeps. On
	// levels of more than 2¹⁷ unknowns the unknowns are ordered by a
	// colouring of the matrix graph and each colour is swept in parallel
	// (multicolour Gauss–Seidel); smaller levels are swept sequentially in
	// their natural order.
	GaussSeidel
	// Chebyshev is the Chebyshev polynomial of degree Settings.Smoothing in
	// D⁻¹A for the interval [λ/30, λ], λ = 1.1 times the power-method
	// estimate of λ_max(D⁻¹A), before and after the coarse correction. Its
	// steps are matrix-vector products, split over goroutines; the
	// estimate costs six more products per level in New.
	Chebyshev
)

// String returns the name of the smoother.
func (s Smoother) String() string {
	switch s {
	case DefaultSmoother:
		return "default"
	case GaussSeidel:
		return "Gauss–Seidel"
	case Chebyshev:
		return "Chebyshev"
	}
	return fmt.Sprintf("Smoother(%d)", int(s))
}

// Settings controls New. Zero values select the defaults.
type Settings struct {
	// Theta is the strength threshold θ: the entry a_ij, i ≠ j, is a
	// strong connection when |a_ij| ≥ θ √(a_ii a_jj). Zero means
	// DefaultTheta (0.08); other values must lie in (0, 1).
	Theta float64

	// MaxLevels is the largest number of levels, the fine one included.
	// Zero means DefaultMaxLevels (20); negative values are invalid.
	MaxLevels int

	// CoarseSize stops the coarsening at the first level with at most this
	// many unknowns, which is solved by a dense Cholesky factorisation
	// (when it has at most 2000 unknowns; a larger last level, left by
	// MaxLevels, is smoothed instead). Zero means DefaultCoarseSize (100);
	// negative values are invalid.
	CoarseSize int

	// Smoothing is the number of smoothing steps before and after the
	// coarse correction on each level: Gauss–Seidel sweeps, or the degree
	// of the Chebyshev polynomial. Zero means DefaultSmoothing (1);
	// negative values are invalid.
	Smoothing int

	// Smoother selects the smoother. The zero value means GaussSeidel.
	Smoother Smoother
}

// resolve returns s with the defaults filled in, or an error wrapping
// sparse.ErrSettings.
func (s Settings) resolve() (Settings, error) {
	switch {
	case s.Theta == 0:
		s.Theta = DefaultTheta
	case !(s.Theta > 0 && s.Theta < 1):
		return s, fmt.Errorf("amg: %w: Theta = %g, want 0 (default) or a value in (0,1)", sparse.ErrSettings, s.Theta)
	}
	if s.MaxLevels == 0 {
		s.MaxLevels = DefaultMaxLevels
	} else if s.MaxLevels < 0 {
		return s, fmt.Errorf("amg: %w: MaxLevels = %d, want 0 (default) or positive", sparse.ErrSettings, s.MaxLevels)
	}
	if s.CoarseSize == 0 {
		s.CoarseSize = DefaultCoarseSize
	} else if s.CoarseSize < 0 {
		return s, fmt.Errorf("amg: %w: CoarseSize = %d, want 0 (default) or positive", sparse.ErrSettings, s.CoarseSize)
	}
	if s.Smoothing == 0 {
		s.Smoothing = DefaultSmoothing
	} else if s.Smoothing < 0 {
		return s, fmt.Errorf("amg: %w: Smoothing = %d, want 0 (default) or positive", sparse.ErrSettings, s.Smoothing)
	}
	switch s.Smoother {
	case DefaultSmoother:
		s.Smoother = GaussSeidel
	case GaussSeidel, Chebyshev:
	default:
		return s, fmt.Errorf("amg: %w: unknown %v", sparse.ErrSettings, s.Smoother)
	}
	return s, nil
}

// Hierarchy is a smoothed aggregation multigrid hierarchy built by New. Its
// Apply method is one V-cycle, a preconditioner for sparse.CG. A Hierarchy
// keeps the matrix it was built from (it does not copy it), which must not
// change while the Hierarchy is in use. Reset rebuilds a Hierarchy for
// another matrix in the memory of the old one.
type Hierarchy struct {
	levels   []level
	smoother Smoother
	sweeps   int
	team     team
	ws       workspace // scratch of the setup, kept for Reset

	// Kernels of the V-cycle, reused so that Apply does not allocate.
	kRes    residualKernel
	kUp     upperResidualKernel
	kMul    mulKernel
	kPro    prolongKernel
	kInit   chebInitKernel
	kStep   chebStepKernel
	kAdd    addKernel
	kCol    colourKernel
	kColRes colourResidualKernel
}

var _ sparse.Preconditioner = (*Hierarchy)(nil)

// level is one level of the hierarchy. Reset reuses the arrays of every
// field, also of the levels beyond the last one in use (kept in the
// capacity of Hierarchy.levels); only a on level 0 is the caller's.
type level struct {
	a       *sparse.CSR
	invDiag []float64 // 1/a_ii
	diagPos []int32   // position of a_ii in its row (sequential Gauss–Seidel only; else empty)
	p, r    *sparse.CSR
	chol    *cholesky // on a coarsest level that is solved exactly

	x, b, res []float64 // work vectors (x and b are the caller's on level 0)

	// Chebyshev smoother.
	d, dn    []float64
	invTheta float64
	c1, c2   []float64
	lmax     float64
	rho      float64 // the estimate of ρ(D⁻¹A_F) that gave ω for the prolongator

	// Multicolour Gauss–Seidel smoother (levels of more than colourRows
	// rows): the rows of colour c are colours.rows[colours.ptr[c]:colours.ptr[c+1]].
	colours *colouring

	// mem holds the storage of p, r, chol and colours, which are nil
	// where not in use, for Reset.
	mem struct {
		p, r    *sparse.CSR
		chol    *cholesky
		colours *colouring
	}
}

// colourCount returns the number of colours of the multicolour
// Gauss–Seidel smoother, 0 if the level does not use it.
func (lv *level) colourCount() int {
	if lv.colours == nil {
		return 0
	}
	return lv.colours.colours()
}

// New builds the smoothed aggregation hierarchy of the symmetric positive
// definite (or semi-definite, for a pure Neumann problem) matrix a. a is
// kept, not copied. Only its structure and values are checked, not its
// symmetry: a non-symmetric a gives a V-cycle that is not symmetric.
//
// Errors: sparse.ErrDims if a is nil or not square; the errors of
// a.Validate (sparse.ErrStructure, sparse.ErrIndex, sparse.ErrNotFinite
// for a NaN or infinite entry); an *sparse.EntryError wrapping
// sparse.ErrNotPositive for a diagonal entry that is missing, zero or
// negative, or for a coarsest matrix found indefinite; sparse.ErrSettings
// for invalid settings. Every message starts with "amg:".
func New(a *sparse.CSR, s Settings) (*Hierarchy, error) {
	h := new(Hierarchy)
	if err := h.Reset(a, s); err != nil {
		return nil, err
	}
	return h, nil
}

// Reset rebuilds h as New(a, s) would build it, bit for bit, for a caller
// that no longer needs the old hierarchy (an adaptive loop solving on a new
// mesh at each step): the arrays of the old levels and the scratch arrays
// of the setup, which h keeps, are reused where they are large enough, and
// replaced by arrays with half as much room again where not (see resize). a is kept, not copied,
// as by New; the old matrix is no longer referenced. The errors are those
// of New; on an error h holds no hierarchy (Levels returns 0, Apply takes
// only empty vectors) until a Reset succeeds, and it keeps its memory.
// A Reset must not run concurrently with Apply on the same h.
func (h *Hierarchy) Reset(a *sparse.CSR, s Settings) error {
	s, err := s.resolve()
	if err != nil {
		return err
	}
	if a == nil {
		return fmt.Errorf("amg: %w: nil matrix", sparse.ErrDims)
	}
	if a.Rows != a.Cols {
		return fmt.Errorf("amg: %w: matrix is %dx%d, want square", sparse.ErrDims, a.Rows, a.Cols)
	}
	if !valid(a) {
		if err := a.Validate(); err != nil {
			return fmt.Errorf("amg: %w", err)
		}
	}
	h.smoother, h.sweeps = s.Smoother, s.Smoothing
	levels := h.levels[:0]
	h.levels = levels
	if a.Rows == 0 {
		return nil
	}
	// old returns the storage of level l: the old level, or a zero one.
	old := func(l int) level {
		if l < cap(levels) {
			return levels[:l+1][l]
		}
		return level{}
	}
	ws := &h.ws
	// Independent sequential parts run concurrently with the rest of the
	// setup: the colouring of each multicolour level, and on every level
	// the power method with the aggregation. Each writes only its own
	// result, so the hierarchy does not depend on the scheduling.
	var bg sync.WaitGroup
	defer bg.Wait() // also on errors, before the results are dropped
	for l := 0; ; l++ {
		lv := old(l)
		lv.a, lv.rho, lv.p, lv.r, lv.chol, lv.colours = a, 0, nil, nil, nil, nil
		if err := newLevel(&lv, ws, l); err != nil {
			return err
		}
		n := a.Rows
		if h.multicolour(n) {
			if lv.mem.colours == nil {
				lv.mem.colours = new(colouring)
			}
			c, a, inv := lv.mem.colours, a, lv.invDiag
			lv.colours = c // written by colour only, read after bg.Wait
			bg.Go(func() { colour(c, a, inv) })
		}
		last := n <= s.CoarseSize || l == s.MaxLevels-1
		if !last {
			conn := &ws.conn
			strength(conn, a, ws.diag, s.Theta)
			var rho float64
			var power sync.WaitGroup
			power.Go(func() { rho = filteredRho(ws, a, ws.diag, lv.invDiag, conn) })
			agg, nagg := aggregate(a, conn.strong, ws)
			power.Wait()
			if nagg == 0 {
				last = true // only isolated nodes: no coarse space
			} else {
				p, err := prolongator(lv.mem.p, a, ws.diag, conn, agg, nagg, rho)
				if err != nil {
					return err
				}
				lv.mem.p = p
				r := transpose(lv.mem.r, p, ws)
				lv.mem.r = r
				c, err := galerkin(old(l+1).a, a, p, r, ws)
				if err != nil {
					return err
				}
				lv.p, lv.r, lv.rho = p, r, rho
				a = c
			}
		}
		if last && n <= maxDense {
			if lv.mem.chol, err = factor(lv.mem.chol, lv.a); err != nil {
				return fmt.Errorf("amg: level %d: %w", l, err)
			}
			lv.chol = lv.mem.chol
		} else if h.smoother == Chebyshev {
			lv.lmax = chebyshevSafety * powerRho(ws, lv.a, lv.a.Val, ws.diag, lv.invDiag, powerIterations)
			lv.invTheta, lv.c1, lv.c2 = chebyshevCoefficients(lv.lmax/chebyshevRatio, lv.lmax, h.sweeps)
		}
		levels = append(levels, lv)
		if last {
			break
		}
	}
	bg.Wait()
	h.levels = levels
	h.allocate()
	return nil
}

// valid reports whether a obeys the rules that a.Validate checks (see
// sparse.CSR), checking the rows in parallel; New calls the sequential
// a.Validate only when it does not, for the error.
func valid(a *sparse.CSR) bool {
	if a.Rows < 0 || a.Cols < 0 || a.Rows > math.MaxInt32 || a.Cols > math.MaxInt32 ||
		len(a.RowPtr) != a.Rows+1 || len(a.Col) != len(a.Val) || a.RowPtr[0] != 0 || int(a.RowPtr[a.Rows]) != len(a.Col) {
		return false
	}
	var bad atomic.Bool
	chunks(a.Rows, nil, func(_, lo, hi int) {
		for i := lo; i < hi; i++ {
			if a.RowPtr[i+1] < a.RowPtr[i] {
				bad.Store(true)
				return
			}
		}
	})
	if bad.Load() {
		return false
	}
	// The row offsets are now known to lie in [0, len(Col)].
	chunks(a.Rows, a.RowPtr, func(_, lo, hi int) {
		col, val := a.Col, a.Val
		for i := lo; i < hi; i++ {
			prev := int32(-1)
			for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
				c, v := col[k], val[k]
				if c <= prev || int(c) >= a.Cols || v-v != 0 { // v-v is NaN for NaN and ±Inf
					bad.Store(true)
					return
				}
				prev = c
			}
		}
	})
	return !bad.Load()
}

// newLevel checks the diagonal of lv.a and sets up the diagonal data of
// level l: lv.invDiag and lv.diagPos, and ws.diag. Rows are checked in
// parallel; of several bad rows the first is reported.
func newLevel(lv *level, ws *workspace, l int) error {
	a := lv.a
	ws.diag, lv.invDiag, lv.diagPos = resize(ws.diag, a.Rows), resize(lv.invDiag, a.Rows), resize(lv.diagPos, a.Rows)
	diag, invDiag, diagPos := ws.diag, lv.invDiag, lv.diagPos
	bad := make([]int, max(1, runtime.GOMAXPROCS(0))) // first bad row of each range
	for c := range bad {
		bad[c] = a.Rows
	}
	chunks(a.Rows, a.RowPtr, func(c, lo, hi int) {
		for i := lo; i < hi; i++ {
			k := a.Index(i, i)
			d := 0.0
			if k >= 0 {
				d = a.Val[k]
			}
			inv := 1 / d
			if !(d > 0) || math.IsInf(inv, 0) {
				bad[c] = i
				return
			}
			diag[i] = d
			invDiag[i] = inv
			diagPos[i] = int32(k)
		}
	})
	if i := slices.Min(bad); i < a.Rows {
		d := 0.0
		if k := a.Index(i, i); k >= 0 {
			d = a.Val[k]
		}
		what := "matrix"
		if l > 0 {
			what = fmt.Sprintf("coarse matrix of level %d (A not positive definite?)", l)
		}
		return fmt.Errorf("amg: %w", &sparse.EntryError{Row: i, Col: i,
			Err: fmt.Errorf("%w: diagonal entry of row %d of the %s is %g", sparse.ErrNotPositive, i, what, d)})
	}
	return nil
}

// allocate sets up the work vectors of every level, reusing their arrays.
func (h *Hierarchy) allocate() {
	for l := range h.levels {
		lv := &h.levels[l]
		n := lv.a.Rows
		if l > 0 {
			lv.x, lv.b = resize(lv.x, n), resize(lv.b, n)
		}
		if lv.chol != nil {
			lv.diagPos = lv.diagPos[:0]
			continue
		}
		lv.res = resize(lv.res, n)
		if lv.colours != nil || h.smoother == Chebyshev {
			lv.diagPos = lv.diagPos[:0]
		}
		if h.smoother == Chebyshev {
			lv.d, lv.dn = resize(lv.d, n), resize(lv.dn, n)
		}
	}
}

// multicolour reports whether a level of n rows is smoothed by
// multicolour Gauss–Seidel (see colourRows).
func (h *Hierarchy) multicolour(n int) bool {
	return h.smoother == GaussSeidel && n > colourRows
}

// Levels returns the number of levels, the fine one included (0 for an
// empty matrix).
func (h *Hierarchy) Levels() int { return len(h.levels) }

// Complexity returns the grid complexity, the sum of the numbers of
// unknowns of all levels divided by that of the fine level, and the
// operator complexity, the sum of the stored entries of all level matrices
// divided by that of the fine matrix. They measure the memory of the
// hierarchy and, roughly, the cost of a V-cycle relative to the fine level.
func (h *Hierarchy) Complexity() (grid, operator float64) {
	if len(h.levels) == 0 {
		return 0, 0
	}
	var n, nnz float64
	for _, lv := range h.levels {
		n += float64(lv.a.Rows)
		nnz += float64(lv.a.NNZ())
	}
	return n / float64(h.levels[0].a.Rows), nnz / float64(max(1, h.levels[0].a.NNZ()))
}
