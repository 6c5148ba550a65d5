package mesh

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"sort"
)

// Interior is the EdgeTag of an edge with a triangle on each side.
const Interior int32 = -1

// Mesh is a conforming triangle mesh with its derived topology.
//
// The arrays are laid out as flat slices ("struct of arrays") with int32
// indices. A Mesh is read-only once built: New and the generators and
// refinements fill every field, and code that changes a field by hand must
// build a new Mesh with New instead.
type Mesh struct {
	X      []float64 // 2 per vertex: X[2i], X[2i+1] are the coordinates of vertex i
	Tri    []int32   // 3 per triangle, counter-clockwise; refinement edge is Tri[3k+1]-Tri[3k+2], opposite the newest vertex Tri[3k]
	Region []int32   // 1 per triangle: the material or subdomain tag

	// Derived topology, built by sorting.
	Edge    []int32 // 2 per edge: its end vertices, Edge[2e] < Edge[2e+1]; New numbers edges in (low, high) order, Refine appends
	TriEdge []int32 // 3 per triangle: TriEdge[3k+i] is the edge opposite local vertex i, so TriEdge[3k] is the refinement edge
	EdgeTri []int32 // 2 per edge: the triangles on each side; EdgeTri[2e+1] is -1 on the boundary
	EdgeTag []int32 // 1 per edge: Interior for an interior edge, else the boundary tag (0 where none was given)

	// Curved edges, on the boundary or on an interface between regions
	// (see Triangulate, WithCurves and Refine); both nil when every edge
	// is straight.
	Curves    []Curve // the curves that edges follow
	EdgeCurve []int32 // 1 per edge: the index into Curves of the curve the edge follows, or -1 (straight)

	pieces int // number of connected pieces, 0 if not known
}

// Arrays is the raw description of a mesh handed to New. Region may be nil
// (every triangle gets region 0). Bnd lists boundary edges as vertex pairs,
// 2 per edge in either order, with one tag per edge in BndTag; boundary edges
// not listed get tag 0.
type Arrays struct {
	X      []float64
	Tri    []int32
	Region []int32
	Bnd    []int32
	BndTag []int32
}

// NumVertices returns the number of vertices.
func (m *Mesh) NumVertices() int { return len(m.X) / 2 }

// NumTriangles returns the number of triangles.
func (m *Mesh) NumTriangles() int { return len(m.Tri) / 3 }

// NumEdges returns the number of edges.
func (m *Mesh) NumEdges() int { return len(m.Edge) / 2 }

// IsBoundary reports whether edge e lies on the boundary.
func (m *Mesh) IsBoundary(e int) bool { return m.EdgeTri[2*e+1] < 0 }

// Vertex returns the coordinates of vertex i.
func (m *Mesh) Vertex(i int) (x, y float64) { return m.X[2*i], m.X[2*i+1] }

// Area returns the area of triangle k.
func (m *Mesh) Area(k int) float64 {
	return 0.5 * cross(m.X, m.Tri[3*k], m.Tri[3*k+1], m.Tri[3*k+2])
}

// Diameter returns h_T, the length of the longest edge of triangle k.
func (m *Mesh) Diameter(k int) float64 {
	a, b, c := m.Tri[3*k], m.Tri[3*k+1], m.Tri[3*k+2]
	return math.Sqrt(max(dist2(m.X, a, b), dist2(m.X, b, c), dist2(m.X, c, a)))
}

// EdgeLength returns the length of edge e.
func (m *Mesh) EdgeLength(e int) float64 {
	return math.Sqrt(dist2(m.X, m.Edge[2*e], m.Edge[2*e+1]))
}

// BoundaryEdges returns the boundary edges as vertex pairs, ordered
// counter-clockwise with respect to their triangle (the domain lies to the
// left of a→b), and their tags, in edge order.
func (m *Mesh) BoundaryEdges() (ab []int32, tag []int32) {
	for e := range m.NumEdges() {
		if m.EdgeTri[2*e+1] >= 0 {
			continue
		}
		k := int(m.EdgeTri[2*e])
		for i := range 3 {
			if int(m.TriEdge[3*k+i]) == e {
				ab = append(ab, m.Tri[3*k+(i+1)%3], m.Tri[3*k+(i+2)%3])
			}
		}
		tag = append(tag, m.EdgeTag[e])
	}
	return ab, tag
}

// cross returns twice the signed area of triangle (a, b, c).
func cross(x []float64, a, b, c int32) float64 {
	ax, ay := x[2*a], x[2*a+1]
	return (x[2*b]-ax)*(x[2*c+1]-ay) - (x[2*b+1]-ay)*(x[2*c]-ax)
}

func dist2(x []float64, a, b int32) float64 {
	dx, dy := x[2*b]-x[2*a], x[2*b+1]-x[2*a+1]
	return dx*dx + dy*dy
}

// New validates the arrays and builds a Mesh with its topology. The slices
// are copied. Triangles given clockwise are reoriented by swapping their
// last two vertices (which keeps the refinement edge); their indices are
// returned in reoriented.
//
// New rejects, with a *ValidationError wrapping one of the Err values:
// mismatched lengths, an empty mesh, a vertex index out of range, a
// triangle that repeats a vertex, NaN or infinite coordinates, a zero-area
// triangle, an edge shared by more than two triangles or by two triangles
// on the same side, a boundary edge that is not an edge, is interior, is
// listed twice or carries a negative tag, a vertex used by no triangle, and
// vertices that share their coordinates other than on the faces of a crack
// (see below).
//
// # Coincident vertices
//
// Two vertices with the same coordinates are accepted only as the two
// faces of a crack (a slit), as Slit makes them: each copy must be an
// end of a boundary edge listed in a.Bnd, and the copies must lie in the
// same connected piece of the mesh, which holds when the crack ends inside
// the domain or the domain reaches around it. Anything else is rejected
// with ErrCoincident, located at the copy with the higher index: copies
// that no listed boundary edge declares (vertices that were meant to be
// one, as when two meshes are joined without merging their common
// vertices), and copies that the crack cuts into separate pieces (an
// interface between two meshes, duplicated end to end). Vertices count as
// the same when their coordinates compare equal; a crack's faces must use
// exactly equal coordinates for its copies.
//
// New runs in time O(N log N) for a mesh of N vertices and triangles: the
// search for coincident vertices sorts the vertices by their coordinates;
// everything else is linear.
func New(a Arrays) (m *Mesh, reoriented []int32, err error) {
	if len(a.X)%2 != 0 {
		return nil, nil, lenErr("len(X) = %d is odd", len(a.X))
	}
	if len(a.Tri)%3 != 0 {
		return nil, nil, lenErr("len(Tri) = %d is not a multiple of 3", len(a.Tri))
	}
	nv, nt := len(a.X)/2, len(a.Tri)/3
	if a.Region != nil && len(a.Region) != nt {
		return nil, nil, lenErr("len(Region) = %d, want %d", len(a.Region), nt)
	}
	if len(a.Bnd)%2 != 0 || len(a.Bnd)/2 != len(a.BndTag) {
		return nil, nil, lenErr("len(Bnd) = %d, len(BndTag) = %d, want 2 vertices per tag", len(a.Bnd), len(a.BndTag))
	}
	if nt == 0 {
		return nil, nil, triErr(-1, ErrEmpty)
	}
	if nv > math.MaxInt32/2 {
		return nil, nil, lenErr("%d vertices is more than int32 indices allow", nv)
	}
	for i, v := range a.X {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, nil, vertErr(i/2, fmt.Errorf("%w: coordinate %v", ErrNotFinite, v))
		}
	}
	m = &Mesh{
		X:      append([]float64(nil), a.X...),
		Tri:    append([]int32(nil), a.Tri...),
		Region: make([]int32, nt),
	}
	copy(m.Region, a.Region)
	used := make([]bool, nv)
	for k := range nt {
		t := m.Tri[3*k : 3*k+3]
		for _, v := range t {
			if v < 0 || int(v) >= nv {
				return nil, nil, triErr(k, ErrIndex)
			}
			used[v] = true
		}
		if t[0] == t[1] || t[1] == t[2] || t[2] == t[0] {
			return nil, nil, triErr(k, ErrRepeatedVertex)
		}
		d := cross(m.X, t[0], t[1], t[2])
		if math.IsNaN(d) || math.IsInf(d, 0) {
			return nil, nil, triErr(k, fmt.Errorf("%w: area", ErrNotFinite))
		}
		h2 := max(dist2(m.X, t[0], t[1]), dist2(m.X, t[1], t[2]), dist2(m.X, t[2], t[0]))
		if math.Abs(d) <= degenerateTol*h2 {
			return nil, nil, triErr(k, ErrZeroArea)
		}
		if d < 0 {
			t[1], t[2] = t[2], t[1]
			reoriented = append(reoriented, int32(k))
		}
	}
	for v, u := range used {
		if !u {
			return nil, nil, vertErr(v, ErrUnusedVertex)
		}
	}
	if err := m.buildTopology(); err != nil {
		return nil, nil, err
	}
	if err := m.tagBoundary(a.Bnd, a.BndTag); err != nil {
		return nil, nil, err
	}
	var piece []int32
	piece, m.pieces = m.Components()
	if err := m.checkCoincident(a.Bnd, piece); err != nil {
		return nil, nil, err
	}
	return m, reoriented, nil
}

// checkCoincident applies New's rule for vertices that share their
// coordinates: each copy is an end of a listed boundary edge (bnd, already
// checked to be boundary edges) and all copies lie in the same piece
// (piece holds the piece of each triangle). The vertices are sorted by
// (x, y, index), so copies are neighbours and the lower index comes first.
func (m *Mesh) checkCoincident(bnd []int32, piece []int32) error {
	nv := m.NumVertices()
	type point struct {
		x, y float64
		v    int32
	}
	order := make([]point, nv)
	x := m.X
	for i := range order {
		order[i] = point{x[2*i], x[2*i+1], int32(i)}
	}
	slices.SortFunc(order, func(a, b point) int {
		if c := cmp.Compare(a.x, b.x); c != 0 {
			return c
		}
		if c := cmp.Compare(a.y, b.y); c != 0 {
			return c
		}
		return cmp.Compare(a.v, b.v)
	})
	var listed []bool     // whether a vertex ends a listed boundary edge
	var vertPiece []int32 // the piece of some triangle at each vertex
	for p := 1; p < nv; p++ {
		if order[p-1].x != order[p].x || order[p-1].y != order[p].y {
			continue
		}
		a, b := order[p-1].v, order[p].v
		if listed == nil {
			listed = make([]bool, nv)
			for _, v := range bnd {
				listed[v] = true
			}
			vertPiece = make([]int32, nv)
			for k, v := range m.Tri {
				vertPiece[v] = piece[k/3]
			}
		}
		switch {
		case !listed[a] || !listed[b]:
			v := a
			if !listed[b] {
				v = b
			}
			return vertErr(int(b), fmt.Errorf("%w: vertex %d is at (%g, %g) too, and vertex %d ends no listed boundary edge (list a crack's faces in Bnd, or merge the copies)",
				ErrCoincident, a, x[2*a], x[2*a+1], v))
		case vertPiece[a] != vertPiece[b]:
			return vertErr(int(b), fmt.Errorf("%w: vertex %d is at (%g, %g) too, and the two lie in separate pieces of the mesh (a crack that cuts the mesh apart; merge the copies)",
				ErrCoincident, a, x[2*a], x[2*a+1]))
		}
	}
	return nil
}

// degenerateTol is the smallest |sin| of an angle, in effect, that New
// accepts: a triangle with twice its area below degenerateTol·h_T² is
// treated as having zero area. The value is a few hundred units of
// rounding of float64 (common practice, no source).
const degenerateTol = 1e-13

// buildTopology numbers the edges and fills Edge, TriEdge, EdgeTri and
// EdgeTag. The 3·nt half-edges are sorted by (low vertex, high vertex) with
// a counting sort on the low vertex followed by a sort inside each bucket
// (by high vertex, then half-edge index), which is linear for meshes of
// bounded vertex degree.
func (m *Mesh) buildTopology() error {
	nv, nt := m.NumVertices(), m.NumTriangles()
	nh := 3 * nt
	start := make([]int32, nv+1)
	lohi := func(h int) (int32, int32) {
		k, i := h/3, h%3
		a, b := m.Tri[3*k+(i+1)%3], m.Tri[3*k+(i+2)%3]
		return min(a, b), max(a, b)
	}
	for h := range nh {
		lo, _ := lohi(h)
		start[lo+1]++
	}
	for v := range nv {
		start[v+1] += start[v]
	}
	// key: hi·2³² + h per half-edge, bucketed by lo, then sorted per bucket.
	key := make([]int64, nh)
	fill := append([]int32(nil), start[:nv]...)
	for h := range nh {
		lo, hi := lohi(h)
		key[fill[lo]] = int64(hi)<<32 | int64(h)
		fill[lo]++
	}
	for v := range nv {
		slices.Sort(key[start[v]:start[v+1]])
	}
	order := make([]int32, nh) // half-edges sorted by lo, then hi, then index
	for p, k := range key {
		order[p] = int32(k)
	}
	m.TriEdge = make([]int32, nh)
	m.Edge = make([]int32, 0, 2*(nh/2+nv))
	m.EdgeTri = make([]int32, 0, nh/2+nv)
	for p := 0; p < nh; {
		q := p + 1
		lo, hi := lohi(int(order[p]))
		for q < nh {
			l2, h2 := lohi(int(order[q]))
			if l2 != lo || h2 != hi {
				break
			}
			q++
		}
		e := int32(len(m.Edge) / 2)
		h0 := int(order[p])
		switch q - p {
		case 1:
			m.EdgeTri = append(m.EdgeTri, int32(h0/3), -1)
		case 2:
			h1 := int(order[p+1])
			// Both triangles are counter-clockwise, so they must traverse
			// the shared edge in opposite directions.
			k0, i0 := h0/3, h0%3
			k1, i1 := h1/3, h1%3
			if m.Tri[3*k0+(i0+1)%3] == m.Tri[3*k1+(i1+1)%3] {
				return triErr(k1, ErrOverlap)
			}
			m.EdgeTri = append(m.EdgeTri, int32(k0), int32(k1))
			m.TriEdge[h1] = e
		default:
			return triErr(int(order[p+2])/3, ErrNonManifold)
		}
		m.TriEdge[h0] = e
		m.Edge = append(m.Edge, lo, hi)
		p = q
	}
	ne := len(m.Edge) / 2
	m.EdgeTag = make([]int32, ne)
	for e := range ne {
		if m.EdgeTri[2*e+1] >= 0 {
			m.EdgeTag[e] = Interior
		}
	}
	return nil
}

// findEdge returns the index of the edge joining a and b, or -1. In a mesh
// just built by buildTopology edges are sorted by (low, high) vertex, so a
// binary search finds it.
func (m *Mesh) findEdge(a, b int32) int {
	lo, hi := min(a, b), max(a, b)
	// sort.Search, as slices.BinarySearchFunc needs one element per edge
	// and the edges are pairs in one flat slice.
	i := sort.Search(m.NumEdges(), func(h int) bool {
		el, eh := m.Edge[2*h], m.Edge[2*h+1]
		return el > lo || (el == lo && eh >= hi)
	})
	if i < m.NumEdges() && m.Edge[2*i] == lo && m.Edge[2*i+1] == hi {
		return i
	}
	return -1
}

func (m *Mesh) tagBoundary(bnd, tag []int32) error {
	nv := int32(m.NumVertices())
	seen := make([]bool, m.NumEdges())
	for b := range tag {
		a, c := bnd[2*b], bnd[2*b+1]
		if a < 0 || a >= nv || c < 0 || c >= nv {
			return edgeErr(b, ErrIndex)
		}
		if tag[b] < 0 {
			return edgeErr(b, ErrNegativeTag)
		}
		e := m.findEdge(a, c)
		switch {
		case e < 0:
			return edgeErr(b, ErrNotAnEdge)
		case m.EdgeTri[2*e+1] >= 0:
			return edgeErr(b, ErrNotBoundary)
		case seen[e]:
			return edgeErr(b, ErrDuplicateEdge)
		}
		seen[e] = true
		m.EdgeTag[e] = tag[b]
	}
	return nil
}
