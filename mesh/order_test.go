package mesh

import (
	"cmp"
	"errors"
	"math/rand/v2"
	"slices"
	"strconv"
	"testing"
)

// The Hilbert curve visits every cell of a 2^k × 2^k grid once, and two
// cells consecutive along it share a side (Hilbert 1891; Sagan 1994,
// ch. 2). Checked on the 256 × 256 grids of the top 8 and the bottom 8
// bits of the coordinates, which go through the first and the last two
// lookups of the 4-level table.
func TestHilbertKey(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		name       string
		shift, key uint
	}{{"top bits", 24, 48}, {"bottom bits", 0, 0}} {
		t.Run(c.name, func(t *testing.T) {
			const n = 256
			cell := make([][2]int, n*n)
			seen := make([]bool, n*n)
			for i := range n {
				for j := range n {
					k := hilbertKey(uint32(i)<<c.shift, uint32(j)<<c.shift) >> c.key
					if k >= n*n || seen[k] {
						t.Fatalf("cell (%d, %d): key %d out of range or repeated", i, j, k)
					}
					seen[k] = true
					cell[k] = [2]int{i, j}
				}
			}
			for k := 1; k < n*n; k++ {
				a, b := cell[k-1], cell[k]
				if d := abs(a[0]-b[0]) + abs(a[1]-b[1]); d != 1 {
					t.Fatalf("keys %d and %d: cells %v and %v are not neighbours", k-1, k, a, b)
				}
			}
		})
	}
}

func abs(i int) int { return max(i, -i) }

// reorderMeshes returns meshes with regions, boundary tags, coincident
// vertices (a slit) and adaptive refinement, to renumber.
func reorderMeshes(t *testing.T) map[string]*Mesh {
	t.Helper()
	r := rand.New(rand.NewPCG(1, 1))
	out := map[string]*Mesh{}
	l, _ := LShape(4)
	q, _ := Quadrants(3)
	s, _ := Slit(4)
	out["lshape"], out["quadrants"], out["slit"] = l, q, s
	for name, m := range map[string]*Mesh{"lshape refined": l, "slit refined": s} {
		for range 6 {
			marked := make([]bool, m.NumTriangles())
			for k := range marked {
				marked[k] = r.Float64() < 0.2
			}
			f, _, err := m.Refine(marked)
			if err != nil {
				t.Fatal(err)
			}
			m = f
		}
		out[name] = m
	}
	return out
}

// isPermutation reports whether p holds each of 0, ..., len(p)-1 once.
func isPermutation(p []int32) bool {
	seen := make([]bool, len(p))
	for _, v := range p {
		if v < 0 || int(v) >= len(p) || seen[v] {
			return false
		}
		seen[v] = true
	}
	return true
}

// Reorder's mesh is m with its entities permuted by the Order: bijections,
// the same coordinates, triangles with the same local vertex order (the
// refinement edge kept), regions and tags; its topology is the one New
// builds from its arrays (edges in (low, high) order, the same neighbours);
// and renumbering it again changes nothing.
func TestReorder(t *testing.T) {
	t.Parallel()
	for name, m := range reorderMeshes(t) {
		t.Run(name, func(t *testing.T) {
			r, o, err := m.Reorder()
			if err != nil {
				t.Fatal(err)
			}
			if len(o.Vertex) != m.NumVertices() || len(o.Edge) != m.NumEdges() || len(o.Triangle) != m.NumTriangles() {
				t.Fatalf("order sized %d %d %d", len(o.Vertex), len(o.Edge), len(o.Triangle))
			}
			for what, p := range map[string][]int32{"vertex": o.Vertex, "edge": o.Edge, "triangle": o.Triangle} {
				if !isPermutation(p) {
					t.Fatalf("%s order is not a permutation", what)
				}
			}
			vnew := make([]int32, len(o.Vertex))
			for i, v := range o.Vertex {
				vnew[v] = int32(i)
				if r.X[2*i] != m.X[2*v] || r.X[2*i+1] != m.X[2*v+1] {
					t.Fatalf("vertex %d is not old vertex %d", i, v)
				}
			}
			for k, tk := range o.Triangle {
				for j := range 3 {
					if r.Tri[3*k+j] != vnew[m.Tri[3*int(tk)+j]] {
						t.Fatalf("triangle %d is not old triangle %d in the same local order", k, tk)
					}
				}
				if r.Region[k] != m.Region[tk] {
					t.Fatalf("triangle %d region %d, old %d", k, r.Region[k], m.Region[tk])
				}
			}
			for e, oe := range o.Edge {
				if r.EdgeTag[e] != m.EdgeTag[oe] {
					t.Fatalf("edge %d tag %d, old edge %d tag %d", e, r.EdgeTag[e], oe, m.EdgeTag[oe])
				}
			}
			bnd, tag := r.BoundaryEdges()
			n, _, err := New(Arrays{X: r.X, Tri: r.Tri, Region: r.Region, Bnd: bnd, BndTag: tag})
			if err != nil {
				t.Fatalf("New on the renumbered arrays: %v", err)
			}
			if !slices.Equal(n.Edge, r.Edge) || !slices.Equal(n.TriEdge, r.TriEdge) || !slices.Equal(n.EdgeTag, r.EdgeTag) {
				t.Fatal("edges differ from New's")
			}
			for e := range r.NumEdges() {
				a, b := r.EdgeTri[2*e:2*e+2], n.EdgeTri[2*e:2*e+2]
				if !(a[0] == b[0] && a[1] == b[1]) && !(a[0] == b[1] && a[1] == b[0]) {
					t.Fatalf("edge %d: triangles %v, New's %v", e, a, b)
				}
			}
			_, o2, err := r.Reorder()
			if err != nil {
				t.Fatal(err)
			}
			for what, p := range map[string][]int32{"vertex": o2.Vertex, "edge": o2.Edge, "triangle": o2.Triangle} {
				for i, v := range p {
					if int(v) != i {
						t.Fatalf("renumbering again moves %s %d to %d", what, v, i)
					}
				}
			}
		})
	}
}

// A refinement followed by Reorder, with the parent maps composed, passes
// the checks of a refinement: children in their parents, covering them,
// new vertices at the midpoints of the edges they name.
func TestParentsCompose(t *testing.T) {
	t.Parallel()
	r := rand.New(rand.NewPCG(2, 2))
	m, _ := LShape(3)
	for range 5 {
		marked := make([]bool, m.NumTriangles())
		for k := range marked {
			marked[k] = r.Float64() < 0.3
		}
		f, p, err := m.Refine(marked)
		if err != nil {
			t.Fatal(err)
		}
		g, o, err := f.Reorder()
		if err != nil {
			t.Fatal(err)
		}
		q, err := p.Compose(o)
		if err != nil {
			t.Fatal(err)
		}
		checkParents(t, m, g, q, marked)
		m = g
	}
	u, p, _ := m.RefineUniform()
	_, o, _ := u.Reorder()
	o.Vertex = o.Vertex[1:]
	if _, err := p.Compose(o); !errors.Is(err, ErrLength) {
		t.Errorf("short order: %v", err)
	}
	o.Vertex = append(o.Vertex, -1)
	if _, err := p.Compose(o); !errors.Is(err, ErrIndex) {
		t.Errorf("vertex -1: %v", err)
	}
}

// Renumber gives the mesh and the order that Reorder gives, array for
// array, on every test mesh; curves and pieces stay.
func TestRenumber(t *testing.T) {
	t.Parallel()
	for name, m := range reorderMeshes(t) {
		t.Run(name, func(t *testing.T) {
			r, o, err := m.Reorder()
			if err != nil {
				t.Fatal(err)
			}
			c := cloneMesh(m)
			o2, err := c.Renumber()
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(o.Vertex, o2.Vertex) || !slices.Equal(o.Edge, o2.Edge) || !slices.Equal(o.Triangle, o2.Triangle) {
				t.Fatal("orders differ")
			}
			for what, ab := range map[string][2][]int32{"Tri": {r.Tri, c.Tri}, "Region": {r.Region, c.Region}, "Edge": {r.Edge, c.Edge},
				"TriEdge": {r.TriEdge, c.TriEdge}, "EdgeTri": {r.EdgeTri, c.EdgeTri}, "EdgeTag": {r.EdgeTag, c.EdgeTag}, "EdgeCurve": {r.EdgeCurve, c.EdgeCurve}} {
				if !slices.Equal(ab[0], ab[1]) {
					t.Fatalf("%s differs", what)
				}
			}
			if !slices.Equal(r.X, c.X) || len(r.Curves) != len(c.Curves) || r.pieces != c.pieces {
				t.Fatal("coordinates, curves or pieces differ")
			}
		})
	}
	m, _ := LShape(1)
	bad := *m
	bad.Tri = slices.Clone(m.Tri)
	bad.Tri[4] = int32(m.NumVertices())
	keep := slices.Clone(bad.Tri)
	if _, err := bad.Renumber(); !errors.Is(err, ErrIndex) || !slices.Equal(bad.Tri, keep) {
		t.Errorf("vertex out of range: %v, triangles changed: %v", err, !slices.Equal(bad.Tri, keep))
	}
	if _, err := (*Mesh)(nil).Renumber(); !errors.Is(err, ErrArgument) {
		t.Errorf("nil mesh: %v", err)
	}
}

// cloneMesh returns a copy of m with arrays of its own.
func cloneMesh(m *Mesh) *Mesh {
	c := *m
	for _, a := range []*[]int32{&c.Tri, &c.Region, &c.Edge, &c.TriEdge, &c.EdgeTri, &c.EdgeTag, &c.EdgeCurve} {
		*a = slices.Clone(*a)
	}
	c.X = slices.Clone(c.X)
	return &c
}

func TestReorderBadInput(t *testing.T) {
	t.Parallel()
	if _, _, err := (*Mesh)(nil).Reorder(); !errors.Is(err, ErrArgument) {
		t.Errorf("nil mesh: %v", err)
	}
	if _, _, err := (&Mesh{}).Reorder(); !errors.Is(err, ErrEmpty) {
		t.Errorf("zero mesh: %v", err)
	}
	m, _ := LShape(1)
	bad := *m
	bad.Tri = slices.Clone(m.Tri)
	bad.Tri[4] = int32(m.NumVertices())
	if _, _, err := bad.Reorder(); !errors.Is(err, ErrIndex) {
		t.Errorf("vertex out of range: %v", err)
	}
}

// BenchmarkReorder renumbers meshes of about 1e4, 1e5 and 1e6 triangles:
// benchAdaptive's (parent=unordered: a uniform L-shape mesh refined near
// the re-entrant corner, Refine's numbering throughout) and the
// refinement near the corner of that mesh once renumbered (parent=ordered:
// the adaptive loop's case, an ordered mesh with Refine's new vertices and
// children appended). impl=reference is the implementation Reorder must
// equal (reorderReference), for a comparison in the same run:
//
//	go test -run XXX -bench Reorder -benchtime 3x -count 3 ./mesh
func BenchmarkReorder(b *testing.B) {
	for _, n := range []int{1e4, 1e5, 1e6} {
		u := benchAdaptive(b, n)
		o := benchOrderedRefined(b, u)
		for _, c := range []struct {
			name string
			m    *Mesh
		}{{"unordered", u}, {"ordered", o}} {
			for _, impl := range []string{"reorder", "renumber", "reference"} {
				b.Run("n="+strconv.Itoa(n)+"/parent="+c.name+"/impl="+impl, func(b *testing.B) {
					f := (*Mesh).Reorder
					switch impl {
					case "reference":
						f = reorderReference
					case "renumber":
						// In place, on a copy made outside the timing.
						f = func(m *Mesh) (*Mesh, *Order, error) {
							b.StopTimer()
							c := cloneMesh(m)
							b.StartTimer()
							o, err := c.Renumber()
							return c, o, err
						}
					}
					var sink *Mesh
					b.ResetTimer()
					for range b.N {
						r, _, err := f(c.m)
						if err != nil {
							b.Fatal(err)
						}
						sink = r
					}
					_ = sink
					b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(c.m.NumTriangles()), "ns/triangle")
					b.ReportMetric(float64(c.m.NumTriangles()), "triangles")
				})
			}
		}
	}
}

// benchOrderedRefined renumbers m by Reorder and refines the result in the
// triangles within 0.3 of the re-entrant corner, as the adaptive loop
// refines a renumbered mesh.
func benchOrderedRefined(b *testing.B, m *Mesh) *Mesh {
	b.Helper()
	r, _, err := m.Reorder()
	if err != nil {
		b.Fatal(err)
	}
	marked := make([]bool, r.NumTriangles())
	for k := range marked {
		x, y := r.Vertex(int(r.Tri[3*k]))
		marked[k] = x*x+y*y < 0.09
	}
	f, _, err := r.Refine(marked)
	if err != nil {
		b.Fatal(err)
	}
	return f
}

// benchAdaptive returns a mesh of about n triangles: the L-shape refined
// uniformly to n/4 triangles, then once more in the triangles within 0.5
// of the re-entrant corner, so that its numbering is Refine's.
func benchAdaptive(b *testing.B, n int) *Mesh {
	b.Helper()
	m, _ := LShape(1)
	for m.NumTriangles() < n/4 {
		m, _, _ = m.RefineUniform()
	}
	marked := make([]bool, m.NumTriangles())
	for k := range marked {
		x, y := m.Vertex(int(m.Tri[3*k]))
		marked[k] = x*x+y*y < 0.25
	}
	f, _, err := m.Refine(marked)
	if err != nil {
		b.Fatal(err)
	}
	return f
}

// BenchmarkHilbertSort sorts the Hilbert keys of the vertices of a mesh of
// about 1e6 triangles by the radix sort of Reorder and, for comparison, by
// slices.SortStableFunc on (key, index) pairs.
func BenchmarkHilbertSort(b *testing.B) {
	m := benchAdaptive(b, 1e6)
	keys := func() ([]uint64, []int32) {
		nv := m.NumVertices()
		k, idx := make([]uint64, nv), make([]int32, nv)
		for i := range nv {
			x, y := m.Vertex(i)
			k[i] = hilbertKey(quantise(x+1, 1<<31), quantise(y+1, 1<<31))
			idx[i] = int32(i)
		}
		return k, idx
	}
	b.Run("radix", func(b *testing.B) {
		for b.Loop() {
			b.StopTimer()
			k, idx := keys()
			b.StartTimer()
			_, _ = radixSort(k, idx)
		}
		b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(m.NumVertices()), "ns/vertex")
	})
	b.Run("slices", func(b *testing.B) {
		type pair struct {
			k uint64
			i int32
		}
		for b.Loop() {
			b.StopTimer()
			k, idx := keys()
			p := make([]pair, len(k))
			for i := range p {
				p[i] = pair{k[i], idx[i]}
			}
			b.StartTimer()
			slices.SortStableFunc(p, func(a, b pair) int {
				switch {
				case a.k < b.k:
					return -1
				case a.k > b.k:
					return 1
				}
				return 0
			})
		}
		b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(m.NumVertices()), "ns/vertex")
	})
}

// radixSort equals a stable sort of the (key, index) pairs (the standard
// library's slices.SortStableFunc), by comparisons below radixMin keys and
// by digits above, with many equal keys and keys that differ only in the
// high digits.
func TestRadixSort(t *testing.T) {
	t.Parallel()
	r := rand.New(rand.NewPCG(5, 5))
	for _, n := range []int{0, 1, 2, 100, radixMin, radixMin + 1, 20000} {
		keys := make([]uint64, n)
		idx := make([]int32, n)
		for i := range keys {
			keys[i] = uint64(r.IntN(50)) << (16 * uint(r.IntN(4)))
			idx[i] = int32(7 * i)
		}
		type pair struct {
			k uint64
			i int32
		}
		want := make([]pair, n)
		for i := range keys {
			want[i] = pair{keys[i], idx[i]}
		}
		slices.SortStableFunc(want, func(a, b pair) int { return cmp.Compare(a.k, b.k) })
		sk, si := radixSort(slices.Clone(keys), slices.Clone(idx))
		for i := range want {
			if sk[i] != want[i].k || si[i] != want[i].i {
				t.Fatalf("n = %d: position %d holds (%d, %d), want (%d, %d)", n, i, sk[i], si[i], want[i].k, want[i].i)
			}
		}
	}
}
