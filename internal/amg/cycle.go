package amg

import (
	"fmt"
	"runtime"
	"sync"

	"github.com/posteriori-fem/posteriori/internal/parallel"
)

// parallelRows is the row count above which a step of the V-cycle is split
// over goroutines, and minRowsPerWorker the least share of one goroutine;
// they match sparse.CSR.MulVec.
const (
	parallelRows     = 20000
	minRowsPerWorker = 10000
)

// kernel is a row-parallel step of the V-cycle: rows(lo, hi) computes rows
// lo..hi-1 of its output, each independently of how rows are split.
type kernel interface {
	rows(lo, hi int)
}

// team runs kernels over row ranges on up to GOMAXPROCS goroutines without
// allocating: the goroutine bodies are closures built once (a go statement
// calling an existing func value with no arguments allocates nothing), and
// the kernel and the row bounds are passed through the team's fields. A
// team runs one kernel at a time.
type team struct {
	wg     sync.WaitGroup
	k      kernel
	bounds []int
	fns    []func()
}

// run calls k.rows over [0, n) split into ranges balanced by the row
// offsets rowPtr[0..n] (by rows when rowPtr is nil; rowPtr[0] need not be
// zero), and waits.
func (t *team) run(k kernel, n int, rowPtr []int32) {
	nw := min(runtime.GOMAXPROCS(0), n/minRowsPerWorker)
	if n <= parallelRows || nw < 2 {
		k.rows(0, n)
		return
	}
	if len(t.fns) < nw {
		t.grow(nw) // only when GOMAXPROCS grows beyond any earlier value
	}
	if rowPtr == nil {
		parallel.Even(t.bounds, nw, n)
	} else {
		parallel.ByWeight(t.bounds, nw, rowPtr[:n+1])
	}
	t.k = k
	t.wg.Add(nw - 1)
	for w := 1; w < nw; w++ {
		go t.fns[w]()
	}
	k.rows(0, t.bounds[1])
	t.wg.Wait()
	t.k = nil
}

// grow makes room for nw goroutines.
func (t *team) grow(nw int) {
	t.bounds = make([]int, nw+1)
	for w := len(t.fns); w < nw; w++ {
		t.fns = append(t.fns, func() {
			t.k.rows(t.bounds[w], t.bounds[w+1])
			t.wg.Done()
		})
	}
}

// Apply sets dst = M⁻¹ r, where M⁻¹ is one V-cycle for A x = r started from
// x = 0 (see the package documentation). It is a symmetric positive
// definite linear map when A is (positive semi-definite when A is), so it
// can precondition CG.
//
// Apply does not allocate: the work vectors of every level are allocated
// by New, and the goroutines of the row-parallel steps are started from
// closures built once. Results are bit-identical whatever GOMAXPROCS is.
// Apply uses the Hierarchy's work vectors, so a Hierarchy must not be used
// by several goroutines at once. It panics if len(dst) or len(r) differs
// from the size of A, or if dst and r share their first element.
func (h *Hierarchy) Apply(dst, r []float64) {
	if len(h.levels) == 0 {
		if len(dst) != 0 || len(r) != 0 {
			panic(fmt.Sprintf("amg: Apply: len(dst) = %d, len(r) = %d, want 0", len(dst), len(r)))
		}
		return
	}
	n := h.levels[0].a.Rows
	if len(dst) != n || len(r) != n {
		panic(fmt.Sprintf("amg: Apply: len(dst) = %d, len(r) = %d, want %d", len(dst), len(r), n))
	}
	if n > 0 && &dst[0] == &r[0] {
		panic("amg: Apply: dst aliases r")
	}
	h.cycle(0, dst, r)
}

// Len returns the number of unknowns, so that sparse.CG can check it.
func (h *Hierarchy) Len() int {
	if len(h.levels) == 0 {
		return 0
	}
	return h.levels[0].a.Rows
}

// cycle sets x to the V-cycle approximation of A_l⁻¹ b on level l.
func (h *Hierarchy) cycle(l int, x, b []float64) {
	lv := &h.levels[l]
	if lv.chol != nil {
		lv.chol.solve(x, b)
		return
	}
	coarse := lv.p != nil
	h.pre(lv, x, b, coarse)
	if coarse {
		next := &h.levels[l+1]
		h.kMul = mulKernel{m: lv.r, x: lv.res, y: next.b}
		h.team.run(&h.kMul, lv.r.Rows, lv.r.RowPtr)
		h.cycle(l+1, next.x, next.b)
		h.kPro = prolongKernel{p: lv.p, xc: next.x, x: x}
		h.team.run(&h.kPro, lv.p.Rows, lv.p.RowPtr)
	}
	h.post(lv, x, b)
}

// pre applies the pre-smoother to A x = b from x = 0 and, if res, leaves
// the residual b − A x in lv.res.
func (h *Hierarchy) pre(lv *level, x, b []float64, res bool) {
	a, m := lv.a, h.sweeps
	switch h.smoother {
	case GaussSeidel:
		if nc := lv.colourCount(); nc > 0 {
			for k := range m {
				for c := range nc {
					mode := sweepFull
					if k == 0 {
						mode = sweepZero
						if c == 0 {
							mode = sweepFirst
						}
					}
					h.colourSweep(lv, c, x, b, mode)
				}
			}
			if !res {
				return
			}
			if m == 1 {
				h.kColRes = colourResidualKernel{c: lv.colours, x: x, r: lv.res}
				h.team.run(&h.kColRes, a.Rows, lv.colours.m.RowPtr)
			} else {
				h.kRes = residualKernel{a: a, x: x, b: b, r: lv.res}
				h.team.run(&h.kRes, a.Rows, a.RowPtr)
			}
			return
		}
		gsForwardZero(a, lv.diagPos, lv.invDiag, x, b)
		for range m - 1 {
			gsForward(a, lv.diagPos, lv.invDiag, x, b)
		}
		if !res {
			return
		}
		if m == 1 {
			h.kUp = upperResidualKernel{a: a, diagPos: lv.diagPos, x: x, r: lv.res}
			h.team.run(&h.kUp, a.Rows, a.RowPtr)
		} else {
			h.kRes = residualKernel{a: a, x: x, b: b, r: lv.res}
			h.team.run(&h.kRes, a.Rows, a.RowPtr)
		}
	case Chebyshev:
		d, dn := lv.d, lv.dn
		h.kInit = chebInitKernel{a: a, invDiag: lv.invDiag, b: b, d: d, invTheta: lv.invTheta, zeroX: true}
		h.team.run(&h.kInit, a.Rows, nil)
		steps := m - 1 // steps with a product; the last is an update, or a step if res
		if res {
			steps = m
		}
		for k := range steps {
			rIn := lv.res
			if k == 0 {
				rIn = b
			}
			h.kStep = chebStepKernel{a: a, invDiag: lv.invDiag, x: x, rIn: rIn, r: lv.res, d: d, dn: dn,
				c1: lv.c1[k], c2: lv.c2[k], zeroX: k == 0, last: k == m-1}
			h.team.run(&h.kStep, a.Rows, a.RowPtr)
			d, dn = dn, d
		}
		if !res {
			if m == 1 {
				copy(x, d)
			} else {
				h.kAdd = addKernel{x: x, d: d}
				h.team.run(&h.kAdd, a.Rows, nil)
			}
		}
	}
}

// post applies the post-smoother to A x = b from the current x: the
// adjoint of pre (backward Gauss–Seidel), or the same Chebyshev
// polynomial, which is self-adjoint.
func (h *Hierarchy) post(lv *level, x, b []float64) {
	a, m := lv.a, h.sweeps
	switch h.smoother {
	case GaussSeidel:
		if nc := lv.colourCount(); nc > 0 {
			for range m {
				for c := nc - 1; c >= 0; c-- {
					h.colourSweep(lv, c, x, b, sweepFull)
				}
			}
			return
		}
		for range m {
			gsBackward(a, lv.diagPos, lv.invDiag, x, b)
		}
	case Chebyshev:
		d, dn := lv.d, lv.dn
		h.kInit = chebInitKernel{a: a, invDiag: lv.invDiag, x: x, b: b, r: lv.res, d: d, invTheta: lv.invTheta, residualToo: m > 1}
		h.team.run(&h.kInit, a.Rows, a.RowPtr)
		for k := range m - 1 {
			h.kStep = chebStepKernel{a: a, invDiag: lv.invDiag, x: x, rIn: lv.res, r: lv.res, d: d, dn: dn,
				c1: lv.c1[k], c2: lv.c2[k]}
			h.team.run(&h.kStep, a.Rows, a.RowPtr)
			d, dn = dn, d
		}
		h.kAdd = addKernel{x: x, d: d}
		h.team.run(&h.kAdd, a.Rows, nil)
	}
}

// colourSweep runs colour c of a multicolour Gauss–Seidel sweep on level
// lv (see colourKernel for the modes).
func (h *Hierarchy) colourSweep(lv *level, c int, x, b []float64, mode int) {
	lo, hi := int(lv.colours.ptr[c]), int(lv.colours.ptr[c+1])
	h.kCol = colourKernel{c: lv.colours, lo: lo, hi: hi, x: x, b: b, mode: mode}
	var rowPtr []int32 // balance by entries, unless no entry is read
	if mode != sweepFirst {
		rowPtr = lv.colours.m.RowPtr[lo : hi+1]
	}
	h.team.run(&h.kCol, hi-lo, rowPtr)
}
