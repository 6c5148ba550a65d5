package fem

import "math"

// maxRegionSpan bounds the range of region numbers for which a RegionTable
// keeps the diffusion in a slice indexed by region; wider ranges look
// Problem.A up.
const maxRegionSpan = 1 << 16

// RegionTable holds the constant diffusion a of each region of a problem
// with piecewise-constant diffusion (Problem.AFunc nil), and its smallest
// eigenvalue, for lookups by region in the inner loops of assembly and
// estimation. The tensors sit in a slice over the span of the region
// numbers of Problem.A when that span is below 1<<16, and the one tensor
// a = 1 when A is nil; other regions are looked up in A. A region that A
// lacks gives the zero tensor, as Problem.Diffusion does; Problem.Check
// reports such a region as an error.
//
// A RegionTable reads the problem when it is made; it must not be
// modified afterwards. It is safe for concurrent use.
type RegionTable struct {
	p       *Problem
	uniform bool  // A nil: one tensor for all regions
	base    int32 // region of t[0]
	t       []Tensor
	w       []float64 // w[i] = t[i].MinEig()
}

// NewRegionTable returns the region table of p. Its cost is linear in the
// number of regions of A and in their span. The diffusion p.AFunc is not
// consulted: use the table only where p.PiecewiseConstant().
func NewRegionTable(p *Problem) *RegionTable {
	rt := &RegionTable{p: p}
	if p.A == nil {
		t := Scalar(1)
		rt.uniform, rt.t, rt.w = true, []Tensor{t}, []float64{t.MinEig()}
		return rt
	}
	if len(p.A) == 0 {
		return rt
	}
	lo, hi := int32(math.MaxInt32), int32(math.MinInt32)
	for r := range p.A {
		lo, hi = min(lo, r), max(hi, r)
	}
	if int64(hi)-int64(lo) >= maxRegionSpan {
		return rt
	}
	rt.base = lo
	rt.t = make([]Tensor, int(hi)-int(lo)+1)
	rt.w = make([]float64, len(rt.t))
	for r, t := range p.A {
		rt.t[r-lo], rt.w[r-lo] = t, t.MinEig()
	}
	return rt
}

// Uniform reports whether every region has the same diffusion because
// Problem.A is nil.
func (rt *RegionTable) Uniform() bool { return rt.uniform }

// At returns the diffusion of region r.
func (rt *RegionTable) At(r int32) Tensor {
	if rt.uniform {
		return rt.t[0]
	}
	if i, ok := rt.slot(r); ok {
		return rt.t[i]
	}
	return rt.p.A[r]
}

// AtMin returns the diffusion of region r and its smallest eigenvalue.
func (rt *RegionTable) AtMin(r int32) (Tensor, float64) {
	if rt.uniform {
		return rt.t[0], rt.w[0]
	}
	if i, ok := rt.slot(r); ok {
		return rt.t[i], rt.w[i]
	}
	t := rt.p.A[r]
	return t, t.MinEig()
}

// slot returns the index of region r in the table and whether the table
// holds it.
func (rt *RegionTable) slot(r int32) (int, bool) {
	i := int64(r) - int64(rt.base)
	return int(i), uint64(i) < uint64(len(rt.t))
}

// MinEig returns the smallest eigenvalue of t,
//
//	λ_min = ½(XX + YY) − √(¼(XX − YY)² + XY²).
func (t Tensor) MinEig() float64 {
	h := 0.5 * (t.XX - t.YY)
	return 0.5*(t.XX+t.YY) - math.Sqrt(h*h+t.XY*t.XY)
}
