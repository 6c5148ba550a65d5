package mesh

import (
	"math"
	"slices"
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
// Reorder is linear in the size of the mesh: the Hilbert keys come from a
// table that maps 4 levels of the curve per lookup, the vertices are
// sorted by a radix sort of the keys, triangles and edges by counting
// sorts on a vertex index (edges then per low vertex by their high vertex,
// a bucket whose size is the vertex degree). Its cost is that of gathering
// every array through the permutations: on the loop's mesh of 1.74e6
// triangles in Refine's numbering it took 1,051–2,005 ns per triangle
// (median 1,164), 234–485 products with the renumbered matrix (median
// 259), in the same runs.
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
	nv, nt, ne := m.NumVertices(), m.NumTriangles(), m.NumEdges()
	o := &Order{Vertex: hilbertOrder(m.X)}
	vnew := make([]int32, nv)
	for i, v := range o.Vertex {
		vnew[v] = int32(i)
	}

	// Triangles by their lowest new vertex: a counting sort, stable.
	low := make([]int32, nt)
	start := make([]int32, nv+1)
	for k := range nt {
		a, b, c := vnew[m.Tri[3*k]], vnew[m.Tri[3*k+1]], vnew[m.Tri[3*k+2]]
		low[k] = min(a, b, c)
		start[low[k]+1]++
	}
	for v := range nv {
		start[v+1] += start[v]
	}
	o.Triangle = make([]int32, nt)
	tnew := make([]int32, nt)
	for k, l := range low {
		tnew[k] = start[l]
		o.Triangle[start[l]] = int32(k)
		start[l]++
	}

	// Edges by (low, high) new vertex: a counting sort on the low vertex,
	// then a sort of each bucket by the high vertex.
	clear(start)
	for e := range ne {
		start[min(vnew[m.Edge[2*e]], vnew[m.Edge[2*e+1]])+1]++
	}
	for v := range nv {
		start[v+1] += start[v]
	}
	key := make([]int64, ne) // high vertex·2³² + old edge
	fill := slices.Clone(start[:nv])
	for e := range ne {
		a, b := vnew[m.Edge[2*e]], vnew[m.Edge[2*e+1]]
		lo, hi := min(a, b), max(a, b)
		key[fill[lo]] = int64(hi)<<32 | int64(e)
		fill[lo]++
	}
	for v := range nv {
		slices.Sort(key[start[v]:start[v+1]])
	}
	o.Edge = make([]int32, ne)
	enew := make([]int32, ne)
	for i, k := range key {
		o.Edge[i] = int32(k)
		enew[int32(k)] = int32(i)
	}

	r := &Mesh{
		X:       make([]float64, 2*nv),
		Tri:     make([]int32, 3*nt),
		Region:  make([]int32, nt),
		Edge:    make([]int32, 2*ne),
		TriEdge: make([]int32, 3*nt),
		EdgeTri: make([]int32, 2*ne),
		EdgeTag: make([]int32, ne),
		pieces:  m.pieces,
	}
	for i, v := range o.Vertex {
		r.X[2*i], r.X[2*i+1] = m.X[2*v], m.X[2*v+1]
	}
	for k, t := range o.Triangle {
		for j := range 3 {
			r.Tri[3*k+j] = vnew[m.Tri[3*int(t)+j]]
			r.TriEdge[3*k+j] = enew[m.TriEdge[3*int(t)+j]]
		}
		r.Region[k] = m.Region[t]
	}
	for i, e := range o.Edge {
		a, b := vnew[m.Edge[2*e]], vnew[m.Edge[2*e+1]]
		r.Edge[2*i], r.Edge[2*i+1] = min(a, b), max(a, b)
		for s := range 2 {
			r.EdgeTri[2*i+s] = -1
			if t := m.EdgeTri[2*e+int32(s)]; t >= 0 {
				r.EdgeTri[2*i+s] = tnew[t]
			}
		}
		r.EdgeTag[i] = m.EdgeTag[e]
	}
	if m.EdgeCurve != nil {
		r.Curves = m.Curves
		r.EdgeCurve = make([]int32, ne)
		for i, e := range o.Edge {
			r.EdgeCurve[i] = m.EdgeCurve[e]
		}
	}
	return r, o, nil
}

// hilbertOrder returns the vertices of x (2 coordinates per vertex) in the
// order of their Hilbert keys, ties in index order.
func hilbertOrder(x []float64) []int32 {
	nv := len(x) / 2
	x0, y0 := math.Inf(1), math.Inf(1)
	x1, y1 := math.Inf(-1), math.Inf(-1)
	for i := range nv {
		x0, x1 = min(x0, x[2*i]), max(x1, x[2*i])
		y0, y1 = min(y0, x[2*i+1]), max(y1, x[2*i+1])
	}
	// One scale for both axes keeps the curve's cells square.
	side := max(x1-x0, y1-y0)
	scale := 0.0
	if side > 0 {
		scale = math.Ldexp(1, 32) / side
	}
	keys := make([]uint64, nv)
	idx := make([]int32, nv)
	for i := range nv {
		keys[i] = hilbertKey(quantise(x[2*i]-x0, scale), quantise(x[2*i+1]-y0, scale))
		idx[i] = int32(i)
	}
	return radixSort(keys, idx)
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

// radixSort sorts keys ascending, carrying idx along, and returns the
// sorted indices; equal keys keep their order. It may use keys and idx as
// scratch. It is a least-significant-digit radix sort with 16-bit digits;
// a pass whose digit is the same for every key is skipped; it is linear,
// where slices.SortStableFunc is not: on the keys of 236,477 vertices it
// took 19.3 ns per vertex, slices.SortStableFunc on (key, index) pairs 325
// (go test -run XXX -bench HilbertSort -benchtime 5x ./mesh, one run).
func radixSort(keys []uint64, idx []int32) []int32 {
	n := len(keys)
	if n == 0 {
		return idx
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
	return idx
}
