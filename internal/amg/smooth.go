package amg

import (
	"slices"

	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// chebyshevRatio fixes the lower end of the Chebyshev smoothing interval:
// the polynomial damps the eigenvalues of D⁻¹A in [λ/chebyshevRatio, λ],
// λ = chebyshevSafety times the estimate of λ_max, leaving the lower part
// to the coarse grid correction.
const chebyshevRatio = 30

// chebyshevSafety enlarges the power-method estimate of λ_max, which is a
// lower bound of the largest eigenvalue.
const chebyshevSafety = 1.1

// chebyshevCoefficients returns the parameters of m steps of the
// Chebyshev semi-iteration for the eigenvalue interval [lo, hi] of D⁻¹A
// (Saad, Iterative Methods for Sparse Linear Systems, 2nd ed., Algorithm
// 12.1). With θ = (hi + lo)/2, δ = (hi − lo)/2, σ = θ/δ, ρ₀ = 1/σ and
// ρ_{k+1} = 1/(2σ − ρ_k), the iteration is
//
//	d₀ = D⁻¹r₀/θ
//	x_{k+1} = x_k + d_k,  r_{k+1} = r_k − A d_k
//	d_{k+1} = ρ_{k+1}ρ_k d_k + (2ρ_{k+1}/δ) D⁻¹ r_{k+1}
//
// and c1[k] = ρ_{k+1}ρ_k, c2[k] = 2ρ_{k+1}/δ; invTheta = 1/θ.
func chebyshevCoefficients(lo, hi float64, m int) (invTheta float64, c1, c2 []float64) {
	theta, delta := (hi+lo)/2, (hi-lo)/2
	sigma := theta / delta
	rho := 1 / sigma
	c1, c2 = make([]float64, m), make([]float64, m)
	for k := range m {
		next := 1 / (2*sigma - rho)
		c1[k], c2[k] = next*rho, 2*next/delta
		rho = next
	}
	return 1 / theta, c1, c2
}

// gsForwardZero is the first forward Gauss–Seidel sweep from x = 0:
// x_i = (b_i − Σ_{j<i} a_ij x_j)/a_ii for i ascending. Only the strictly
// lower part of a is read; the upper part would multiply zeros.
func gsForwardZero(a *sparse.CSR, diagPos []int32, invDiag, x, b []float64) {
	col, val := a.Col, a.Val
	for i := range a.Rows {
		s := b[i]
		lo, dp := a.RowPtr[i], diagPos[i]
		cs := col[lo:dp]
		vs := val[lo:dp]
		vs = vs[:len(cs)]
		for k, j := range cs {
			s -= vs[k] * x[j]
		}
		x[i] = s * invDiag[i]
	}
}

// gsForward is a forward Gauss–Seidel sweep: for i ascending,
// x_i ← (b_i − Σ_{j≠i} a_ij x_j)/a_ii with the newest values of x.
func gsForward(a *sparse.CSR, diagPos []int32, invDiag, x, b []float64) {
	for i := range a.Rows {
		x[i] = gsRow(a, diagPos, i, x, b[i]) * invDiag[i]
	}
}

// gsBackward is a backward Gauss–Seidel sweep (i descending), the adjoint
// of gsForward for a symmetric a: the error propagation of the backward
// sweep is the A-adjoint of that of the forward one.
func gsBackward(a *sparse.CSR, diagPos []int32, invDiag, x, b []float64) {
	for i := a.Rows - 1; i >= 0; i-- {
		x[i] = gsRow(a, diagPos, i, x, b[i]) * invDiag[i]
	}
}

// gsRow returns b_i − Σ_{j≠i} a_ij x_j, summing the lower part, then the
// upper part, each in column order.
func gsRow(a *sparse.CSR, diagPos []int32, i int, x []float64, bi float64) float64 {
	lo, dp, hi := a.RowPtr[i], diagPos[i], a.RowPtr[i+1]
	cs := a.Col[lo:dp]
	vs := a.Val[lo:dp]
	vs = vs[:len(cs)]
	s := bi
	for k, j := range cs {
		s -= vs[k] * x[j]
	}
	cs = a.Col[dp+1 : hi]
	vs = a.Val[dp+1 : hi]
	vs = vs[:len(cs)]
	for k, j := range cs {
		s -= vs[k] * x[j]
	}
	return s
}

// The kernels below are the row-parallel steps of the V-cycle. Each row is
// computed by one goroutine in a fixed order, so that results do not
// depend on how the rows are split (see team).

// residualKernel computes r = b − A x.
type residualKernel struct {
	a       *sparse.CSR
	x, b, r []float64
}

func (k *residualKernel) rows(lo, hi int) {
	a, x := k.a, k.x
	for i := lo; i < hi; i++ {
		s := k.b[i]
		cs := a.Col[a.RowPtr[i]:a.RowPtr[i+1]]
		vs := a.Val[a.RowPtr[i]:a.RowPtr[i+1]]
		vs = vs[:len(cs)]
		for q, j := range cs {
			s -= vs[q] * x[j]
		}
		k.r[i] = s
	}
}

// upperResidualKernel computes the residual after one forward Gauss–Seidel
// sweep from zero: there b_i − Σ_{j≤i} a_ij x_j = 0 (up to rounding), so
// r_i = −Σ_{j>i} a_ij x_j, half the work of a full residual.
type upperResidualKernel struct {
	a       *sparse.CSR
	diagPos []int32
	x, r    []float64
}

func (k *upperResidualKernel) rows(lo, hi int) {
	a, x := k.a, k.x
	for i := lo; i < hi; i++ {
		cs := a.Col[k.diagPos[i]+1 : a.RowPtr[i+1]]
		vs := a.Val[k.diagPos[i]+1 : a.RowPtr[i+1]]
		vs = vs[:len(cs)]
		s := 0.0
		for q, j := range cs {
			s -= vs[q] * x[j]
		}
		k.r[i] = s
	}
}

// mulKernel computes y = m x (restriction with R = Pᵀ).
type mulKernel struct {
	m    *sparse.CSR
	x, y []float64
}

func (k *mulKernel) rows(lo, hi int) {
	m, x := k.m, k.x
	for i := lo; i < hi; i++ {
		cs := m.Col[m.RowPtr[i]:m.RowPtr[i+1]]
		vs := m.Val[m.RowPtr[i]:m.RowPtr[i+1]]
		vs = vs[:len(cs)]
		s := 0.0
		for q, j := range cs {
			s += vs[q] * x[j]
		}
		k.y[i] = s
	}
}

// prolongKernel computes x += P xc (the coarse grid correction).
type prolongKernel struct {
	p     *sparse.CSR
	xc, x []float64
}

func (k *prolongKernel) rows(lo, hi int) {
	p, xc := k.p, k.xc
	for i := lo; i < hi; i++ {
		cs := p.Col[p.RowPtr[i]:p.RowPtr[i+1]]
		vs := p.Val[p.RowPtr[i]:p.RowPtr[i+1]]
		vs = vs[:len(cs)]
		s := 0.0
		for q, j := range cs {
			s += vs[q] * xc[j]
		}
		k.x[i] += s
	}
}

// chebInitKernel starts the Chebyshev iteration from a given x:
// r = b − A x and d = D⁻¹r/θ. With zeroX, x is taken as zero (r = b) and
// A is not read.
type chebInitKernel struct {
	a           *sparse.CSR
	invDiag     []float64
	x, b, r, d  []float64
	invTheta    float64
	zeroX       bool
	residualToo bool
}

func (k *chebInitKernel) rows(lo, hi int) {
	a, x := k.a, k.x
	for i := lo; i < hi; i++ {
		s := k.b[i]
		if !k.zeroX {
			cs := a.Col[a.RowPtr[i]:a.RowPtr[i+1]]
			vs := a.Val[a.RowPtr[i]:a.RowPtr[i+1]]
			vs = vs[:len(cs)]
			for q, j := range cs {
				s -= vs[q] * x[j]
			}
		}
		if k.residualToo {
			k.r[i] = s
		}
		k.d[i] = s * k.invDiag[i] * k.invTheta
	}
}

// chebStepKernel is one fused step of the Chebyshev iteration:
// x += d, r = rIn − A d and, unless last, dn = c1 d + c2 D⁻¹ r. With zeroX
// the old x is zero and x = d is written without reading it. rIn may be r.
type chebStepKernel struct {
	a                *sparse.CSR
	invDiag          []float64
	x, rIn, r, d, dn []float64
	c1, c2           float64
	zeroX, last      bool
}

func (k *chebStepKernel) rows(lo, hi int) {
	a, d := k.a, k.d
	for i := lo; i < hi; i++ {
		cs := a.Col[a.RowPtr[i]:a.RowPtr[i+1]]
		vs := a.Val[a.RowPtr[i]:a.RowPtr[i+1]]
		vs = vs[:len(cs)]
		ad := 0.0
		for q, j := range cs {
			ad += vs[q] * d[j]
		}
		di := d[i]
		if k.zeroX {
			k.x[i] = di
		} else {
			k.x[i] += di
		}
		ri := k.rIn[i] - ad
		k.r[i] = ri
		if !k.last {
			k.dn[i] = k.c1*di + k.c2*k.invDiag[i]*ri
		}
	}
}

// addKernel computes x += d (the last Chebyshev update).
type addKernel struct{ x, d []float64 }

func (k *addKernel) rows(lo, hi int) {
	x, d := k.x[lo:hi], k.d[lo:hi]
	d = d[:len(x)]
	for i := range x {
		x[i] += d[i]
	}
}

// colourRows is the number of rows above which a level is smoothed by
// multicolour Gauss–Seidel, whose colours are swept in parallel, instead
// of the sequential sweep. Below it the sequential sweep was as fast or
// faster on two cores: with 10⁵ unknowns the CG solve took 50 ms instead
// of 62 ms on the P1 Laplacian of the unit square (a well-ordered
// matrix), and the same 65 ms on a mesh of the adaptive L-shape loop. The
// choice depends on the matrix only, not on GOMAXPROCS.
const colourRows = 1 << 17

// colouring is a partition of the rows of a matrix into colours such that
// no stored entry (i, j), i ≠ j, joins two rows of the same colour, with
// a copy of the matrix in colour order for the sweeps.
type colouring struct {
	// The rows of colour c are rows[ptr[c]:ptr[c+1]], ascending.
	ptr, rows []int32
	// m holds the rows of the matrix in colour order: row q of m is row
	// rows[q] of the matrix, its entries sorted by the colour of their
	// column, then by column, so that the entries of earlier colours
	// (the lower part in the order of the sweep) come first, then the
	// diagonal entry, at position diag[q], then the entries of later
	// colours (the upper part). inv[q] is 1/a_ii of that row. A colour
	// is swept over contiguous memory.
	m    *sparse.CSR
	diag []int32
	inv  []float64
	// colourOf is scratch of colour: the colour of each row.
	colourOf []int32
}

// colours returns the number of colours (0 for none).
func (c *colouring) colours() int { return max(0, len(c.ptr)-1) }

// colour returns the greedy colouring of the graph of the stored entries
// of the square matrix a (explicit zeros included, so that the rows of a
// colour never read each other's unknowns), whose diagonal entries must
// be stored and have the reciprocals invDiag: the rows are visited in
// ascending order and each gets the least colour that none of its
// neighbours of lower index has. The number of colours is at most one
// more than the largest number of off-diagonal entries of a row. The
// colouring is sequential and linear in Rows + NNZ; the copy in colour
// order is filled in parallel, each row distributed by a counting sort
// over the colours of its columns. The arrays of dst are reused (see resize)
// and its fields set.
func colour(dst *colouring, a *sparse.CSR, invDiag []float64) {
	n := a.Rows
	dst.colourOf = resize(dst.colourOf, n)
	col := dst.colourOf
	var used []int32 // used[c] == i when a neighbour of row i has colour c
	for i := range n {
		for _, j := range a.Col[a.RowPtr[i]:a.RowPtr[i+1]] {
			if int(j) < i {
				used[col[j]] = int32(i)
			}
		}
		c := 0
		for c < len(used) && used[c] == int32(i) {
			c++
		}
		if c == len(used) {
			used = append(used, -1)
		}
		col[i] = int32(c)
	}
	nc := len(used)
	ptr := resize(dst.ptr, nc+1)
	clear(ptr)
	for _, c := range col {
		ptr[c+1]++
	}
	for c := range nc {
		ptr[c+1] += ptr[c]
	}
	next := slices.Clone(ptr[:nc])
	rows := resize(dst.rows, n)
	for i, c := range col {
		rows[next[c]] = int32(i)
		next[c]++
	}
	m := resizeCSR(dst.m, n, a.Cols, a.NNZ())
	m.RowPtr[0] = 0
	for q, i := range rows {
		m.RowPtr[q+1] = m.RowPtr[q] + a.RowPtr[i+1] - a.RowPtr[i]
	}
	diag := resize(dst.diag, n)
	inv := resize(dst.inv, n)
	chunks(n, m.RowPtr, func(_, lo, hi int) {
		// Each row is distributed by the colours of its columns with a
		// counting sort, which is stable: columns keep their ascending
		// order within a colour. first[c] is the place of the next entry
		// of colour c in the row.
		first := make([]int32, nc+1)
		for q := lo; q < hi; q++ {
			i := rows[q]
			cs, vs := m.Col[m.RowPtr[q]:m.RowPtr[q+1]], m.Val[m.RowPtr[q]:m.RowPtr[q+1]]
			src, srcV := a.Col[a.RowPtr[i]:a.RowPtr[i+1]], a.Val[a.RowPtr[i]:a.RowPtr[i+1]]
			srcV = srcV[:len(src)]
			clear(first)
			for _, j := range src {
				first[col[j]+1]++
			}
			for c := range nc {
				first[c+1] += first[c]
			}
			ci := col[i]
			for t, j := range src {
				c := col[j]
				at := first[c]
				first[c]++
				cs[at], vs[at] = j, srcV[t]
			}
			// The diagonal entry is among those of its colour, after
			// the entries of the earlier colours (for a symmetric
			// pattern, the only one).
			d := int32(0)
			if ci > 0 {
				d = first[ci-1]
			}
			for cs[d] != i {
				d++
			}
			diag[q] = m.RowPtr[q] + d
			inv[q] = invDiag[i]
		}
	})
	dst.ptr, dst.rows, dst.m, dst.diag, dst.inv = ptr, rows, m, diag, inv
}

// Modes of colourKernel.
const (
	sweepFirst = iota // the first colour of a forward sweep from x = 0
	sweepZero         // a later colour of a forward sweep from x = 0
	sweepFull         // any colour of any other sweep
)

// colourKernel is one colour of a multicolour Gauss–Seidel sweep: for
// the rows i of the colour, x_i ← x_i + (b_i − Σ_j a_ij x_j)/a_ii, summed
// in the order of the colour-ordered copy. The rows of a colour do not
// read each other's unknowns, so they can be computed in any order and
// split over goroutines. In a forward sweep from x = 0 the unknowns of
// the later colours and the row's own are still zero, so only the lower
// part is read, x_i = (b_i − Σ_{lower} a_ij x_j)/a_ii (sweepZero), and the
// first colour reads nothing, x_i = b_i/a_ii (sweepFirst); x need not be
// cleared before, as these modes write x_i without reading it, and read
// only unknowns written earlier in the sweep.
type colourKernel struct {
	c      *colouring
	lo, hi int // the positions of the colour in c.rows
	x, b   []float64
	mode   int
}

func (k *colourKernel) rows(lo, hi int) {
	m, x, b := k.c.m, k.x, k.b
	rows := k.c.rows[k.lo+lo : k.lo+hi]
	inv := k.c.inv[k.lo+lo : k.lo+hi]
	inv = inv[:len(rows)]
	switch k.mode {
	case sweepFirst:
		for q, i := range rows {
			x[i] = b[i] * inv[q]
		}
	case sweepZero:
		rp := m.RowPtr[k.lo+lo : k.lo+hi+1]
		dg := k.c.diag[k.lo+lo : k.lo+hi]
		dg = dg[:len(rows)]
		for q, i := range rows {
			cs := m.Col[rp[q]:dg[q]]
			vs := m.Val[rp[q]:dg[q]]
			vs = vs[:len(cs)]
			s := b[i]
			for t, j := range cs {
				s -= vs[t] * x[j]
			}
			x[i] = s * inv[q]
		}
	default:
		rp := m.RowPtr[k.lo+lo : k.lo+hi+1]
		for q, i := range rows {
			cs := m.Col[rp[q]:rp[q+1]]
			vs := m.Val[rp[q]:rp[q+1]]
			vs = vs[:len(cs)]
			s := b[i]
			for t, j := range cs {
				s -= vs[t] * x[j]
			}
			x[i] += s * inv[q]
		}
	}
}

// colourResidualKernel computes the residual after one forward
// multicolour sweep from x = 0: the equation of each row holds for its
// lower part and its own unknown (up to rounding), so r_i = −Σ_{upper}
// a_ij x_j, half the work of a full residual, as in upperResidualKernel.
// It runs over the positions q of the colour-ordered copy and writes
// r[rows[q]].
type colourResidualKernel struct {
	c    *colouring
	x, r []float64
}

func (k *colourResidualKernel) rows(lo, hi int) {
	m, x := k.c.m, k.x
	rows := k.c.rows[lo:hi]
	rp := m.RowPtr[lo+1 : hi+1]
	dg := k.c.diag[lo:hi]
	rp, dg = rp[:len(rows)], dg[:len(rows)]
	for q, i := range rows {
		cs := m.Col[dg[q]+1 : rp[q]]
		vs := m.Val[dg[q]+1 : rp[q]]
		vs = vs[:len(cs)]
		s := 0.0
		for t, j := range cs {
			s -= vs[t] * x[j]
		}
		k.r[i] = s
	}
}
