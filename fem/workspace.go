package fem

import (
	"fmt"

	"github.com/posteriori-fem/posteriori/internal/amg"
	"github.com/posteriori-fem/posteriori/internal/spare"
)

// Workspace is storage for a sequence of systems on meshes of growing
// size, such as the steps of an adaptive loop. A system assembled by
// Workspace.Assemble takes over the arrays of the system the Workspace
// assembled before (matrix, load, assembly scratch); its multigrid
// hierarchy (System.Prepare with Multigrid) is rebuilt in the memory of
// the previous one; and its solves share one set of work vectors, instead
// of allocating new ones each time. New arrays have room for half as much
// again, so that the next, larger system fits too. The results are those
// of Assemble, System.Prepare and Prepared.Solve, bit for bit
// (TestWorkspaceSame).
//
// A Workspace pays where the systems keep about the same size (repeated
// solves on one mesh, say for a nonlinear or time-dependent problem): on
// a P1 matrix of 1e6 rows, rebuilding the multigrid hierarchy in the old
// one's memory allocated 0.8 MB instead of 453 MB, and took 327–382 ns/row
// against 333–388 for a fresh build on a quiet two-core machine (three
// runs each; internal/amg's BenchmarkNew); on a loaded machine, where
// fresh memory costs more, medians of 442 against 1,077 (six runs).
// On meshes that grow by a good factor at each step, arrays must be
// replaced often anyway, and the memory kept between systems adds to the
// peak; the adaptive loop of package adapt therefore does not use one
// (its Run documents the measurement).
//
// A system assembled in a Workspace, and whatever was prepared from it,
// must not be used once the next system has been assembled in the same
// Workspace (a Prepared's multigrid hierarchy is the Workspace's, rebuilt
// by the next Prepare). A Workspace is not safe for concurrent use. The zero value
// is ready to use.
type Workspace struct {
	i32  spare.Bin[int32]
	f64  spare.Bin[float64]
	last *System   // the system assembled last, whose arrays the next one takes
	cg   []float64 // CG's work vectors
	amg  *amg.Hierarchy
}

// Assemble is Assemble with w's storage. The system that w assembled
// before (and anything prepared from it) must not be used afterwards.
func (w *Workspace) Assemble(s *Space, p *Problem) (*System, error) {
	if w == nil {
		return nil, fmt.Errorf("fem: Workspace.Assemble: nil workspace: %w", ErrArgument)
	}
	if w.last != nil {
		w.i32.Give(w.last.A.RowPtr, w.last.A.Col)
		w.f64.Give(w.last.A.Val, w.last.B)
		w.last = nil
	}
	w.i32.Room, w.f64.Room = spare.Headroom, spare.Headroom
	sys, err := assemble(s, p, w)
	if err != nil {
		return nil, err
	}
	sys.work = w
	w.last = sys
	return sys, nil
}

// The allocation of assembly arrays: from w's bins, or new for a nil w.

func (w *Workspace) int32s(n int, zero bool) []int32 {
	switch {
	case w == nil:
		return make([]int32, n)
	case zero:
		return w.i32.TakeZero(n)
	}
	return w.i32.Take(n)
}

func (w *Workspace) float64s(n int, zero bool) []float64 {
	switch {
	case w == nil:
		return make([]float64, n)
	case zero:
		return w.f64.TakeZero(n)
	}
	return w.f64.Take(n)
}

// give returns scratch arrays to w's bins (nothing for a nil w).
func (w *Workspace) give(i32 [][]int32, f64 ...[]float64) {
	if w == nil {
		return
	}
	w.i32.Give(i32...)
	w.f64.Give(f64...)
}

// cgWork returns work vectors for CG on n unknowns, or nil for a nil w.
func (w *Workspace) cgWork(n int) []float64 {
	if w == nil {
		return nil
	}
	if cap(w.cg) < 4*n {
		w.cg = make([]float64, 4*n, 6*n)
	}
	return w.cg[:4*n]
}
