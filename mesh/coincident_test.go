package mesh

import (
	"bytes"
	"errors"
	"strings"
	"testing"
)

// mustQuality returns m.Quality() and fails the test on an error.
func mustQuality(t *testing.T, m *Mesh) Quality {
	t.Helper()
	q, err := m.Quality()
	if err != nil {
		t.Fatal(err)
	}
	return q
}

// twoSquares returns the unit squares [0,1]² and [1,2]×[0,1], each cut into
// two triangles, meshed apart: the common side x = 1 has its vertices twice
// (1 and 4 at (1, 0), 2 and 7 at (1, 1)). With listed, every boundary edge
// of each square is listed in Bnd, the common side from both squares.
func twoSquares(listed bool) Arrays {
	a := Arrays{
		X:   []float64{0, 0, 1, 0, 1, 1, 0, 1, 1, 0, 2, 0, 2, 1, 1, 1},
		Tri: []int32{0, 1, 2, 0, 2, 3, 4, 5, 6, 4, 6, 7},
	}
	if listed {
		a.Bnd = []int32{0, 1, 1, 2, 2, 3, 3, 0, 4, 5, 5, 6, 6, 7, 7, 4}
		a.BndTag = make([]int32, 8)
	}
	return a
}

// innerCrack returns the 4×4-cell mesh of [0,4]² in which the centre
// vertex (2, 2) is doubled: the triangles right of x = 2 use a copy
// appended as the last vertex. The copies make a crack from (2, 1) to
// (2, 3) whose tips lie inside the domain, so the mesh stays in one piece.
// With listed, the four crack edges are listed in Bnd with tag 7.
func innerCrack(t *testing.T, listed bool) Arrays {
	t.Helper()
	r, err := Rectangle(0, 0, 4, 4, 4, 4)
	if err != nil {
		t.Fatal(err)
	}
	find := func(x, y float64) int32 {
		for v := range r.NumVertices() {
			if r.X[2*v] == x && r.X[2*v+1] == y {
				return int32(v)
			}
		}
		t.Fatalf("no vertex at (%g, %g)", x, y)
		return -1
	}
	c, below, above := find(2, 2), find(2, 1), find(2, 3)
	cc := int32(r.NumVertices())
	a := Arrays{X: append(append([]float64(nil), r.X...), 2, 2), Tri: append([]int32(nil), r.Tri...)}
	for k := range r.NumTriangles() {
		t3 := a.Tri[3*k : 3*k+3]
		if r.X[2*t3[0]]+r.X[2*t3[1]]+r.X[2*t3[2]] <= 6 { // centroid x ≤ 2
			continue
		}
		for i, v := range t3 {
			if v == c {
				t3[i] = cc
			}
		}
	}
	if listed {
		a.Bnd = []int32{c, below, cc, below, c, above, cc, above}
		a.BndTag = []int32{7, 7, 7, 7}
	}
	return a
}

// Vertices with the same coordinates are accepted only as the declared,
// connected faces of a crack (the rule in New's doc comment).
func TestNewCoincident(t *testing.T) {
	t.Parallel()
	reject := []struct {
		name   string
		a      Arrays
		vertex int    // the copy with the higher index
		reason string // part of the message
	}{
		{"two meshes joined unmerged", twoSquares(false), 4, "ends no listed boundary edge"},
		{"joined unmerged, every edge listed", twoSquares(true), 4, "separate pieces"},
		{"inner crack not declared", innerCrack(t, false), 25, "ends no listed boundary edge"},
	}
	for _, tc := range reject {
		t.Run(tc.name, func(t *testing.T) {
			m, _, err := New(tc.a)
			var ve *ValidationError
			if m != nil || !errors.Is(err, ErrCoincident) || !errors.As(err, &ve) {
				t.Fatalf("New = %v, %v; want a *ValidationError wrapping ErrCoincident", m, err)
			}
			if ve.Vertex != tc.vertex || ve.Triangle != -1 || ve.Edge != -1 {
				t.Errorf("located at triangle %d vertex %d edge %d, want vertex %d", ve.Triangle, ve.Vertex, ve.Edge, tc.vertex)
			}
			if !strings.Contains(err.Error(), tc.reason) {
				t.Errorf("message %q does not say %q", err, tc.reason)
			}
		})
	}

	// The same inner crack, declared: accepted, one piece, its four faces
	// on the boundary with their tag.
	m, _, err := New(innerCrack(t, true))
	if err != nil {
		t.Fatalf("declared inner crack: %v", err)
	}
	if n := m.NumPieces(); n != 1 {
		t.Errorf("declared inner crack: %d pieces, want 1", n)
	}
	faces := 0
	for e := range m.NumEdges() {
		if m.EdgeTag[e] == 7 {
			faces++
		}
	}
	if faces != 4 {
		t.Errorf("declared inner crack: %d edges with tag 7, want 4", faces)
	}

	// −0 and +0 are the same coordinate.
	a := twoSquares(false)
	a.X[9] = -0.0 // vertex 4 at (1, −0)
	if _, _, err := New(a); !errors.Is(err, ErrCoincident) {
		t.Errorf("(1, −0) and (1, 0): %v, want ErrCoincident", err)
	}
}

// Slit doubles its crack vertices; its meshes, refined or read back from
// JSON, pass New's rule, and the same arrays without the crack faces listed
// do not.
func TestSlitCoincidentAccepted(t *testing.T) {
	t.Parallel()
	for _, n := range []int{1, 2, 4} {
		m, err := Slit(n)
		if err != nil {
			t.Fatalf("Slit(%d): %v", n, err)
		}
		if m.NumPieces() != 1 {
			t.Errorf("Slit(%d): %d pieces, want 1", n, m.NumPieces())
		}
		fine, _, err := m.RefineUniform()
		if err != nil {
			t.Fatalf("Slit(%d).RefineUniform: %v", n, err)
		}
		marks := make([]bool, fine.NumTriangles())
		for k := range marks {
			marks[k] = k%3 == 0
		}
		fine, _, err = fine.Refine(marks)
		if err != nil {
			t.Fatalf("Slit(%d) refined: %v", n, err)
		}
		var buf bytes.Buffer
		if err := WriteJSON(&buf, fine, nil); err != nil {
			t.Fatal(err)
		}
		back, _, err := ReadJSON(&buf)
		if err != nil {
			t.Fatalf("Slit(%d) refined, read back: %v", n, err)
		}
		if back.NumVertices() != fine.NumVertices() || back.NumPieces() != 1 {
			t.Errorf("Slit(%d) read back: %d vertices, %d pieces; want %d, 1", n, back.NumVertices(), back.NumPieces(), fine.NumVertices())
		}
		if _, _, err := New(Arrays{X: m.X, Tri: m.Tri}); !errors.Is(err, ErrCoincident) {
			t.Errorf("Slit(%d) arrays without Bnd: %v, want ErrCoincident", n, err)
		}
	}
}

// A Mesh that New did not build (the zero Mesh, a nil pointer, arrays out
// of range) gives errors, not panics or infinite figures.
func TestZeroMesh(t *testing.T) {
	t.Parallel()
	var nilMesh *Mesh
	bad := &Mesh{X: []float64{0, 0, 1, 0, 0, 1}, Tri: []int32{0, 1, 5}, Region: []int32{0},
		Edge: []int32{0, 1, 1, 2, 0, 2}, TriEdge: []int32{1, 2, 0}, EdgeTri: []int32{0, -1, 0, -1, 0, -1}, EdgeTag: []int32{0, 0, 0}}
	cases := []struct {
		name string
		call func() error
		want error
	}{
		{"zero Refine(nil)", func() error { _, _, err := (&Mesh{}).Refine(nil); return err }, ErrEmpty},
		{"zero RefineUniform", func() error { _, _, err := (&Mesh{}).RefineUniform(); return err }, ErrEmpty},
		{"zero Quality", func() error { _, err := (&Mesh{}).Quality(); return err }, ErrEmpty},
		{"nil Refine", func() error { _, _, err := nilMesh.Refine(nil); return err }, ErrArgument},
		{"nil Quality", func() error { _, err := nilMesh.Quality(); return err }, ErrArgument},
		{"index out of range Refine", func() error { _, _, err := bad.Refine([]bool{true}); return err }, ErrIndex},
		{"index out of range Quality", func() error { _, err := bad.Quality(); return err }, ErrIndex},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			defer func() {
				if r := recover(); r != nil {
					t.Fatalf("panic: %v", r)
				}
			}()
			err := tc.call()
			if !errors.Is(err, tc.want) {
				t.Fatalf("got %v, want %v", err, tc.want)
			}
			if msg := err.Error(); !strings.HasPrefix(msg, "mesh: ") || strings.Contains(msg, ": mesh: ") {
				t.Errorf("message %q does not name the package once", err)
			}
		})
	}
}
