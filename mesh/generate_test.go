package mesh

import (
	"errors"
	"math"
	"testing"
)

// Exact areas and boundary lengths of the generated domains (elementary
// geometry): the crack faces of the slit count twice.
func TestGenerators(t *testing.T) {
	t.Parallel()
	const tol = 1e-13
	tests := []struct {
		name         string
		gen          func() (*Mesh, error)
		triangles    int
		area         float64
		tagLength    map[int32]float64
		regionArea   map[int32]float64
		refineLength float64 // length of every refinement edge
	}{
		{"Rectangle", func() (*Mesh, error) { return Rectangle(-1, 2, 3, 3, 8, 2) }, 32, 4,
			map[int32]float64{SideBottom: 4, SideRight: 1, SideTop: 4, SideLeft: 1}, map[int32]float64{0: 4}, math.Hypot(0.5, 0.5)},
		{"LShape", func() (*Mesh, error) { return LShape(3) }, 54, 3,
			map[int32]float64{1: 1, 2: 1, 3: 1, 4: 1, 5: 2, 6: 2}, map[int32]float64{0: 3}, math.Sqrt2 / 3},
		{"Slit", func() (*Mesh, error) { return Slit(2) }, 32, 4,
			map[int32]float64{SideBottom: 2, SideRight: 2, SideTop: 2, SideLeft: 2, SlitUpper: 1, SlitLower: 1}, map[int32]float64{0: 4}, math.Sqrt2 / 2},
		{"Quadrants", func() (*Mesh, error) { return Quadrants(2) }, 32, 4,
			map[int32]float64{SideBottom: 2, SideRight: 2, SideTop: 2, SideLeft: 2}, map[int32]float64{1: 1, 2: 1, 3: 1, 4: 1}, math.Sqrt2 / 2},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			m, err := tc.gen()
			if err != nil {
				t.Fatal(err)
			}
			checkTopology(t, m)
			checkSorted(t, m)
			if m.NumTriangles() != tc.triangles {
				t.Errorf("%d triangles, want %d", m.NumTriangles(), tc.triangles)
			}
			// Euler's formula for a simply connected triangulated domain:
			// V - E + T = 1 (classical).
			if chi := m.NumVertices() - m.NumEdges() + m.NumTriangles(); chi != 1 {
				t.Errorf("V - E + T = %d, want 1", chi)
			}
			area := 0.0
			regions := map[int32]float64{}
			for k := range m.NumTriangles() {
				area += m.Area(k)
				regions[m.Region[k]] += m.Area(k)
				if l := m.EdgeLength(int(m.TriEdge[3*k])); math.Abs(l-tc.refineLength) > tol {
					t.Fatalf("triangle %d: refinement edge length %g, want %g", k, l, tc.refineLength)
				}
				if l, h := m.EdgeLength(int(m.TriEdge[3*k])), m.Diameter(k); l < h-tol {
					t.Fatalf("triangle %d: refinement edge %g is not the longest (%g)", k, l, h)
				}
			}
			if math.Abs(area-tc.area) > tol {
				t.Errorf("area %g, want %g", area, tc.area)
			}
			for r, want := range tc.regionArea {
				if math.Abs(regions[r]-want) > tol {
					t.Errorf("region %d area %g, want %g", r, regions[r], want)
				}
			}
			if len(regions) != len(tc.regionArea) {
				t.Errorf("regions %v, want %v", regions, tc.regionArea)
			}
			lengths := map[int32]float64{}
			for e := range m.NumEdges() {
				if m.IsBoundary(e) {
					lengths[m.EdgeTag[e]] += m.EdgeLength(e)
				}
			}
			for tag, want := range tc.tagLength {
				if math.Abs(lengths[tag]-want) > tol {
					t.Errorf("tag %d: length %g, want %g", tag, lengths[tag], want)
				}
			}
			if len(lengths) != len(tc.tagLength) {
				t.Errorf("tags %v, want %v", lengths, tc.tagLength)
			}
		})
	}
}

// Both crack faces of the slit are separate: every edge on y = 0 with
// x > 0 is a boundary edge, tagged with the face of its triangle.
func TestSlitFacesSeparate(t *testing.T) {
	t.Parallel()
	m, err := Slit(4)
	if err != nil {
		t.Fatal(err)
	}
	faces := 0
	for e := range m.NumEdges() {
		xa, ya := m.Vertex(int(m.Edge[2*e]))
		xb, yb := m.Vertex(int(m.Edge[2*e+1]))
		if ya != 0 || yb != 0 || xa+xb <= 0 {
			continue
		}
		if !m.IsBoundary(e) {
			t.Fatalf("edge %d on the slit is interior", e)
		}
		k := m.EdgeTri[2*e]
		cy := 0.0
		for _, v := range m.Tri[3*k : 3*k+3] {
			_, y := m.Vertex(int(v))
			cy += y
		}
		if want := map[bool]int32{true: SlitUpper, false: SlitLower}[cy > 0]; m.EdgeTag[e] != want {
			t.Errorf("edge %d tag %d, want %d", e, m.EdgeTag[e], want)
		}
		faces++
	}
	if faces != 2*4 {
		t.Errorf("%d crack-face edges, want 8", faces)
	}
	// The tip is shared; the 4 slit vertices with x > 0 are doubled.
	if got, want := m.NumVertices(), 81+4; got != want {
		t.Errorf("%d vertices, want %d", got, want)
	}
}

func TestGeneratorArguments(t *testing.T) {
	t.Parallel()
	bad := []struct {
		name string
		gen  func() (*Mesh, error)
	}{
		{"zero cells", func() (*Mesh, error) { return Rectangle(0, 0, 1, 1, 0, 3) }},
		{"reversed", func() (*Mesh, error) { return Rectangle(1, 0, 0, 1, 2, 2) }},
		{"NaN corner", func() (*Mesh, error) { return Rectangle(0, math.NaN(), 1, 1, 2, 2) }},
		{"huge", func() (*Mesh, error) { return Rectangle(0, 0, 1, 1, 1<<20, 1<<20) }},
		{"LShape 0", func() (*Mesh, error) { return LShape(0) }},
		{"Slit -1", func() (*Mesh, error) { return Slit(-1) }},
		{"Quadrants 0", func() (*Mesh, error) { return Quadrants(0) }},
	}
	for _, tc := range bad {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			if m, err := tc.gen(); m != nil || !errors.Is(err, ErrArgument) {
				t.Errorf("got %v, %v; want ErrArgument", m, err)
			}
		})
	}
}
