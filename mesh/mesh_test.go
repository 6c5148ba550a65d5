package mesh

import (
	"errors"
	"math"
	"slices"
	"testing"
)

// square returns the arrays of the unit square cut into two triangles.
func square() Arrays {
	return Arrays{
		X:   []float64{0, 0, 1, 0, 1, 1, 0, 1},
		Tri: []int32{1, 2, 0, 3, 0, 2},
	}
}

func TestNewRejects(t *testing.T) {
	t.Parallel()
	nan := math.NaN()
	tests := []struct {
		name     string
		a        Arrays
		want     error
		triangle int
		vertex   int
		edge     int
	}{
		{"odd X", Arrays{X: []float64{0, 0, 1}, Tri: []int32{0, 1, 2}}, ErrLength, -1, -1, -1},
		{"short Tri", Arrays{X: square().X, Tri: []int32{0, 1}}, ErrLength, -1, -1, -1},
		{"region length", Arrays{X: square().X, Tri: square().Tri, Region: []int32{1}}, ErrLength, -1, -1, -1},
		{"tag length", Arrays{X: square().X, Tri: square().Tri, Bnd: []int32{0, 1}}, ErrLength, -1, -1, -1},
		{"empty", Arrays{}, ErrEmpty, -1, -1, -1},
		{"index high", Arrays{X: square().X, Tri: []int32{1, 2, 0, 3, 0, 4}}, ErrIndex, 1, -1, -1},
		{"index negative", Arrays{X: square().X, Tri: []int32{1, 2, -1, 3, 0, 2}}, ErrIndex, 0, -1, -1},
		{"repeated vertex", Arrays{X: square().X, Tri: []int32{1, 2, 0, 3, 3, 2}}, ErrRepeatedVertex, 1, -1, -1},
		{"NaN coordinate", Arrays{X: []float64{0, 0, 1, nan, 1, 1, 0, 1}, Tri: square().Tri}, ErrNotFinite, -1, 1, -1},
		{"Inf coordinate", Arrays{X: []float64{0, 0, 1, 0, math.Inf(1), 1, 0, 1}, Tri: square().Tri}, ErrNotFinite, -1, 2, -1},
		{"overflowing area", Arrays{X: []float64{0, 0, 1e300, 0, 0, 1e300}, Tri: []int32{0, 1, 2}}, ErrNotFinite, 0, -1, -1},
		{"zero area", Arrays{X: []float64{0, 0, 1, 0, 2, 0}, Tri: []int32{0, 1, 2}}, ErrZeroArea, 0, -1, -1},
		{"unused vertex", Arrays{X: append(square().X, 5, 5), Tri: square().Tri}, ErrUnusedVertex, -1, 4, -1},
		{"duplicated triangle", Arrays{X: square().X, Tri: []int32{1, 2, 0, 3, 0, 2, 0, 1, 2}}, ErrOverlap, 2, -1, -1},
		{"non-manifold edge", Arrays{
			// Three triangles on edge 0-1, two of them folded over.
			X:   []float64{0, 0, 1, 0, 0.5, 1, 0.5, -1, 0.5, 2},
			Tri: []int32{0, 1, 2, 1, 0, 3, 0, 1, 4},
		}, ErrNonManifold, 2, -1, -1},
		{"boundary edge not an edge", Arrays{X: square().X, Tri: square().Tri, Bnd: []int32{1, 3}, BndTag: []int32{1}}, ErrNotAnEdge, -1, -1, 0},
		{"tagged interior edge", Arrays{X: square().X, Tri: square().Tri, Bnd: []int32{0, 1, 0, 2}, BndTag: []int32{1, 2}}, ErrNotBoundary, -1, -1, 1},
		{"boundary edge twice", Arrays{X: square().X, Tri: square().Tri, Bnd: []int32{0, 1, 1, 0}, BndTag: []int32{1, 2}}, ErrDuplicateEdge, -1, -1, 1},
		{"negative tag", Arrays{X: square().X, Tri: square().Tri, Bnd: []int32{0, 1}, BndTag: []int32{-3}}, ErrNegativeTag, -1, -1, 0},
		{"boundary index out of range", Arrays{X: square().X, Tri: square().Tri, Bnd: []int32{0, 9}, BndTag: []int32{1}}, ErrIndex, -1, -1, 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			m, _, err := New(tc.a)
			if m != nil || !errors.Is(err, tc.want) {
				t.Fatalf("New = %v, %v; want error %v", m, err, tc.want)
			}
			var ve *ValidationError
			if !errors.As(err, &ve) {
				t.Fatalf("error %v is not a *ValidationError", err)
			}
			if ve.Triangle != tc.triangle || ve.Vertex != tc.vertex || ve.Edge != tc.edge {
				t.Errorf("error at triangle %d vertex %d edge %d, want %d %d %d (%v)",
					ve.Triangle, ve.Vertex, ve.Edge, tc.triangle, tc.vertex, tc.edge, err)
			}
		})
	}
}

func TestNewReorients(t *testing.T) {
	t.Parallel()
	a := square()
	a.Tri = []int32{1, 0, 2, 3, 0, 2} // first clockwise, second counter-clockwise
	m, re, err := New(a)
	if err != nil {
		t.Fatal(err)
	}
	if len(re) != 1 || re[0] != 0 {
		t.Fatalf("reoriented = %v, want [0]", re)
	}
	// The newest vertex stays first, so the refinement edge is unchanged.
	if got := m.Tri[0:3]; got[0] != 1 || got[1] != 2 || got[2] != 0 {
		t.Errorf("triangle 0 = %v, want [1 2 0]", got)
	}
	for k := range m.NumTriangles() {
		if m.Area(k) <= 0 {
			t.Errorf("triangle %d has area %g after reorientation", k, m.Area(k))
		}
	}
	if a.Tri[1] != 0 {
		t.Error("New modified its input")
	}
}

// checkTopology verifies the derived topology of m against its triangles.
func checkTopology(t *testing.T, m *Mesh) {
	t.Helper()
	ne := m.NumEdges()
	count := make([]int, ne)
	for k := range m.NumTriangles() {
		for i := range 3 {
			e := m.TriEdge[3*k+i]
			a, b := m.Tri[3*k+(i+1)%3], m.Tri[3*k+(i+2)%3]
			if min(a, b) != m.Edge[2*e] || max(a, b) != m.Edge[2*e+1] {
				t.Fatalf("triangle %d edge %d: vertices %d-%d, edge %d is %d-%d", k, i, a, b, e, m.Edge[2*e], m.Edge[2*e+1])
			}
			if m.EdgeTri[2*e] != int32(k) && m.EdgeTri[2*e+1] != int32(k) {
				t.Fatalf("edge %d does not list triangle %d", e, k)
			}
			count[e]++
		}
	}
	for e := range ne {
		if m.Edge[2*e] >= m.Edge[2*e+1] {
			t.Fatalf("edge %d is %d-%d: low vertex not first", e, m.Edge[2*e], m.Edge[2*e+1])
		}
		want := 2
		if m.IsBoundary(e) {
			want = 1
			if m.EdgeTag[e] < 0 {
				t.Errorf("boundary edge %d has tag %d", e, m.EdgeTag[e])
			}
		} else if m.EdgeTag[e] != Interior {
			t.Errorf("interior edge %d has tag %d", e, m.EdgeTag[e])
		}
		if count[e] != want {
			t.Errorf("edge %d is in %d triangles, want %d", e, count[e], want)
		}
	}
}

func TestNewTopology(t *testing.T) {
	t.Parallel()
	a := square()
	a.Bnd, a.BndTag = []int32{0, 1, 2, 1}, []int32{7, 8}
	m, _, err := New(a)
	if err != nil {
		t.Fatal(err)
	}
	checkTopology(t, m)
	checkSorted(t, m)
	if m.NumEdges() != 5 {
		t.Fatalf("%d edges, want 5", m.NumEdges())
	}
	ab, tag := m.BoundaryEdges()
	want := map[[2]int32]int32{{0, 1}: 7, {1, 2}: 8, {2, 3}: 0, {3, 0}: 0} // counter-clockwise pairs
	if len(tag) != 4 {
		t.Fatalf("%d boundary edges, want 4", len(tag))
	}
	for i := range tag {
		p := [2]int32{ab[2*i], ab[2*i+1]}
		w, ok := want[p]
		if !ok || w != tag[i] {
			t.Errorf("boundary edge %v tag %d, not in %v", p, tag[i], want)
		}
	}
}

func TestVertexTriangles(t *testing.T) {
	t.Parallel()
	m, err := LShape(2)
	if err != nil {
		t.Fatal(err)
	}
	start, tri := m.VertexTriangles()
	for v := range m.NumVertices() {
		for _, k := range tri[start[v]:start[v+1]] {
			tv := m.Tri[3*k : 3*k+3]
			if tv[0] != int32(v) && tv[1] != int32(v) && tv[2] != int32(v) {
				t.Fatalf("vertex %d lists triangle %d = %v", v, k, tv)
			}
		}
	}
	if int(start[m.NumVertices()]) != 3*m.NumTriangles() {
		t.Fatalf("%d entries, want %d", start[m.NumVertices()], 3*m.NumTriangles())
	}
	// Into buffers with room and stale values: the same lists.
	s2, t2 := make([]int32, m.NumVertices()+9), make([]int32, 3*m.NumTriangles()+5)
	for i := range s2 {
		s2[i] = -7
	}
	for i := range t2 {
		t2[i] = 99
	}
	s2, t2 = m.VertexTrianglesTo(s2, t2)
	if !slices.Equal(s2, start) || !slices.Equal(t2, tri) {
		t.Fatalf("VertexTrianglesTo into used buffers: start %v, tri %v; want %v, %v", s2, t2, start, tri)
	}
	// Boundary vertices, by the geometry of the L-shape.
	bv := m.BoundaryVertices()
	for v := range m.NumVertices() {
		x, y := m.Vertex(v)
		onBoundary := x == -1 || x == 1 || y == -1 || y == 1 || (x == 0 && y <= 0) || (y == 0 && x >= 0)
		if bv[v] != onBoundary {
			t.Errorf("vertex %d at (%g, %g): boundary %v, want %v", v, x, y, bv[v], onBoundary)
		}
	}
}

// checkSorted verifies that the edges of a mesh built by New are numbered
// in (low, high) order.
func checkSorted(t *testing.T, m *Mesh) {
	t.Helper()
	for e := 1; e < m.NumEdges(); e++ {
		if m.Edge[2*e-2] > m.Edge[2*e] || m.Edge[2*e-2] == m.Edge[2*e] && m.Edge[2*e-1] >= m.Edge[2*e+1] {
			t.Fatalf("edges %d and %d out of order", e-1, e)
		}
	}
}

func TestComponents(t *testing.T) {
	t.Parallel()
	// Two unit squares apart, and one triangle touching the second only at
	// a vertex (a vertex contact does not join pieces).
	a := Arrays{
		X:   []float64{0, 0, 1, 0, 1, 1, 0, 1, 3, 0, 4, 0, 4, 1, 3, 1, 5, 1, 5, 2},
		Tri: []int32{1, 2, 0, 3, 0, 2, 5, 6, 4, 7, 4, 6, 6, 8, 9},
	}
	m, _, err := New(a)
	if err != nil {
		t.Fatal(err)
	}
	label, n := m.Components()
	want := []int32{0, 0, 1, 1, 2}
	if n != 3 || !slicesEqual(label, want) {
		t.Errorf("components %v (%d), want %v (3)", label, n, want)
	}
	l, _ := LShape(2)
	if _, n := l.Components(); n != 1 {
		t.Errorf("L-shape has %d components", n)
	}
}

func slicesEqual(a, b []int32) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

func TestNumPiecesKeptByRefinement(t *testing.T) {
	t.Parallel()
	m, _ := Slit(2)
	all := make([]bool, m.NumTriangles())
	all[3] = true
	f, _, _ := m.Refine(all)
	u, _, _ := f.RefineUniform()
	for _, x := range []*Mesh{m, f, u} {
		if _, n := x.Components(); n != 1 || x.NumPieces() != 1 {
			t.Errorf("pieces %d, components %d", x.NumPieces(), n)
		}
	}
}
