package mesh

import (
	"cmp"
	"fmt"
	"math"
	"slices"
)

// Merged reports what MergeCoincident did.
type Merged struct {
	Vertex  []int32 // the new index of each old vertex
	Pairs   []int32 // 2 per removed vertex: its old index, then the old index of the vertex it joined
	Dropped []int32 // indices into the old Bnd of boundary edges removed (see MergeCoincident)
}

// MergeCoincident returns a copy of a in which vertices at most tol apart
// (Euclidean distance; tol = 0 merges equal coordinates only) are one
// vertex, with a report. Groups are closed under the relation, so a chain
// of close vertices becomes one vertex; each group keeps its lowest index
// and its coordinates, and the survivors are renumbered in their order.
// Triangles and boundary edges are renumbered; a boundary edge whose ends
// merge is dropped, and so are both copies of a boundary edge listed twice
// after merging, which is the seam of two meshes joined along tagged
// boundaries (now interior). The result is ready for New, which reports
// what merging cannot mend (a triangle whose vertices merged, say).
//
// MergeCoincident rejects a non-finite coordinate, a negative or
// non-finite tol (ErrArgument), mismatched lengths and indices out of
// range. It sorts the vertices by x and compares each with those within
// tol in x, so it costs O(N log N) plus the number of such pairs.
func MergeCoincident(a Arrays, tol float64) (Arrays, Merged, error) {
	if !(tol >= 0) || math.IsInf(tol, 0) {
		return Arrays{}, Merged{}, fmt.Errorf("mesh: MergeCoincident: tol = %v, want a finite value ≥ 0: %w", tol, ErrArgument)
	}
	if len(a.X)%2 != 0 {
		return Arrays{}, Merged{}, within("MergeCoincident", lenErr("len(X) = %d is odd", len(a.X)))
	}
	if len(a.Bnd)%2 != 0 || len(a.Bnd)/2 != len(a.BndTag) {
		return Arrays{}, Merged{}, within("MergeCoincident", lenErr("len(Bnd) = %d, len(BndTag) = %d, want 2 vertices per tag", len(a.Bnd), len(a.BndTag)))
	}
	nv := len(a.X) / 2
	for i, v := range a.X {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return Arrays{}, Merged{}, within("MergeCoincident", vertErr(i/2, fmt.Errorf("%w: coordinate %v", ErrNotFinite, v)))
		}
	}
	for k, v := range a.Tri {
		if v < 0 || int(v) >= nv {
			return Arrays{}, Merged{}, within("MergeCoincident", triErr(k/3, ErrIndex))
		}
	}
	for b, v := range a.Bnd {
		if v < 0 || int(v) >= nv {
			return Arrays{}, Merged{}, within("MergeCoincident", edgeErr(b/2, ErrIndex))
		}
	}
	// Union-find with the lowest index as root.
	root := make([]int32, nv)
	for i := range root {
		root[i] = int32(i)
	}
	find := func(v int32) int32 {
		for root[v] != v {
			root[v] = root[root[v]]
			v = root[v]
		}
		return v
	}
	order := make([]int32, nv)
	for i := range order {
		order[i] = int32(i)
	}
	x := a.X
	slices.SortFunc(order, func(p, q int32) int {
		if c := cmp.Compare(x[2*p], x[2*q]); c != 0 {
			return c
		}
		return cmp.Compare(p, q)
	})
	for i, p := range order {
		for _, q := range order[i+1:] {
			if x[2*q]-x[2*p] > tol {
				break
			}
			if math.Hypot(x[2*q]-x[2*p], x[2*q+1]-x[2*p+1]) <= tol {
				rp, rq := find(p), find(q)
				if rp != rq {
					root[max(rp, rq)] = min(rp, rq)
				}
			}
		}
	}
	var rep Merged
	rep.Vertex = make([]int32, nv)
	var out Arrays
	n := int32(0)
	for v := range int32(nv) {
		if r := find(v); r != v {
			rep.Pairs = append(rep.Pairs, v, r)
			continue
		}
		rep.Vertex[v] = n
		out.X = append(out.X, x[2*v], x[2*v+1])
		n++
	}
	for v := range int32(nv) {
		rep.Vertex[v] = rep.Vertex[find(v)]
	}
	out.Tri = make([]int32, len(a.Tri))
	for k, v := range a.Tri {
		out.Tri[k] = rep.Vertex[v]
	}
	if a.Region != nil {
		out.Region = append([]int32(nil), a.Region...)
	}
	// Boundary edges: drop collapsed ones and seams (pairs listed twice).
	nb := len(a.BndTag)
	type key struct{ lo, hi, b int32 }
	keys := make([]key, 0, nb)
	drop := make([]bool, nb)
	for b := range nb {
		p, q := rep.Vertex[a.Bnd[2*b]], rep.Vertex[a.Bnd[2*b+1]]
		if p == q {
			drop[b] = true
			continue
		}
		keys = append(keys, key{min(p, q), max(p, q), int32(b)})
	}
	slices.SortFunc(keys, func(s, t key) int {
		if c := cmp.Compare(s.lo, t.lo); c != 0 {
			return c
		}
		if c := cmp.Compare(s.hi, t.hi); c != 0 {
			return c
		}
		return cmp.Compare(s.b, t.b)
	})
	for i := 1; i < len(keys); i++ {
		if keys[i].lo == keys[i-1].lo && keys[i].hi == keys[i-1].hi {
			drop[keys[i].b], drop[keys[i-1].b] = true, true
		}
	}
	for b := range nb {
		if drop[b] {
			rep.Dropped = append(rep.Dropped, int32(b))
			continue
		}
		out.Bnd = append(out.Bnd, rep.Vertex[a.Bnd[2*b]], rep.Vertex[a.Bnd[2*b+1]])
		out.BndTag = append(out.BndTag, a.BndTag[b])
	}
	return out, rep, nil
}
