package estimate

import (
	"math"
	"slices"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/mesh"
)

// sprPoints are the sampling points of SPR for P2: the points of the
// degree-2 Dunavant rule, (2/3, 1/6, 1/6) and its permutations.
var sprPoints = [3][3]float64{{2. / 3, 1. / 6, 1. / 6}, {1. / 6, 2. / 3, 1. / 6}, {1. / 6, 1. / 6, 2. / 3}}

// fitPatches stores, per vertex side, the least-squares fit of the gradient
// (see Recovery).
func fitPatches(u *fem.Function, rc *recovered, vstart, vtri []int32) error {
	m := u.Space.Mesh
	ns := len(rc.region)
	rc.coef = make([]float64, 2*rc.nc*ns)
	rc.scale = make([]float64, ns)
	bv := m.BoundaryVertices()
	return parallel.For(m.NumVertices(), 512, func(lo, hi int) error {
		f := &fitter{ev: fem.NewEvaluator(u), m: m, nc: rc.nc}
		for v := lo; v < hi; v++ {
			for s := rc.start[v]; s < rc.start[v+1]; s++ {
				r := rc.region[s]
				f.gather(vtri[vstart[v]:vstart[v+1]], r)
				if bv[v] || f.points() < 2*rc.nc {
					f.enlarge(vstart, vtri, r)
				}
				c := rc.coef[2*rc.nc*int(s) : 2*rc.nc*int(s+1)]
				vx, vy := m.Vertex(v)
				scale, ok := f.fit(vx, vy, c)
				if !ok {
					clear(c)
					c[0], c[rc.nc] = sideAverage(f.ev, m, vtri[vstart[v]:vstart[v+1]], int32(v), r)
					scale = 1
				}
				rc.scale[s] = scale
			}
		}
		return nil
	})
}

// fitter gathers the triangles of one patch side and fits a polynomial to
// the gradients at their sampling points. It reuses its buffers.
type fitter struct {
	ev   *fem.Evaluator
	m    *mesh.Mesh
	nc   int
	tris []int32
}

func (f *fitter) gather(patch []int32, r int32) {
	f.tris = f.tris[:0]
	for _, k := range patch {
		if f.m.Region[k] == r {
			f.tris = append(f.tris, k)
		}
	}
}

// points returns the number of sampling points of the gathered triangles.
func (f *fitter) points() int {
	if f.nc == 3 {
		return len(f.tris)
	}
	return 3 * len(f.tris)
}

// enlarge adds the triangles of region r around the vertices of the
// gathered triangles.
func (f *fitter) enlarge(vstart, vtri []int32, r int32) {
	n := len(f.tris)
	for _, k := range f.tris[:n] {
		for _, w := range f.m.Tri[3*k : 3*k+3] {
			for _, k2 := range vtri[vstart[w]:vstart[w+1]] {
				if f.m.Region[k2] == r && !slices.Contains(f.tris, k2) {
					f.tris = append(f.tris, k2)
				}
			}
		}
	}
}

// fit fits the gradient components at the sampling points of the gathered
// triangles by polynomials in ξ = (x − vx)/scale, η = (y − vy)/scale, and
// writes the coefficients of the x component, then the y component, into c.
// It reports whether the least-squares problem was well determined.
func (f *fitter) fit(vx, vy float64, c []float64) (scale float64, ok bool) {
	nc := f.nc
	if f.points() < nc {
		return 0, false
	}
	type sample struct{ x, y, gx, gy float64 }
	var buf [64]sample
	samples := buf[:0]
	for _, k := range f.tris {
		f.ev.Load(int(k))
		if nc == 3 {
			l := [3]float64{1. / 3, 1. / 3, 1. / 3}
			x, y := f.ev.Point(l)
			_, gx, gy := f.ev.Eval(l)
			samples = append(samples, sample{x, y, gx, gy})
			continue
		}
		for _, l := range sprPoints {
			x, y := f.ev.Point(l)
			_, gx, gy := f.ev.Eval(l)
			samples = append(samples, sample{x, y, gx, gy})
		}
	}
	for _, s := range samples {
		scale = max(scale, math.Hypot(s.x-vx, s.y-vy))
	}
	if scale == 0 {
		return 0, false
	}
	var a [36]float64 // the normal equations, row major with stride nc
	var bx, by [6]float64
	var b [6]float64
	for _, s := range samples {
		basis(nc, (s.x-vx)/scale, (s.y-vy)/scale, b[:])
		for i := range nc {
			for j := range nc {
				a[i*nc+j] += b[i] * b[j]
			}
			bx[i] += b[i] * s.gx
			by[i] += b[i] * s.gy
		}
	}
	// A pivot below 1e-10 times the largest diagonal entry means the
	// sampling points do not determine the fit.
	if !cholesky(a[:nc*nc], nc, 1e-10) {
		return 0, false
	}
	cholSolve(a[:nc*nc], nc, bx[:nc], c[:nc])
	cholSolve(a[:nc*nc], nc, by[:nc], c[nc:2*nc])
	return scale, true
}
