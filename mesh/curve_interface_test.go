package mesh_test

import (
	"math"
	"testing"

	"github.com/posteriori-fem/posteriori/mesh"
)

// fibre is the square [−2, 2]² with a disc of radius 1 at the origin as a
// second region (tag 1), its circle a curved interface given by its four
// quarter points.
func fibre() *mesh.Domain {
	return &mesh.Domain{
		Points:     []float64{-2, -2, 2, -2, 2, 2, -2, 2, 1, 0, 0, 1, -1, 0, 0, -1},
		Segments:   []int32{0, 1, 1, 2, 2, 3, 3, 0, 4, 5, 5, 6, 6, 7, 7, 4},
		Tags:       []int32{0, 0, 0, 0, 1, 1, 1, 1},
		Curves:     []mesh.Curve{mesh.Circle{R: 1}},
		SegCurve:   []int32{-1, -1, -1, -1, 0, 0, 0, 0},
		Seeds:      []float64{0, 0},
		SeedRegion: []int32{1},
	}
}

// regionArea returns the area of the triangles of region r.
func regionArea(m *mesh.Mesh, r int32) float64 {
	a := 0.0
	for k := range m.NumTriangles() {
		if m.Region[k] == r {
			a += m.Area(k)
		}
	}
	return a
}

// checkInterface checks that every edge between the two regions follows
// the circle (EdgeCurve 0) and has its ends on it, unless a refinement
// left them on a chord (chord), and that no other edge is curved.
func checkInterface(t *testing.T, m *mesh.Mesh, chord map[int32]bool, what string) {
	t.Helper()
	n := 0
	for e := range m.NumEdges() {
		t0, t1 := m.EdgeTri[2*e], m.EdgeTri[2*e+1]
		iface := t1 >= 0 && m.Region[t0] != m.Region[t1]
		if c := m.EdgeCurve[e]; (c == 0) != iface {
			t.Fatalf("%s: edge %d: interface %v, curve %d", what, e, iface, c)
		}
		if !iface {
			continue
		}
		n++
		for _, v := range m.Edge[2*e : 2*e+2] {
			x, y := m.Vertex(int(v))
			if r := math.Hypot(x, y); !chord[v] && math.Abs(r-1) > 1e-14 {
				t.Fatalf("%s: vertex %d of interface edge %d at radius %.17g", what, v, e, r)
			}
		}
	}
	if n == 0 {
		t.Fatalf("%s: no interface edge", what)
	}
}

// A curved interface between two materials: Triangulate puts the vertices
// of the interface on the circle and marks its edges with the curve, and
// refinement, uniform and adaptive, keeps them there; the area of the
// disc's region is that of an inscribed polygon, π − (n/2) sin(2π/n) for
// the regular n-gon (closed form), so it falls by about 4 with each
// uniform refinement, which doubles n, and the area of the whole square
// stays 16.
func TestCurvedInterface(t *testing.T) {
	t.Parallel()
	m, rep, err := mesh.Triangulate(fibre(), mesh.Options{H: 0.5})
	if err != nil {
		t.Fatal(err)
	}
	if rep.OffCurve != 0 {
		t.Fatalf("%d vertices left on a chord", rep.OffCurve)
	}
	checkInterface(t, m, nil, "triangulated")
	prev := math.Pi - regionArea(m, 1)
	for i := range 3 {
		if m, _, err = m.RefineUniform(); err != nil {
			t.Fatal(err)
		}
		checkInterface(t, m, nil, "uniform")
		gap := math.Pi - regionArea(m, 1)
		if !(gap > 0) || prev/gap < 3.8 || prev/gap > 4.2 {
			t.Errorf("uniform refinement %d: π − area of the disc %.4g, before %.4g (ratio %.3g, want about 4)", i+1, gap, prev, prev/gap)
		}
		if total := regionArea(m, 0) + regionArea(m, 1); math.Abs(total-16) > 1e-12 {
			t.Errorf("uniform refinement %d: total area %.15g, want 16", i+1, total)
		}
		prev = gap
	}
	// Adaptive: mark the triangles of the disc's region that touch the
	// interface, three times.
	for range 3 {
		marks := make([]bool, m.NumTriangles())
		for e := range m.NumEdges() {
			if m.EdgeCurve[e] == 0 {
				marks[m.EdgeTri[2*e]], marks[m.EdgeTri[2*e+1]] = true, true
			}
		}
		fine, p, err := m.Refine(marks)
		if err != nil {
			t.Fatal(err)
		}
		chord := map[int32]bool{}
		for _, v := range p.Chord {
			chord[v] = true
		}
		checkInterface(t, fine, chord, "adaptive")
		if gap := math.Pi - regionArea(fine, 1); !(gap > 0 && gap < math.Pi-regionArea(m, 1)) {
			t.Errorf("adaptive: π − area of the disc %.4g, before %.4g", gap, math.Pi-regionArea(m, 1))
		}
		m = fine
	}
}
