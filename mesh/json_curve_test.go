package mesh_test

import (
	"bytes"
	"errors"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/posteriori-fem/posteriori/mesh"
)

// JSON keeps the circles that edges follow: a mesh with a curved boundary
// (a channel) and a curved interface (a fibre), written and read back,
// has the same curves on the same edges, and refines to the same
// vertices, bit for bit. A curve of another kind is not written.
func TestJSONCurves(t *testing.T) {
	t.Parallel()
	m := channelFibre(t)
	var buf bytes.Buffer
	if err := mesh.WriteJSON(&buf, m, nil); err != nil {
		t.Fatal(err)
	}
	back, _, err := mesh.ReadJSON(bytes.NewReader(buf.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(back.EdgeCurve, m.EdgeCurve) || !slices.Equal(back.Curves, m.Curves) {
		t.Fatalf("curves read back: %v on %d edges, want %v", back.Curves, len(back.EdgeCurve), m.Curves)
	}
	sameRefinements(t, m, back, 2, "read back")
	// A curve that is not a Circle is left out.
	own := projectFuncChannel(t, m)
	buf.Reset()
	if err := mesh.WriteJSON(&buf, own, nil); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(buf.String(), "circles") {
		t.Error("a ProjectFunc curve was written")
	}
}

// channelFibre meshes fibre() with a channel: a hole of radius 0.25 at
// (1.5, 1.5) in the matrix, tagged 2; the fibre's interface and the
// channel's boundary follow circles 0 and 1.
func channelFibre(t *testing.T) *mesh.Mesh {
	t.Helper()
	d := fibre()
	first := int32(len(d.Points) / 2)
	for q := range 4 {
		c, s := [4]float64{1, 0, -1, 0}[q], [4]float64{0, 1, 0, -1}[q]
		d.Points = append(d.Points, 1.5+0.25*c, 1.5+0.25*s)
		d.Segments = append(d.Segments, first+int32(q), first+int32((q+1)%4))
		d.Tags = append(d.Tags, 2)
		d.SegCurve = append(d.SegCurve, 1)
	}
	d.Curves = append(d.Curves, mesh.Circle{X: 1.5, Y: 1.5, R: 0.25})
	d.Holes = []float64{1.5, 1.5}
	m, _, err := mesh.Triangulate(d, mesh.Options{H: 0.5})
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// projectFuncChannel returns m with its channel (tag 2) following the
// same circle given as a ProjectFunc, a curve that files do not keep.
func projectFuncChannel(t *testing.T, m *mesh.Mesh) *mesh.Mesh {
	t.Helper()
	own, err := m.WithCurves(map[int32]mesh.Curve{2: mesh.ProjectFunc(func(x, y float64) (float64, float64) {
		r := math.Hypot(x-1.5, y-1.5)
		return 1.5 + 0.25*(x-1.5)/r, 1.5 + 0.25*(y-1.5)/r
	})})
	if err != nil {
		t.Fatal(err)
	}
	return own
}

// ReadJSON rejects curves that do not fit the mesh.
func TestReadJSONCurvesErrors(t *testing.T) {
	t.Parallel()
	// The unit square of two triangles; vertex 0 at (0, 0), 1 at (1, 0),
	// 2 at (1, 1), 3 at (0, 1); the circle of radius 1 about (0, 1)
	// passes through vertices 0 and 2.
	base := `"vertices":[[0,0],[1,0],[1,1],[0,1]],"triangles":[[0,1,2],[0,2,3]]`
	for _, tc := range []struct {
		name, tail string
		want       error
	}{
		{"not an edge", `,"circles":[[0,1,1]],"curved_edges":[[1,3,0]]`, mesh.ErrFormat},
		{"vertex out of range", `,"circles":[[0,1,1]],"curved_edges":[[0,9,0]]`, mesh.ErrFormat},
		{"no such circle", `,"circles":[[0,1,1]],"curved_edges":[[0,2,1]]`, mesh.ErrFormat},
		{"listed twice", `,"circles":[[0,1,1]],"curved_edges":[[0,2,0],[2,0,0]]`, mesh.ErrFormat},
		{"zero radius", `,"circles":[[0,1,0]],"curved_edges":[[0,2,0]]`, mesh.ErrFormat},
		{"circles without edges", `,"circles":[[0,1,1]]`, mesh.ErrFormat},
		{"through the centre", `,"circles":[[0.5,0.5,1]],"curved_edges":[[0,2,0]]`, mesh.ErrNotFinite},
		{"not a triple", `,"circles":[[0,1]],"curved_edges":[[0,2,0]]`, mesh.ErrFormat},
	} {
		_, _, err := mesh.ReadJSON(strings.NewReader("{" + base + tc.tail + "}"))
		t.Logf("%s: %v", tc.name, err)
		if !errors.Is(err, tc.want) || !errors.Is(err, mesh.ErrFormat) {
			t.Errorf("%s: err = %v, want %v and ErrFormat", tc.name, err, tc.want)
		}
	}
	m, _, err := mesh.ReadJSON(strings.NewReader("{" + base + `,"circles":[[0,1,1]],"curved_edges":[[2,0,0]]}`))
	if err != nil {
		t.Fatal(err)
	}
	if n := slices.IndexFunc(m.EdgeCurve, func(c int32) bool { return c == 0 }); n < 0 || m.Edge[2*n] != 0 || m.Edge[2*n+1] != 2 {
		t.Errorf("the edge 0–2 does not follow the circle: %v", m.EdgeCurve)
	}
	// Ends off the circle are accepted (as a vertex that Refine left on a
	// chord); refinement then moves the new vertex only where the
	// triangles keep half their area (MinCurveArea), so every area stays
	// positive.
	m, _, err = mesh.ReadJSON(strings.NewReader("{" + base + `,"circles":[[0,1,2]],"curved_edges":[[0,2,0]]}`))
	if err != nil {
		t.Fatal(err)
	}
	fine, _, err := m.RefineUniform()
	if err != nil {
		t.Fatal(err)
	}
	for k := range fine.NumTriangles() {
		if !(fine.Area(k) > 0) {
			t.Fatalf("triangle %d has area %g", k, fine.Area(k))
		}
	}
}
