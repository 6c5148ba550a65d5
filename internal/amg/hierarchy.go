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
	DefaultCoarseSize = 300  // coarsening stops at or below this many unknowns
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
	// MaxLevels, is smoothed instead). Zero means DefaultCoarseSize (300);
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
// change while the Hierarchy is in use.
type Hierarchy struct {
	levels   []level
	smoother Smoother
	sweeps   int
	team     team

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

// level is one level of the hierarchy.
type level struct {
	a       *sparse.CSR
	diag    []float64 // a_ii (during New only)
	invDiag []float64 // 1/a_ii
	diagPos []int32   // position of a_ii in its row (Gauss–Seidel)
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
	colours colouring
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
	s, err := s.resolve()
	if err != nil {
		return nil, err
	}
	if a == nil {
		return nil, fmt.Errorf("amg: %w: nil matrix", sparse.ErrDims)
	}
	if a.Rows != a.Cols {
		return nil, fmt.Errorf("amg: %w: matrix is %dx%d, want square", sparse.ErrDims, a.Rows, a.Cols)
	}
	if !valid(a) {
		if err := a.Validate(); err != nil {
			return nil, fmt.Errorf("amg: %w", err)
		}
	}
	h := &Hierarchy{smoother: s.Smoother, sweeps: s.Smoothing}
	if a.Rows == 0 {
		return h, nil
	}
	// Independent sequential parts run concurrently with the rest of the
	// setup: the colouring of each multicolour level, and on every level
	// the power method with the aggregation. Each writes only its own
	// result, so the hierarchy does not depend on the scheduling.
	var bg sync.WaitGroup
	var colourings []*colouring
	defer bg.Wait() // also on errors, before the results are dropped
	for l := 0; ; l++ {
		lv, err := newLevel(a, l)
		if err != nil {
			return nil, err
		}
		n := a.Rows
		if h.multicolour(n) {
			c := new(colouring)
			colourings = append(colourings, c)
			a, inv := a, lv.invDiag
			bg.Go(func() { *c = colour(a, inv) })
		} else {
			colourings = append(colourings, nil)
		}
		last := n <= s.CoarseSize || l == s.MaxLevels-1
		if !last {
			conn := strength(a, lv.diag, s.Theta)
			var rho float64
			var power sync.WaitGroup
			power.Go(func() { rho = filteredRho(a, lv.diag, lv.invDiag, &conn) })
			agg, nagg := aggregate(a, conn.strong)
			power.Wait()
			if nagg == 0 {
				last = true // only isolated nodes: no coarse space
			} else {
				p, err := prolongator(a, lv.diag, &conn, agg, nagg, rho)
				if err != nil {
					return nil, err
				}
				r := transpose(p)
				c, err := galerkin(a, p, r)
				if err != nil {
					return nil, err
				}
				lv.p, lv.r, lv.rho = p, r, rho
				a = c
			}
		}
		if last && n <= maxDense {
			if lv.chol, err = factor(lv.a); err != nil {
				return nil, fmt.Errorf("amg: level %d: %w", l, err)
			}
		}
		h.levels = append(h.levels, lv)
		if last {
			break
		}
	}
	bg.Wait()
	for l, c := range colourings {
		if c != nil {
			h.levels[l].colours = *c
		}
	}
	h.allocate()
	return h, nil
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

// newLevel checks the diagonal of a and sets up the diagonal data of
// level l. Rows are checked in parallel; of several bad rows the first is
// reported.
func newLevel(a *sparse.CSR, l int) (level, error) {
	lv := level{a: a, diag: make([]float64, a.Rows), invDiag: make([]float64, a.Rows), diagPos: make([]int32, a.Rows)}
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
			lv.diag[i] = d
			lv.invDiag[i] = inv
			lv.diagPos[i] = int32(k)
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
		return lv, fmt.Errorf("amg: %w", &sparse.EntryError{Row: i, Col: i,
			Err: fmt.Errorf("%w: diagonal entry of row %d of the %s is %g", sparse.ErrNotPositive, i, what, d)})
	}
	return lv, nil
}

// allocate sets up the smoother data and the work vectors of every level.
func (h *Hierarchy) allocate() {
	for l := range h.levels {
		lv := &h.levels[l]
		n := lv.a.Rows
		diag := lv.diag
		lv.diag = nil // not needed by Apply
		if l > 0 {
			lv.x, lv.b = make([]float64, n), make([]float64, n)
		}
		if lv.chol != nil {
			lv.diagPos = nil
			continue
		}
		lv.res = make([]float64, n)
		if lv.colours.colours() > 0 {
			lv.diagPos = nil
		}
		if h.smoother == Chebyshev {
			lv.d, lv.dn = make([]float64, n), make([]float64, n)
			lv.lmax = chebyshevSafety * powerRho(lv.a, lv.a.Val, diag, lv.invDiag, powerIterations)
			lv.diagPos = nil
			lv.invTheta, lv.c1, lv.c2 = chebyshevCoefficients(lv.lmax/chebyshevRatio, lv.lmax, h.sweeps)
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
