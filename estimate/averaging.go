package estimate

import (
	"cmp"
	"fmt"
	"runtime"
	"slices"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Averaging recovery: the area-weighted mean of the gradients of the
// triangles around a vertex, per vertex side (the triangles of one region).
// averagePatches is the general implementation, for P1 and P2 and any
// diffusion (SPR falls back on its sideAverage); averagingP1 is the whole
// estimator for P1 with piecewise-constant diffusion, on the mesh arrays.

// averagePatches stores, per vertex side, the area-weighted mean gradient.
func averagePatches(u *fem.Function, rc *recovered, vstart, vtri []int32) error {
	m := u.Space.Mesh
	ns := len(rc.region)
	rc.coef = make([]float64, 2*ns)
	return parallel.For(m.NumVertices(), 1024, func(lo, hi int) error {
		ev := fem.NewEvaluator(u)
		for v := lo; v < hi; v++ {
			for s := rc.start[v]; s < rc.start[v+1]; s++ {
				gx, gy := sideAverage(ev, m, vtri[vstart[v]:vstart[v+1]], int32(v), rc.region[s])
				rc.coef[2*s], rc.coef[2*s+1] = gx, gy
			}
		}
		return nil
	})
}

// sideAverage returns the area-weighted mean of the gradients at vertex v
// of the triangles of region r in patch.
func sideAverage(ev *fem.Evaluator, m *mesh.Mesh, patch []int32, v int32, r int32) (gx, gy float64) {
	area := 0.0
	for _, k := range patch {
		if m.Region[k] != r {
			continue
		}
		ev.Load(int(k))
		var l [3]float64
		l[localVertex(m, int(k), v)] = 1
		_, x, y := ev.Eval(l)
		a := ev.Area()
		gx, gy, area = gx+a*x, gy+a*y, area+a
	}
	return gx / area, gy / area
}

// averagingP1 is Recovery.Estimate with Averaging for P1 and
// piecewise-constant diffusion, in three passes:
//
//  1. over the triangles: |T| and ∇u_h are stored per triangle;
//  2. the vertex sums Σ |T| and Σ |T|∇u_h of each vertex side: the vertices
//     are split into ranges, one per goroutine, and each goroutine scans
//     all triangles in index order and adds those at its vertices, so that
//     every sum is taken in triangle order whatever the split (the order of
//     the general path); then it divides. Where the mesh has several
//     regions, a vertex keeps the region of its first triangle, and the
//     triangles of its other regions are collected and summed per region
//     afterwards;
//  3. over the triangles: η_T² in closed form from the three recovered
//     vertex values (as recoveryNormP1), and the oscillation.
func averagingP1(dst *Indicators, u *fem.Function, p *fem.Problem) error {
	m := u.Space.Mesh
	nt, nv := m.NumTriangles(), m.NumVertices()
	var orule *quadrature.Triangle
	if p.HasSource() {
		var err error
		if orule, err = quadrature.ForTriangle(4); err != nil {
			return err
		}
	}
	co := fem.NewRegionTable(p)
	x, tri, uu, region := m.X, m.Tri, u.U, m.Region
	owners := max(1, min(runtime.GOMAXPROCS(0), 8, nv/4096))
	// acc: 4 per vertex (Σ|T|, Σ|T|∂x u_h, Σ|T|∂y u_h, and the region of the
	// sums where there are several; 32 bytes from the aligned start of the
	// scratch, so that one vertex touches one cache line); grad: the
	// recovered gradient per vertex; tg: |T|, ∂x u_h, ∂y u_h per triangle.
	work := dst.scratch(4*nv + 2*nv + 3*nt)
	acc, grad, tg := work[:4*nv], work[4*nv:6*nv], work[6*nv:]
	// 1. |T| and ∇u_h; whether the mesh has several regions.
	const block = 4096
	multi := make([]bool, (nt+block-1)/block)
	_ = parallel.For(len(multi), 1, func(lo, hi int) error {
		r0 := region[0]
		for b := lo; b < hi; b++ {
			several := false
			for k := b * block; k < min((b+1)*block, nt); k++ {
				t := tri[3*k : 3*k+3 : 3*k+3]
				d, gx, gy := p1Grad(x, uu, t[0], t[1], t[2])
				tg[3*k], tg[3*k+1], tg[3*k+2] = 0.5*d, gx, gy
				several = several || region[k] != r0
			}
			multi[b] = several
		}
		return nil
	})
	// 2. Vertex sums and recovered gradients.
	several := slices.Contains(multi, true)
	var reg []int32 // with several regions: the region of each vertex's sums in acc
	over := make([][]int32, owners)
	if several {
		reg = dst.scratchInt(nv)
	}
	vb := parallel.Even(nil, owners, nv)
	parallel.Run(owners, func(w int) {
		vlo, vhi := int32(vb[w]), int32(vb[w+1])
		if several {
			over[w] = vertexSidesSums(tri, region, tg, acc, reg, vlo, vhi, nil)
		} else {
			vertexSums(tri, tg, acc, vlo, vhi)
		}
		for v := int(vlo); v < int(vhi); v++ {
			a := acc[4*v]
			grad[2*v], grad[2*v+1] = acc[4*v+1]/a, acc[4*v+2]/a
		}
	})
	var sides []side
	if several {
		sides = interfaceSides(region, tg, slices.Concat(over...))
	}
	// 3. η_T² and the oscillation, each chunk checked while in cache (see
	// finiteIndicators).
	dst.checked = true
	return parallel.For(nt, 2048, func(lo, hi int) error {
		for k := lo; k < hi; k++ {
			area, gx, gy := tg[3*k], tg[3*k+1], tg[3*k+2]
			var t fem.Tensor
			var r int32
			if several || !co.Uniform() {
				r = region[k]
				t = co.At(r)
			} else {
				t = co.At(0)
			}
			var sx, sy, sum float64
			for i := range 3 {
				v := tri[3*k+i]
				vx, vy := grad[2*int(v)], grad[2*int(v)+1]
				if several && reg[v] != r {
					vx, vy = sideValue(sides, v, r)
				}
				dx, dy := vx-gx, vy-gy
				ax, ay := t.Apply(dx, dy)
				sum += dx*ax + dy*ay
				sx, sy = sx+dx, sy+dy
			}
			ax, ay := t.Apply(sx, sy)
			dst.Eta2[k] = area / 12 * (sum + sx*ax + sy*ay)
			if orule == nil {
				zero(dst.Osc2, k)
				continue
			}
			xs, ys := corners(x, tri[3*k:3*k+3])
			o, err := osc2P0(p, orule, &xs, &ys, m.Region[k], k, area)
			if err != nil {
				return fmt.Errorf("estimate: %w", err)
			}
			dst.Osc2[k] = o
		}
		return finiteChunk("Recovery", dst, lo, hi)
	})
}

// vertexSums fills acc[4v:4v+3], for the vertices v in [vlo, vhi) of a mesh
// of one region, with Σ |T|, Σ |T| ∂x u_h and Σ |T| ∂y u_h over the
// triangles T around v, summed in triangle order. (A branch on the owner of
// each corner measured faster than adding the other corners to scratch
// slots without one, and than compacting the owned corners first.)
func vertexSums(tri []int32, tg, acc []float64, vlo, vhi int32) {
	clear(acc[4*int(vlo) : 4*int(vhi)])
	span := uint32(vhi - vlo)
	for k := range len(tri) / 3 {
		g := tg[3*k : 3*k+3 : 3*k+3]
		a := g[0]
		ax, ay := a*g[1], a*g[2]
		for _, v := range tri[3*k : 3*k+3 : 3*k+3] {
			if uint32(v-vlo) >= span {
				continue
			}
			s := acc[4*int(v) : 4*int(v)+3 : 4*int(v)+3]
			s[0] += a
			s[1] += ax
			s[2] += ay
		}
	}
}

// vertexSidesSums is vertexSums for a mesh of several regions: it also
// keeps the region of v's first triangle in acc[4v+3] (the same cache line
// as the sums) and copies it to reg[v], sums only the triangles of that
// region into acc, and appends the (vertex, triangle) pairs of the other
// regions to over, in triangle order, which it returns.
func vertexSidesSums(tri, region []int32, tg, acc []float64, reg []int32, vlo, vhi int32, over []int32) []int32 {
	clear(acc[4*int(vlo) : 4*int(vhi)])
	span := uint32(vhi - vlo)
	for k := range len(tri) / 3 {
		r := region[k]
		for _, v := range tri[3*k : 3*k+3 : 3*k+3] {
			if uint32(v-vlo) >= span {
				continue
			}
			s := acc[4*int(v) : 4*int(v)+4 : 4*int(v)+4]
			if s[0] == 0 { // first triangle (areas are positive)
				s[3] = float64(r)
			} else if s[3] != float64(r) {
				over = append(over, v, int32(k))
				continue
			}
			a := tg[3*k]
			s[0] += a
			s[1] += a * tg[3*k+1]
			s[2] += a * tg[3*k+2]
		}
	}
	for v := int(vlo); v < int(vhi); v++ {
		reg[v] = int32(acc[4*v+3])
	}
	return over
}

// side is the recovered gradient of a vertex for the triangles of one
// region, where that is not the region of the vertex's first triangle.
type side struct {
	v, r   int32
	gx, gy float64
}

// interfaceSides sums the (vertex, triangle) pairs of over per (vertex,
// region), in triangle order, and returns the mean gradients sorted by
// vertex and region.
func interfaceSides(region []int32, tg []float64, over []int32) []side {
	n := len(over) / 2
	if n == 0 {
		return nil
	}
	idx := make([]int, n)
	for i := range idx {
		idx[i] = i
	}
	key := func(i int) (int32, int32, int32) { return over[2*i], region[over[2*i+1]], over[2*i+1] }
	slices.SortFunc(idx, func(i, j int) int {
		vi, ri, ki := key(i)
		vj, rj, kj := key(j)
		return cmp.Or(cmp.Compare(vi, vj), cmp.Compare(ri, rj), cmp.Compare(ki, kj))
	})
	var sides []side
	var a, sx, sy float64
	for q, i := range idx {
		v, r, k := key(i)
		b := tg[3*k]
		a, sx, sy = a+b, sx+b*tg[3*k+1], sy+b*tg[3*k+2]
		if q+1 < n {
			if v2, r2, _ := key(idx[q+1]); v2 == v && r2 == r {
				continue
			}
		}
		sides = append(sides, side{v, r, sx / a, sy / a})
		a, sx, sy = 0, 0, 0
	}
	return sides
}

// sideValue returns the recovered gradient of vertex v for region r from
// sides.
func sideValue(sides []side, v, r int32) (gx, gy float64) {
	i, ok := slices.BinarySearchFunc(sides, side{v: v, r: r}, func(a, b side) int {
		return cmp.Or(cmp.Compare(a.v, b.v), cmp.Compare(a.r, b.r))
	})
	if !ok {
		panic("estimate: vertex has no side for its triangle's region") // broken invariant
	}
	return sides[i].gx, sides[i].gy
}
