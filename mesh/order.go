package mesh

import (
	"cmp"
	"math"
	"slices"

	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/spare"
)

// Order is a renumbering of a mesh, as Reorder returns it: for each
// vertex, edge and triangle of the renumbered mesh, its index in the mesh
// it was made from. A field given per vertex of the old mesh, u, is
// carried by u'[i] = u[Vertex[i]]; one per triangle or per edge likewise.
type Order struct {
	Vertex   []int32 // per vertex of the renumbered mesh: its old index
	Edge     []int32 // per edge: its old index
	Triangle []int32 // per triangle: its old index
}

// Reorder returns a copy of m renumbered for locality, and the
// renumbering. m is not modified.
//
// Vertices are put in the order of the Hilbert curve through the bounding
// square of the mesh, at a resolution of 2³² cells per side (vertices in
// one cell keep their relative order); triangles in the order of their
// lowest new vertex index (then of their old index); edges in the order of
// their (low, high) new vertex pairs, as New numbers them. Each triangle
// keeps its vertices in the same local order, so its orientation, its
// refinement edge and its newest vertex are unchanged; regions, boundary
// tags and the topology are permuted with it. So vertices close in the
// plane get close indices, and so do the triangles and edges around them:
// the rows of a matrix assembled on the mesh touch nearby entries of a
// vector. The curve's locality is that of Hilbert's construction: points
// of the square mapped from an interval of length ℓ of the curve lie in a
// region of diameter O(√ℓ).
//
// On the adaptive L-shape loop's mesh of 98,788 vertices
// (TestReorderLocality in package adapt) Refine's numbering puts 49% of
// the P1 matrix entries more than 2¹⁵ rows off the diagonal (mean distance
// 3.4e4 rows), Reorder's 0.37% (mean 379 rows). On the loop's mesh of
// 870,991 vertices, one product with the P1 matrix took 19.6–27.6 ns/row
// (median 25.8) in Refine's numbering, 14.9–23.3 (median 16.7) renumbered
// and 15.7–19.9 (median 18.2) on a uniform grid of 873,720 vertices, three
// runs each taken together on a loaded two-core machine
// (BenchmarkReorderSpMV in package adapt).
//
// Reorder is linear in the size of the mesh. The Hilbert keys come from a
// table that maps 4 levels of the curve per lookup. The longest prefix of
// vertices whose keys already ascend stays in place and is merged with
// the other vertices, sorted by a radix sort of their keys: when Refine
// has refined a renumbered mesh, that prefix holds every old vertex
// (unless a new vertex on a curve widens the bounding square), so only
// the new vertices are sorted. Edges are ordered by a counting sort on
// their low vertex and a sort of each bucket (of the vertex degree's size)
// by the high vertex, triangles by a counting sort whose last pass writes
// each triangle in its new place. The bounding square, the keys, each
// triangle's lowest vertex and the gathers of the coordinates and of the
// edge arrays run on up to
// GOMAXPROCS goroutines, each index written by one of them, so the result
// does not depend on GOMAXPROCS. On a mesh of 526,920 triangles refined
// from a renumbered one (the adaptive loop's case; BenchmarkReorder,
// parent=ordered) it took 68.5–102.8 ns per triangle (median 77.7); on
// the loop's mesh of 1.74e6 triangles in Refine's numbering throughout,
// 226.8–321.7 ns per triangle (median 251.9), 58.8–75.7 products with the
// renumbered matrix (median 69.2; BenchmarkReorderSpMV in package adapt);
// three runs each on a loaded two-core machine:
//
//	go test -run XXX -bench 'Reorder/n=1000000' -benchtime 3x -count 3 ./mesh
//	go test -run XXX -bench 'ReorderSpMV/dofs=1e\+06' -benchtime 3x -count 3 ./adapt
//
// A mesh with no triangles or with arrays of inconsistent lengths is
// rejected with an error wrapping ErrEmpty, ErrLength or ErrIndex.
//
// References:
//   - D. Hilbert, Über die stetige Abbildung einer Linie auf ein
//     Flächenstück, Math. Ann. 38 (1891) 459–460.
//   - H. Sagan, Space-Filling Curves, Springer, 1994.
func (m *Mesh) Reorder() (*Mesh, *Order, error) {
	if err := checkShape(m, "Reorder"); err != nil {
		return nil, nil, err
	}
	r, o, _ := m.reorder(true)
	return r, o, nil
}

// Renumber renumbers m in place, exactly as Reorder renumbers a copy, and
// returns the renumbering. Each array of m is replaced by a renumbered
// one, and a replaced array takes the next one of about its size (at most
// a quarter longer), so Renumber allocates less than half of what Reorder
// does (edges, edge tags, regions and coordinates: 30 of 66 bytes per
// triangle). It is meant for a mesh that nothing else refers to yet, such
// as one that Refine has just returned. Slices of
// m's arrays taken before the call (by a fem.Space made on m, say) must
// not be used after it. On error (ErrEmpty, ErrLength, ErrIndex: the
// checks of Reorder) m is not modified.
func (m *Mesh) Renumber() (*Order, error) {
	if err := checkShape(m, "Renumber"); err != nil {
		return nil, err
	}
	perm, _ := m.renumbering(true)
	// Arrays taken from the bin must not be much longer than needed: they
	// become the mesh's.
	perm.apply(m, m, &spare.Bin[int32]{Fit: 0.25})
	return perm.o, nil
}

// reorderGrain is the least number of indices per goroutine in Reorder's
// passes (common practice, no source: enough work to pay for a goroutine).
const reorderGrain = 1 << 14

// reorder renumbers m, which checkShape accepted, into a new mesh. With
// merge, the longest prefix of the vertices whose Hilbert keys already
// ascend (all of the old vertices of a renumbered mesh that Refine
// refined, while the bounding square stays the same) is kept as it is and
// merged with the rest, radix-sorted; without, every key is radix-sorted.
// Both give the same order: that of (key, index). kept is the length of
// the prefix kept.
func (m *Mesh) reorder(merge bool) (r *Mesh, o *Order, kept int) {
	perm, kept := m.renumbering(merge)
	r = &Mesh{Curves: m.Curves, pieces: m.pieces}
	perm.apply(r, m, nil)
	return r, perm.o, kept
}

// renumbering is a renumbering of a mesh: Order and its inverses.
type renumbering struct {
	o                *Order
	vnew, enew, tnew []int32 // per old vertex, edge, triangle: its new index
}

// renumbering computes the renumbering of m that Reorder documents; see
// reorder for merge.
func (m *Mesh) renumbering(merge bool) (p renumbering, kept int) {
	nv, nt, ne := m.NumVertices(), m.NumTriangles(), m.NumEdges()
	p.o = &Order{}
	p.vnew = make([]int32, nv)
	p.o.Vertex, kept = hilbertOrder(m.X, p.vnew, merge)
	vnew := p.vnew

	// Edges by (low, high) new vertex: a counting sort on the low vertex,
	// then a sort of each bucket by the high vertex. Each bucket holds, per
	// slot, high·2³² + old edge.
	start := make([]int32, nv+1)
	for e := range ne {
		start[min(vnew[m.Edge[2*e]], vnew[m.Edge[2*e+1]])+1]++
	}
	for v := range nv {
		start[v+1] += start[v]
	}
	slot := make([]int64, ne)
	fill := make([]int32, nv)
	copy(fill, start)
	for e := range ne {
		a, b := vnew[m.Edge[2*e]], vnew[m.Edge[2*e+1]]
		l := min(a, b)
		slot[fill[l]] = int64(max(a, b))<<32 | int64(e)
		fill[l]++
	}
	p.o.Edge = make([]int32, ne)
	p.enew = make([]int32, ne)
	parallel.For(nv, reorderGrain, func(lo, hi int) error {
		for v := lo; v < hi; v++ {
			b := start[v]
			s := slot[b:start[v+1]]
			if len(s) > 1 {
				slices.Sort(s)
			}
			for i, k := range s {
				j, e := b+int32(i), int32(k)
				p.o.Edge[j] = e
				p.enew[e] = j
			}
		}
		return nil
	})

	// Triangles by their lowest new vertex: a counting sort, stable. tnew
	// holds the lowest vertex of each triangle, then its new index.
	p.tnew = make([]int32, nt)
	tnew := p.tnew
	parallel.For(nt, reorderGrain, func(lo, hi int) error {
		for k := lo; k < hi; k++ {
			tnew[k] = min(vnew[m.Tri[3*k]], vnew[m.Tri[3*k+1]], vnew[m.Tri[3*k+2]])
		}
		return nil
	})
	clear(start)
	for _, l := range tnew {
		start[l+1]++
	}
	for v := range nv {
		start[v+1] += start[v]
	}
	p.o.Triangle = make([]int32, nt)
	for k, l := range tnew {
		j := start[l]
		start[l]++
		tnew[k] = j
		p.o.Triangle[j] = int32(k)
	}
	return p, kept
}

// apply writes the arrays of src renumbered by p into r, each entry by
// itself (a gather through the permutations, on up to GOMAXPROCS
// goroutines). r may be src itself: each array is gathered from its own
// old values into a fresh one, which then replaces it. With bin not nil,
// the fresh arrays are taken from bin where one is long enough, and the
// arrays replaced are put into it.
func (p renumbering) apply(r, src *Mesh, bin *spare.Bin[int32]) {
	nv, nt, ne := src.NumVertices(), src.NumTriangles(), src.NumEdges()
	o, vnew, enew, tnew := p.o, p.vnew, p.enew, p.tnew
	// gather sets *dst to a new array of n·w entries whose i-th group of
	// w is set by f from index i's old entity; old is *dst's old value.
	gather := func(dst *[]int32, old []int32, count, w int, f func(out, old []int32, i int)) {
		out := bin.Take(count * w)
		parallel.For(count, reorderGrain, func(lo, hi int) error {
			for i := lo; i < hi; i++ {
				f(out, old, i)
			}
			return nil
		})
		*dst = out
		bin.Give(old)
	}
	// Largest first, so that each array given up can take the next one.
	gather(&r.Edge, src.Edge, ne, 2, func(out, old []int32, j int) {
		e := o.Edge[j]
		a, b := vnew[old[2*e]], vnew[old[2*e+1]]
		out[2*j], out[2*j+1] = min(a, b), max(a, b)
	})
	gather(&r.EdgeTri, src.EdgeTri, ne, 2, func(out, old []int32, j int) {
		e := o.Edge[j]
		for s := range int32(2) {
			out[2*int32(j)+s] = -1
			if t := old[2*e+s]; t >= 0 {
				out[2*int32(j)+s] = tnew[t]
			}
		}
	})
	gather(&r.Tri, src.Tri, nt, 3, func(out, old []int32, j int) {
		k := o.Triangle[j]
		for i := range int32(3) {
			out[3*int32(j)+i] = vnew[old[3*k+i]]
		}
	})
	gather(&r.TriEdge, src.TriEdge, nt, 3, func(out, old []int32, j int) {
		k := o.Triangle[j]
		for i := range int32(3) {
			out[3*int32(j)+i] = enew[old[3*k+i]]
		}
	})
	gather(&r.EdgeTag, src.EdgeTag, ne, 1, func(out, old []int32, j int) { out[j] = old[o.Edge[j]] })
	if src.EdgeCurve != nil {
		gather(&r.EdgeCurve, src.EdgeCurve, ne, 1, func(out, old []int32, j int) { out[j] = old[o.Edge[j]] })
	}
	gather(&r.Region, src.Region, nt, 1, func(out, old []int32, j int) { out[j] = old[o.Triangle[j]] })
	x := make([]float64, 2*nv)
	parallel.For(nv, reorderGrain, func(lo, hi int) error {
		for i := lo; i < hi; i++ {
			v := o.Vertex[i]
			x[2*i], x[2*i+1] = src.X[2*v], src.X[2*v+1]
		}
		return nil
	})
	r.X = x
}

// hilbertOrder returns the vertices of x (2 coordinates per vertex) in the
// order of their Hilbert keys, ties in index order, and writes the inverse
// permutation into vnew. With merge, the longest prefix of vertices whose
// keys ascend is merged with the radix-sorted rest, else all keys are
// radix-sorted; the order is the same. kept is the prefix's length.
func hilbertOrder(x []float64, vnew []int32, merge bool) (order []int32, kept int) {
	nv := len(x) / 2
	// The bounding box, per block of vertices, then over the blocks in
	// order (min and max do not depend on the order anyway).
	nb := (nv + reorderGrain - 1) / reorderGrain
	box := make([][4]float64, nb)
	parallel.For(nb, 1, func(lo, hi int) error {
		for blk := lo; blk < hi; blk++ {
			x0, y0 := math.Inf(1), math.Inf(1)
			x1, y1 := math.Inf(-1), math.Inf(-1)
			for i := blk * reorderGrain; i < min(nv, (blk+1)*reorderGrain); i++ {
				x0, x1 = min(x0, x[2*i]), max(x1, x[2*i])
				y0, y1 = min(y0, x[2*i+1]), max(y1, x[2*i+1])
			}
			box[blk] = [4]float64{x0, y0, x1, y1}
		}
		return nil
	})
	x0, y0 := math.Inf(1), math.Inf(1)
	x1, y1 := math.Inf(-1), math.Inf(-1)
	for _, b := range box {
		x0, y0 = min(x0, b[0]), min(y0, b[1])
		x1, y1 = max(x1, b[2]), max(y1, b[3])
	}
	// One scale for both axes keeps the curve's cells square.
	side := max(x1-x0, y1-y0)
	scale := 0.0
	if side > 0 {
		scale = math.Ldexp(1, 32) / side
	}
	keys := make([]uint64, nv)
	parallel.For(nv, reorderGrain, func(lo, hi int) error {
		for i := lo; i < hi; i++ {
			keys[i] = hilbertKey(quantise(x[2*i]-x0, scale), quantise(x[2*i+1]-y0, scale))
		}
		return nil
	})
	p := 0 // keys[:p] ascend
	if merge {
		p = ascending(keys)
	}
	order = make([]int32, nv)
	if p == nv {
		for i := range order {
			order[i] = int32(i)
			vnew[i] = int32(i)
		}
		return order, p
	}
	idx := make([]int32, nv-p)
	for i := range idx {
		idx[i] = int32(p + i)
	}
	sk, si := radixSort(keys[p:], idx) // keys[:p] stay as they are
	// Merge keys[:p] (vertices 0, ..., p-1) and the sorted rest; on equal
	// keys the prefix, of lower indices, goes first.
	i, j := 0, 0
	for n := range order {
		if j == len(si) || (i < p && keys[i] <= sk[j]) {
			order[n] = int32(i)
			vnew[i] = int32(n)
			i++
		} else {
			order[n] = si[j]
			vnew[si[j]] = int32(n)
			j++
		}
	}
	return order, p
}

// ascending returns the length of the longest prefix of keys that does
// not descend.
func ascending(keys []uint64) int {
	for i := 1; i < len(keys); i++ {
		if keys[i] < keys[i-1] {
			return i
		}
	}
	return len(keys)
}

// quantise maps d ∈ [0, side] to a cell index in [0, 2³²).
func quantise(d, scale float64) uint32 {
	q := d * scale
	if q >= math.MaxUint32 {
		return math.MaxUint32
	}
	return uint32(q)
}

// hilbertTable maps (state, 4 bits of x, 4 bits of y) to 8 bits of the
// Hilbert key and the next state; see hilbertKey.
var hilbertTable = makeHilbertTable()

// makeHilbertTable builds hilbertTable from the one-level rule of the
// curve. A state is the transformation of the coordinates' remaining bits
// into the frame of the current sub-square: bit 0 swaps x and y, bit 1
// complements both. In that frame the quadrant bits (bx, by) give the key
// digit 3·bx XOR by (quadrants (0,0), (0,1), (1,1), (1,0) in curve order);
// a quadrant with by = 0 changes the frame: a swap, and for bx = 1 also a
// complement. The two commute, so the states compose by XOR.
func makeHilbertTable() *[1024]uint16 {
	var t [1024]uint16
	for s := range 4 {
		for xn := range 16 {
			for yn := range 16 {
				st, d := s, 0
				for b := 3; b >= 0; b-- {
					bx, by := xn>>b&1, yn>>b&1
					if st&2 != 0 {
						bx, by = bx^1, by^1
					}
					if st&1 != 0 {
						bx, by = by, bx
					}
					d = d<<2 | ((3 * bx) ^ by)
					if by == 0 {
						if bx == 1 {
							st ^= 2
						}
						st ^= 1
					}
				}
				t[s<<8|xn<<4|yn] = uint16(d<<2 | st)
			}
		}
	}
	return &t
}

// hilbertKey returns the index of cell (x, y) of the 2³² × 2³² grid along
// the Hilbert curve.
func hilbertKey(x, y uint32) uint64 {
	var key uint64
	st := uint16(0)
	for shift := 28; shift >= 0; shift -= 4 {
		e := hilbertTable[st<<8|uint16(x>>shift&15)<<4|uint16(y>>shift&15)]
		key = key<<8 | uint64(e>>2)
		st = e & 3
	}
	return key
}

// radixMin is the largest number of keys that radixSort sorts by
// comparisons (smallSort) rather than by digits: each digit pass clears a
// table of 2¹⁶ counts, which on the small meshes of an adaptive loop's first
// steps costs more than the sort itself. On random keys the two took 8.8
// and 227 µs for 256 keys, 310 and 300 µs for 4096, 1.7 and 0.50 ms for
// 16384 (one run each, machine shared; a benchmark written for the
// measurement and not kept).
const radixMin = 4096

// smallSort is radixSort by comparisons, for short inputs: the pairs
// sorted by key, then by their index in keys (so equal keys keep their
// order).
func smallSort(keys []uint64, idx []int32) ([]uint64, []int32) {
	type pair struct {
		key uint64
		pos int32
	}
	ps := make([]pair, len(keys))
	for i, k := range keys {
		ps[i] = pair{k, int32(i)}
	}
	slices.SortFunc(ps, func(a, b pair) int {
		if c := cmp.Compare(a.key, b.key); c != 0 {
			return c
		}
		return cmp.Compare(a.pos, b.pos)
	})
	k2, i2 := make([]uint64, len(keys)), make([]int32, len(keys))
	for i, p := range ps {
		k2[i], i2[i] = p.key, idx[p.pos]
	}
	return k2, i2
}

// radixSort sorts keys ascending, carrying idx along, and returns the
// sorted keys and indices; equal keys keep their order. It may use keys and idx as
// scratch. It is a least-significant-digit radix sort with 16-bit digits;
// a pass whose digit is the same for every key is skipped; it is linear,
// where slices.SortStableFunc is not: on the keys of 236,477 vertices it
// took 19.3 ns per vertex, slices.SortStableFunc on (key, index) pairs 325
// (go test -run XXX -bench HilbertSort -benchtime 5x ./mesh, one run).
func radixSort(keys []uint64, idx []int32) ([]uint64, []int32) {
	n := len(keys)
	if n == 0 {
		return keys, idx
	}
	if n <= radixMin {
		return smallSort(keys, idx)
	}
	k2, i2 := make([]uint64, n), make([]int32, n)
	var count [1 << 16]int32
	for shift := 0; shift < 64; shift += 16 {
		clear(count[:])
		for _, k := range keys {
			count[k>>shift&0xffff]++
		}
		if int(count[keys[0]>>shift&0xffff]) == n {
			continue
		}
		var sum int32
		for d, c := range count {
			count[d] = sum
			sum += c
		}
		for j, k := range keys {
			d := k >> shift & 0xffff
			k2[count[d]] = k
			i2[count[d]] = idx[j]
			count[d]++
		}
		keys, k2 = k2, keys
		idx, i2 = i2, idx
	}
	return keys, idx
}
