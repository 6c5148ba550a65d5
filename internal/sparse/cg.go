package sparse

import (
	"fmt"
	"math"
	"runtime"
	"sync"

	"github.com/posteriori-fem/posteriori/internal/parallel"
)

// Operator is a square linear operator y = A x, as CG needs it. *CSR
// implements it; so can matrix-free operators. MulVec must write every
// element of dst and must not retain the slices.
type Operator interface {
	MulVec(dst, x []float64)
	Dims() (r, c int)
}

// DefaultTol is the relative residual tolerance CG uses when
// CGSettings.Tol is zero.
const DefaultTol = 1e-10

// CGSettings controls CG. The zero value selects the defaults.
type CGSettings struct {
	// Tol is the relative residual tolerance: CG stops once
	// ||b - A x||₂ <= Tol ||b||₂. Zero means DefaultTol (1e-10); any other
	// value must lie in the open interval (0, 1).
	//
	// Rounding bounds the attainable relative residual from below. The
	// residual of a stored x is computed with an error of up to
	//
	//	φ₀ = ‖ γ_{mᵢ+1} (|b| + |A| |x|)ᵢ ‖₂ ≤ γ_{m+1} (1 + √m κ₂(A)) ‖b‖₂,
	//	γ_j = j u / (1 − j u),   u = 2⁻⁵³,
	//
	// with mᵢ the entries stored in row i, m their maximum and
	// κ₂(A) = ‖A‖₂ ‖A⁻¹‖₂ (the inequality uses ‖|A|‖₂ ≤ ‖A‖_∞ ≤ √m ‖A‖₂
	// for symmetric A and ‖x‖₂ ≤ ‖A⁻¹‖₂ ‖b‖₂), so no test can resolve a
	// relative residual much below φ₀ / ‖b‖₂, a floor that grows like
	// u κ(A). Besides, the recursively updated residual of CG drifts from
	// the true one, by O(u) ‖|A| |x|‖ per iteration near the solution and
	// by up to O(k u κ(A)) relative after k iterations; CG resets the
	// drift by residual replacement, and after a replacement it compares
	// the true residual again as soon as the recursive one has halved.
	// The rounding level after k iterations since the last replacement is
	//
	//	φ_k = ‖ γ_{mᵢ+1+k} (|b| + |A| |x|)ᵢ ‖₂.
	//
	// When the true residual, still above Tol, does not decrease over two
	// replacements in a row, CG stops: at the floor (CGResult.AtFloor and
	// Converged, no error) if it is at most φ_k, otherwise with
	// ErrNotConverged. In TestCGFloor (1D stiffness matrices with
	// κ₂ = 2e9 to 6e15, Jacobi) CG stopped at 0.09 to 0.13 times φ_k, at
	// 0.6 to 1.2 times the residual of a Cholesky solution; on the
	// adaptive P2 mesh of a two-material fin with 45,734 DOFs (package
	// adapt, TestFinDefaults) from zero at 1.37e-10 = 0.06 φ_k / ‖b‖₂.
	// φ needs the entries of A, so for an operator other than *CSR a
	// stagnation is always ErrNotConverged.
	//
	// References (from memory):
	//   - N. J. Higham, Accuracy and Stability of Numerical Algorithms,
	//     2nd ed., SIAM, 2002: §3.5 (fl(A x) = (A + ΔA) x, |ΔA| ≤ γ_m |A|)
	//     and §7.1 (normwise backward error, Rigal and Gaches).
	//   - A. Greenbaum, Estimating the attainable accuracy of recursively
	//     computed residual methods, SIAM J. Matrix Anal. Appl. 18 (1997)
	//     535–551.
	//   - H. A. van der Vorst and Q. Ye, Residual replacement strategies
	//     for Krylov subspace iterative methods for the convergence of true
	//     residuals, SIAM J. Sci. Comput. 22 (2000) 835–852.
	Tol float64

	// MaxIter is the largest number of iterations (products with A
	// inside the iteration). Zero means 10n + 100 for n unknowns, which in
	// practice only guards against stagnation; large systems should set a
	// limit suited to their conditioning. Negative values are invalid.
	MaxIter int

	// EnergyTol, if positive, also stops the iteration as soon as the
	// estimated energy norm of the error, ‖x − x_k‖_A, is at most EnergyTol.
	// The estimate is the delayed Hestenes–Stiefel sum
	//
	//	‖x − x_{k−d}‖²_A ≈ Σ_{j=k−d}^{k−1} α_j (r_j · M⁻¹r_j),   d = EnergyDelay,
	//
	// a lower bound that is tight once the convergence is steady (Strakoš
	// and Tichý, Electron. Trans. Numer. Anal. 13 (2002) 56–80). It applies
	// from iteration d on; the iterate returned is x_k, whose error is
	// smaller than that of x_{k−d} but, the estimate being a lower bound,
	// not surely below EnergyTol (up to 1.18 times it in the tests).
	EnergyTol float64

	// Work, if it holds at least 4n values, is used for CG's work vectors
	// instead of new ones (its values on entry do not matter), so that a
	// sequence of solves can keep one buffer; shorter, it is ignored.
	Work []float64
}

// EnergyDelay is the delay d of the energy-norm error estimate of CG.
const EnergyDelay = 4

// floorStalls is the number of residual replacements in a row after which
// a true residual that stays within the rounding level stops CG at the
// floor (see CGSettings.Tol).
const floorStalls = 2

// resolve returns the effective tolerance and iteration limit for n
// unknowns.
func (s CGSettings) resolve(n int) (tol float64, maxIter int, err error) {
	tol, maxIter = s.Tol, s.MaxIter
	if tol == 0 {
		tol = DefaultTol
	} else if !(tol > 0 && tol < 1) {
		return 0, 0, fmt.Errorf("%w: Tol = %g, want 0 (default) or a value in (0,1)", ErrSettings, s.Tol)
	}
	if !(s.EnergyTol >= 0) || math.IsInf(s.EnergyTol, 0) {
		return 0, 0, fmt.Errorf("%w: EnergyTol = %g, want a finite value ≥ 0", ErrSettings, s.EnergyTol)
	}
	if maxIter == 0 {
		maxIter = 10*n + 100
	} else if maxIter < 0 {
		return 0, 0, fmt.Errorf("%w: MaxIter = %d, want 0 (default) or positive", ErrSettings, s.MaxIter)
	}
	return tol, maxIter, nil
}

// CGResult reports the outcome of CG.
type CGResult struct {
	// Iterations is the number of CG iterations performed, each costing one
	// product with A and one preconditioner application. It is 0 if the
	// initial guess already met the tolerance.
	Iterations int

	// Residual is the final relative residual ||b - A x||₂ / ||b||₂,
	// recomputed from the true residual of the returned x (not the
	// recursively updated one). It is +Inf if x is not finite after a
	// breakdown, and 0 when b = 0.
	Residual float64

	// Converged reports whether Residual <= Tol, the energy estimate met
	// EnergyTol, or CG stopped at the rounding floor (AtFloor).
	Converged bool

	// AtFloor reports whether CG stopped at the rounding floor: the true
	// residual, above Tol, did not decrease over two residual replacements
	// in a row and is within the rounding level φ_k (see CGSettings.Tol).
	AtFloor bool

	// Floor is the rounding level φ_k / ‖b‖₂ of the returned x (see
	// CGSettings.Tol) if CG computed it, at a stagnation, and 0 otherwise.
	Floor float64

	// EnergyError is the last energy-norm error estimate (see
	// CGSettings.EnergyTol), or 0 if fewer than EnergyDelay iterations ran
	// since the last restart.
	EnergyError float64
}

// CG solves A x = b by the preconditioned conjugate gradient method, for a
// symmetric positive definite operator A and preconditioner pre (nil means
// Identity). x holds the initial guess on entry and the solution on return.
//
// The iteration stops when the recursively updated residual satisfies
// ||r_k||₂ <= Tol ||b||₂; the true residual b - A x_k is then recomputed,
// and if it fails the test CG restarts from it (residual replacement)
// rather than report a false convergence. A true residual that stays above
// Tol but within the rounding level over two replacements in a row stops CG
// at the floor, with no error (see CGSettings.Tol). If b = 0 then x is set
// to 0 and CG returns at once with 0 iterations.
//
// CG allocates three work vectors of length n per call (four unless pre is
// Identity; none with CGSettings.Work), for n > 65536 and GOMAXPROCS > 1 also a few small objects for
// the goroutines of its vector operations, and nothing per iteration; any
// allocation per iteration comes from the operator or the preconditioner.
// Inner products are summed in blocks of 8192 elements (four interleaved
// partial sums within a block, see dot) and the block sums in block order;
// for n > 65536 the blocks, the vector updates and, for a *CSR operator,
// the product with A (fused with the inner product p·Ap) are split over up
// to GOMAXPROCS goroutines, whole blocks each, so results are
// reproducible and do not depend on GOMAXPROCS.
//
// Errors: ErrDims if A is not square or b, x or pre (if it has a
// Len() int method) do not match it; ErrSettings for invalid settings;
// ErrNotFinite if b or the initial x hold a NaN or infinity (x is then left
// untouched); ErrNotConverged when MaxIter iterations pass before the
// tolerance is met (as for an inconsistent singular system, whose residual
// keeps its component along the null space), or the true residual stops
// decreasing above the rounding level (an inexact or changing operator;
// in both cases the result describes the last iterate, left in x); and
// ErrBreakdown when p·Ap <= 0, r·M⁻¹r <= 0 or a NaN or infinity appears,
// meaning A or pre is not SPD or the data are bad. After a breakdown x holds the last iterate; it is
// finite unless the iteration overflowed, in which case Residual is +Inf.
func CG(a Operator, b, x []float64, pre Preconditioner, s CGSettings) (_ CGResult, err error) {
	defer inContext("CG", &err)
	var res CGResult
	n, c := a.Dims()
	if n != c {
		return res, fmt.Errorf("%w: CG needs a square operator, have %dx%d", ErrDims, n, c)
	}
	if len(b) != n || len(x) != n {
		return res, fmt.Errorf("%w: operator is %dx%d but len(b) = %d, len(x) = %d", ErrDims, n, n, len(b), len(x))
	}
	if pre == nil {
		pre = Identity{}
	}
	if l, ok := pre.(interface{ Len() int }); ok && l.Len() != n {
		return res, fmt.Errorf("%w: preconditioner has size %d, operator %d", ErrDims, l.Len(), n)
	}
	tol, maxIter, err := s.resolve(n)
	if err != nil {
		return res, err
	}
	if i := firstNonFinite(b); i >= 0 {
		return res, fmt.Errorf("%w: b[%d] = %g", ErrNotFinite, i, b[i])
	}
	if i := firstNonFinite(x); i >= 0 {
		return res, fmt.Errorf("%w: initial guess x[%d] = %g", ErrNotFinite, i, x[i])
	}
	bnorm := math.Sqrt(blockDot(b, b))
	if bnorm == 0 {
		clear(x)
		res.Converged = true
		return res, nil
	}
	if math.IsInf(bnorm, 0) {
		return res, fmt.Errorf("%w: ||b|| overflows", ErrNotFinite)
	}
	thresh := tol * bnorm

	_, ident := pre.(Identity)
	if _, ok := pre.(*Identity); ok {
		ident = true
	}
	var r, q, p, z []float64
	if len(s.Work) >= 4*n {
		r, q, p, z = s.Work[:n:n], s.Work[n:2*n:2*n], s.Work[2*n:3*n:3*n], s.Work[3*n:4*n:4*n]
	} else {
		r, q, p, z = make([]float64, n), make([]float64, n), make([]float64, n), nil
		if !ident {
			z = make([]float64, n)
		}
	}
	if ident {
		z = r
	}
	var v *vecOps // nil: the vector operations run on this goroutine
	if n > vecParallel && runtime.GOMAXPROCS(0) > 1 {
		v = newVecOps(a, n)
	}

	rr := trueResidual(a, b, x, r, q)
	if math.IsNaN(rr) || math.IsInf(rr, 0) {
		res.Residual, res.Converged = finalResidual(a, b, x, r, q, bnorm, thresh)
		return res, fmt.Errorf("%w: initial residual not finite", ErrBreakdown)
	}
	if math.Sqrt(rr) <= thresh {
		res.Residual = math.Sqrt(rr) / bnorm
		res.Converged = true
		return res, nil
	}
	lastTrue := math.Sqrt(rr) // the smallest true residual so far
	stalls := 0               // residual replacements in a row without progress
	check := thresh           // the recursive residual at which to compute the true one
	replaced := 0             // the iteration of the last residual replacement

	var rz float64 // r·z for the current residual
	restart := true
	var hs [EnergyDelay]float64 // the last α_j (r_j·z_j), for the energy estimate
	nhs := 0
	for {
		// New search direction p = z + beta p (beta = 0 on a restart).
		rzNew := rr
		if !ident {
			pre.Apply(z, r)
			rzNew = v.dot(r, z)
		}
		if !(rzNew > 0) || math.IsInf(rzNew, 0) {
			res.Residual, res.Converged = finalResidual(a, b, x, r, q, bnorm, thresh)
			return res, fmt.Errorf("%w at iteration %d: r·M⁻¹r = %g (preconditioner not SPD or bad data)", ErrBreakdown, res.Iterations, rzNew)
		}
		if restart {
			v.xpby(p, z, 0)
			restart = false
		} else {
			v.xpby(p, z, rzNew/rz)
		}
		rz = rzNew

		if res.Iterations >= maxIter {
			res.Residual, res.Converged = finalResidual(a, b, x, r, q, bnorm, thresh)
			return res, fmt.Errorf("%w: %d iterations reached, relative residual %.3g > Tol %.3g",
				ErrNotConverged, res.Iterations, res.Residual, tol)
		}

		pq := v.mulDot(a, q, p)
		if !(pq > 0) || math.IsInf(pq, 0) {
			res.Residual, res.Converged = finalResidual(a, b, x, r, q, bnorm, thresh)
			return res, fmt.Errorf("%w at iteration %d: p·Ap = %g (operator not SPD or bad data)", ErrBreakdown, res.Iterations, pq)
		}
		alpha := rz / pq
		rr = v.update(x, r, p, q, alpha)
		res.Iterations++
		if math.IsNaN(rr) || math.IsInf(rr, 0) {
			res.Residual, res.Converged = finalResidual(a, b, x, r, q, bnorm, thresh)
			return res, fmt.Errorf("%w at iteration %d: residual not finite", ErrBreakdown, res.Iterations)
		}
		hs[nhs%EnergyDelay] = alpha * rz
		nhs++
		if nhs >= EnergyDelay {
			e2 := 0.0
			for _, v := range hs {
				e2 += v
			}
			res.EnergyError = math.Sqrt(e2)
			if s.EnergyTol > 0 && res.EnergyError <= s.EnergyTol {
				res.Residual, _ = finalResidual(a, b, x, r, q, bnorm, thresh)
				res.Converged = true
				return res, nil
			}
		}
		if math.Sqrt(rr) > check {
			continue
		}
		// The recursive residual meets Tol, or has halved since the last
		// replacement: compare with the true one.
		rr = trueResidual(a, b, x, r, q)
		rn := math.Sqrt(rr)
		if rn <= thresh {
			res.Residual = rn / bnorm
			res.Converged = true
			return res, nil
		}
		if rn < lastTrue {
			lastTrue, stalls = rn, 0
		} else {
			// No progress since the last residual replacement.
			stalls++
			phi, ok := roundingLevel(a, b, x, res.Iterations-replaced)
			res.Residual, res.Floor = rn/bnorm, phi/bnorm
			switch {
			case !ok:
				return res, fmt.Errorf("%w: stagnated after %d iterations at relative residual %.3g > Tol %.3g",
					ErrNotConverged, res.Iterations, res.Residual, tol)
			case !(rn <= phi):
				return res, fmt.Errorf("%w: stagnated after %d iterations at relative residual %.3g > Tol %.3g, above the rounding level %.3g",
					ErrNotConverged, res.Iterations, res.Residual, tol, res.Floor)
			case stalls >= floorStalls:
				res.Converged, res.AtFloor = true, true
				return res, nil
			}
		}
		// Replace the residual; check again once the recursive residual
		// has halved, or met Tol.
		check, replaced = max(thresh, rn/2), res.Iterations
		restart = true
		nhs = 0
	}
}

// finalResidual recomputes the true residual of x (into r, with q as
// scratch) and returns the relative residual, +Inf if it is not finite, and
// whether it meets the threshold.
func finalResidual(a Operator, b, x, r, q []float64, bnorm, thresh float64) (rel float64, ok bool) {
	rn := math.Sqrt(trueResidual(a, b, x, r, q))
	if math.IsNaN(rn) || math.IsInf(rn, 0) {
		return math.Inf(1), false
	}
	return rn / bnorm, rn <= thresh
}

// trueResidual sets r = b - A x, using q as scratch, and returns ||r||²
// (summed by blocks, like vecOps.dot).
func trueResidual(a Operator, b, x, r, q []float64) float64 {
	a.MulVec(q, x)
	q = q[:len(b)]
	r = r[:len(b)]
	for i, bi := range b {
		r[i] = bi - q[i]
	}
	return blockDot(r, r)
}

// dot returns x·y. It keeps four partial sums, over the indices ≡ 0, 1, 2,
// 3 (mod 4), and adds them as (s0+s1)+(s2+s3) followed by the tail, which
// shortens the floating point dependency chain fourfold. The order is fixed,
// so the result is deterministic.
func dot(x, y []float64) float64 {
	y = y[:len(x)]
	var s0, s1, s2, s3 float64
	i := 0
	for ; i+4 <= len(x); i += 4 {
		s0 += x[i] * y[i]
		s1 += x[i+1] * y[i+1]
		s2 += x[i+2] * y[i+2]
		s3 += x[i+3] * y[i+3]
	}
	s := (s0 + s1) + (s2 + s3)
	for ; i < len(x); i++ {
		s += x[i] * y[i]
	}
	return s
}

// update sets x += alpha p and r -= alpha q and returns the new r·r, summed
// like dot.
func update(x, r, p, q []float64, alpha float64) float64 {
	n := len(p)
	x, r, q = x[:n], r[:n], q[:n]
	var s0, s1, s2, s3 float64
	i := 0
	for ; i+4 <= n; i += 4 {
		x[i] += alpha * p[i]
		x[i+1] += alpha * p[i+1]
		x[i+2] += alpha * p[i+2]
		x[i+3] += alpha * p[i+3]
		r0 := r[i] - alpha*q[i]
		r1 := r[i+1] - alpha*q[i+1]
		r2 := r[i+2] - alpha*q[i+2]
		r3 := r[i+3] - alpha*q[i+3]
		r[i], r[i+1], r[i+2], r[i+3] = r0, r1, r2, r3
		s0 += r0 * r0
		s1 += r1 * r1
		s2 += r2 * r2
		s3 += r3 * r3
	}
	s := (s0 + s1) + (s2 + s3)
	for ; i < n; i++ {
		x[i] += alpha * p[i]
		ri := r[i] - alpha*q[i]
		r[i] = ri
		s += ri * ri
	}
	return s
}

// firstNonFinite returns the index of the first NaN or infinite element of
// v, or -1.
func firstNonFinite(v []float64) int {
	for i, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return i
		}
	}
	return -1
}

// Vector operations of CG on blocks (see CG): vecBlock is the length of a
// block, and vectors longer than vecParallel are processed by several
// goroutines, each given whole blocks, at least vecParallel/2 elements.
const (
	vecBlock    = 1 << 13
	vecParallel = 1 << 16
)

// blockDot returns x·y summed by blocks of vecBlock elements: the block
// sums (each computed by dot) are added in block order. For
// len(x) ≤ vecBlock it is dot(x, y).
func blockDot(x, y []float64) float64 {
	s := 0.0
	for lo := 0; lo < len(x); lo += vecBlock {
		hi := min(len(x), lo+vecBlock)
		s += dot(x[lo:hi], y[lo:hi])
	}
	return s
}

// Operations of vecOps.
const (
	opDot = iota
	opXpby
	opMulDot
	opUpdate
)

// vecOps runs the vector operations of one CG call block by block, on
// the calling goroutine and on workers whose goroutine bodies are
// closures built once, so that an iteration allocates nothing. Each block
// is handled by one goroutine and its sum is stored in sums; the sums are
// then added in block order, so the results do not depend on the number
// of goroutines. A nil *vecOps does the same on the calling goroutine
// alone, without allocating (vectors of at most vecParallel elements, or
// GOMAXPROCS = 1).
type vecOps struct {
	m    *CSR // the operator, if it is a CSR (fused product), else nil
	n    int
	sums []float64 // per block

	nw  int // goroutines, the caller's included
	wg  sync.WaitGroup
	fns []func()
	// The blocks of worker w are even[w]..even[w+1]-1, balanced by
	// elements, or for the product with m byNNZ[w]..byNNZ[w+1]-1,
	// balanced by the entries of m.
	even, byNNZ []int

	// The current operation and its operands.
	op               int
	x, y, r, p, q, z []float64
	alpha            float64
}

// newVecOps prepares the vector operations for n unknowns and the
// operator a.
func newVecOps(a Operator, n int) *vecOps {
	nb := (n + vecBlock - 1) / vecBlock
	v := &vecOps{n: n, sums: make([]float64, nb)}
	v.m, _ = a.(*CSR)
	v.nw = max(1, min(runtime.GOMAXPROCS(0), n/(vecParallel/2), nb))
	v.even = parallel.Even(nil, v.nw, nb)
	v.byNNZ = v.even
	if v.m != nil {
		// Balanced by the entries of m at the first row of each block.
		blockPtr := make([]int32, nb+1)
		for b := range blockPtr {
			blockPtr[b] = v.m.RowPtr[min(n, b*vecBlock)]
		}
		v.byNNZ = parallel.ByWeight(nil, v.nw, blockPtr)
	}
	for w := 1; w < v.nw; w++ {
		v.fns = append(v.fns, func() {
			v.blocks(w)
			v.wg.Done()
		})
	}
	return v
}

// run performs the current operation on all blocks and returns the sum
// of the block sums (zero for an operation without sums).
func (v *vecOps) run() float64 {
	v.wg.Add(v.nw - 1)
	for _, f := range v.fns {
		go f()
	}
	v.blocks(0)
	v.wg.Wait()
	s := 0.0
	for _, b := range v.sums {
		s += b
	}
	return s
}

// blocks performs the current operation on the blocks of worker w.
func (v *vecOps) blocks(w int) {
	bounds := v.even
	if v.op == opMulDot {
		bounds = v.byNNZ
	}
	for b := bounds[w]; b < bounds[w+1]; b++ {
		lo, hi := b*vecBlock, min(v.n, (b+1)*vecBlock)
		switch v.op {
		case opDot:
			v.sums[b] = dot(v.x[lo:hi], v.y[lo:hi])
		case opXpby:
			v.sums[b] = 0
			p, z := v.p[lo:hi], v.z[lo:hi]
			z = z[:len(p)]
			if v.alpha == 0 {
				copy(p, z)
				break
			}
			for i, zi := range z {
				p[i] = zi + v.alpha*p[i]
			}
		case opMulDot:
			v.m.mulRows(v.q, v.p, lo, hi)
			v.sums[b] = dot(v.p[lo:hi], v.q[lo:hi])
		case opUpdate:
			v.sums[b] = update(v.x[lo:hi], v.r[lo:hi], v.p[lo:hi], v.q[lo:hi], v.alpha)
		}
	}
}

// dot returns x·y, summed by blocks like blockDot.
func (v *vecOps) dot(x, y []float64) float64 {
	if v == nil {
		return blockDot(x, y)
	}
	v.op, v.x, v.y = opDot, x, y
	return v.run()
}

// xpby sets p = z + beta p (p = z for beta = 0).
func (v *vecOps) xpby(p, z []float64, beta float64) {
	if v == nil {
		if beta == 0 {
			copy(p, z)
			return
		}
		z = z[:len(p)]
		for i, zi := range z {
			p[i] = zi + beta*p[i]
		}
		return
	}
	v.op, v.p, v.z, v.alpha = opXpby, p, z, beta
	v.run()
}

// mulDot sets q = A p and returns p·q, summed by blocks; for a CSR
// operator and several goroutines the product and the inner product are
// fused, block by block.
func (v *vecOps) mulDot(a Operator, q, p []float64) float64 {
	if v == nil || v.m == nil {
		a.MulVec(q, p)
		return v.dot(p, q)
	}
	v.op, v.q, v.p = opMulDot, q, p
	return v.run()
}

// update sets x += alpha p and r -= alpha q and returns the new r·r,
// summed by blocks.
func (v *vecOps) update(x, r, p, q []float64, alpha float64) float64 {
	if v == nil {
		s := 0.0
		for lo := 0; lo < len(p); lo += vecBlock {
			hi := min(len(p), lo+vecBlock)
			s += update(x[lo:hi], r[lo:hi], p[lo:hi], q[lo:hi], alpha)
		}
		return s
	}
	v.op, v.x, v.r, v.p, v.q, v.alpha = opUpdate, x, r, p, q, alpha
	return v.run()
}
