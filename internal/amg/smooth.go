package amg

import (
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
