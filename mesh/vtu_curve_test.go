package mesh_test

import (
	"bytes"
	"errors"
	"slices"
	"strings"
	"testing"

	"github.com/posteriori-fem/posteriori/mesh"
)

// VTU files keep the circles that edges follow, in every encoding and with
// quadratic cells: a mesh with a curved channel and a curved fibre, written
// and read back, has the same curves on the same edges and refines to the
// same vertices, bit for bit. A curve of another kind is not written.
func TestVTUCurves(t *testing.T) {
	t.Parallel()
	m := channelFibre(t)
	if !slices.ContainsFunc(m.EdgeCurve, func(c int32) bool { return c == 0 }) || !slices.ContainsFunc(m.EdgeCurve, func(c int32) bool { return c == 1 }) {
		t.Fatalf("the mesh lacks curved edges: %v", m.Curves)
	}
	u := make([]float64, m.NumVertices())
	ue := make([]float64, m.NumEdges())
	for e := range ue {
		ue[e] = float64(e)
	}
	for _, tc := range []struct {
		name string
		opt  *mesh.VTUOptions
		d    *mesh.Data
	}{
		{"default", nil, nil},
		{"base64, uncompressed, UInt32 headers", &mesh.VTUOptions{Encoding: mesh.VTUAppendedBase64, Uncompressed: true, Header32: true}, nil},
		{"inline", &mesh.VTUOptions{Encoding: mesh.VTUInline}, nil},
		{"ascii", &mesh.VTUOptions{Encoding: mesh.VTUASCII}, nil},
		{"quadratic cells", nil, &mesh.Data{Point: map[string][]float64{"u": u}, Edge: map[string][]float64{"u": ue}}},
	} {
		var buf bytes.Buffer
		if err := mesh.WriteVTU(&buf, m, tc.d, tc.opt); err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		back, _, err := mesh.ReadVTU(bytes.NewReader(buf.Bytes()))
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if !slices.Equal(back.EdgeCurve, m.EdgeCurve) || !slices.Equal(back.Curves, m.Curves) {
			t.Fatalf("%s: curves read back: %v on %d edges, want %v", tc.name, back.Curves, len(back.EdgeCurve), m.Curves)
		}
		sameRefinements(t, m, back, 2, tc.name)
	}
	// A refined mesh, with vertices left on chords, reads back too.
	fine, _, err := m.RefineUniform()
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := mesh.WriteVTU(&buf, fine, nil, nil); err != nil {
		t.Fatal(err)
	}
	back, _, err := mesh.ReadVTU(&buf)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(back.EdgeCurve, fine.EdgeCurve) {
		t.Error("refined mesh: curves differ after the round trip")
	}
	// A curve that is not a Circle is left out.
	own := projectFuncChannel(t, m)
	buf.Reset()
	if err := mesh.WriteVTU(&buf, own, nil, &mesh.VTUOptions{Encoding: mesh.VTUASCII}); err != nil {
		t.Fatal(err)
	}
	if s := buf.String(); strings.Contains(s, "circles") || strings.Contains(s, "edge_curve") {
		t.Error("a ProjectFunc curve was written")
	}
	// The name of the mesh's own array is not free for a Cell field.
	err = mesh.WriteVTU(&buf, m, &mesh.Data{Cell: map[string][]float64{"edge_curve": make([]float64, m.NumTriangles())}}, nil)
	if !errors.Is(err, mesh.ErrArgument) {
		t.Errorf("Cell field edge_curve: err = %v, want ErrArgument", err)
	}
}

// vtuSquare is an ASCII VTU file of the unit square cut along 0–2 into the
// cells 0 1 2 and 0 2 3, with the given FieldData (whole elements) and
// edge_curve values; the circle of radius 1 about (0, 1) passes through
// vertices 0 and 2.
func vtuSquare(field, curve string) string {
	s := `<?xml version="1.0"?>
<VTKFile type="UnstructuredGrid" version="1.0" byte_order="LittleEndian">
 <UnstructuredGrid>
` + field + `
  <Piece NumberOfPoints="4" NumberOfCells="2">
   <CellData>
`
	if curve != "" {
		s += `    <DataArray type="Int32" Name="edge_curve" NumberOfComponents="3" format="ascii">` + curve + `</DataArray>
`
	}
	return s + `   </CellData>
   <Points><DataArray type="Float64" NumberOfComponents="3" format="ascii">0 0 0 1 0 0 1 1 0 0 1 0</DataArray></Points>
   <Cells>
    <DataArray type="Int32" Name="connectivity" format="ascii">0 1 2 0 2 3</DataArray>
    <DataArray type="Int32" Name="offsets" format="ascii">3 6</DataArray>
    <DataArray type="UInt8" Name="types" format="ascii">5 5</DataArray>
   </Cells>
  </Piece>
 </UnstructuredGrid>
</VTKFile>
`
}

// circlesField is a FieldData element with the circles array of n tuples.
func circlesField(n, values string) string {
	return `  <FieldData>
   <DataArray type="Float64" Name="circles" NumberOfComponents="3" NumberOfTuples="` + n + `" format="ascii">` + values + `</DataArray>
  </FieldData>`
}

// ReadVTU reads the circles of a file written by hand after the layout of
// the VTK XML format (a FieldData element in the UnstructuredGrid element,
// before the Piece, its DataArrays with NumberOfTuples: from memory of the
// format), ignores other FieldData arrays, and rejects curves that do not
// fit the mesh.
func TestReadVTUCurves(t *testing.T) {
	t.Parallel()
	good := circlesField("1", "0 1 1")
	other := `  <FieldData>
   <DataArray type="Float32" Name="time" NumberOfTuples="1" format="ascii">not read</DataArray>
  </FieldData>`
	for _, file := range []string{vtuSquare(good, "-1 -1 0  0 -1 -1"), vtuSquare(other+"\n"+good, "-1 -1 0  0 -1 -1")} {
		m, _, err := mesh.ReadVTU(strings.NewReader(file))
		if err != nil {
			t.Fatal(err)
		}
		n := slices.IndexFunc(m.EdgeCurve, func(c int32) bool { return c == 0 })
		if n < 0 || m.Edge[2*n] != 0 || m.Edge[2*n+1] != 2 || len(m.Curves) != 1 || m.Curves[0] != (mesh.Circle{X: 0, Y: 1, R: 1}) {
			t.Errorf("the edge 0–2 does not follow the circle: %v on %v", m.Curves, m.EdgeCurve)
		}
		if c := slices.IndexFunc(m.EdgeCurve, func(c int32) bool { return c >= 0 }); c != n || slices.IndexFunc(m.EdgeCurve[n+1:], func(c int32) bool { return c >= 0 }) >= 0 {
			t.Errorf("other edges follow curves: %v", m.EdgeCurve)
		}
	}
	if m, _, err := mesh.ReadVTU(strings.NewReader(vtuSquare(other, ""))); err != nil || m.EdgeCurve != nil {
		t.Errorf("FieldData without circles: %v, curves %v", err, m)
	}
	for _, tc := range []struct {
		name, field, curve string
		want               error
	}{
		{"circles without edges", good, "-1 -1 -1 -1 -1 -1", mesh.ErrFormat},
		{"circles without edge_curve", good, "", mesh.ErrFormat},
		{"edge_curve without circles", "", "-1 -1 0  0 -1 -1", mesh.ErrFormat},
		{"no such circle", good, "-1 -1 1  1 -1 -1", mesh.ErrFormat},
		{"cells disagree", circlesField("2", "0 1 1 0 1 1"), "-1 -1 0  1 -1 -1", mesh.ErrFormat},
		{"one cell straight", good, "-1 -1 0  -1 -1 -1", mesh.ErrFormat},
		{"not an index", good, "-1 -1 0.5  0.5 -1 -1", mesh.ErrFormat},
		{"below -1", good, "-1 -1 -2  -2 -1 -1", mesh.ErrFormat},
		{"zero radius", circlesField("1", "0 1 0"), "-1 -1 0  0 -1 -1", mesh.ErrFormat},
		{"through the centre", circlesField("1", "0.5 0.5 1"), "-1 -1 0  0 -1 -1", mesh.ErrNotFinite},
		{"two components", strings.Replace(good, `NumberOfComponents="3"`, `NumberOfComponents="2"`, 1), "-1 -1 0  0 -1 -1", mesh.ErrFormat},
		{"no NumberOfTuples", strings.Replace(good, ` NumberOfTuples="1"`, "", 1), "-1 -1 0  0 -1 -1", mesh.ErrFormat},
		{"more circles than edges", circlesField("7", strings.Repeat("0 1 1 ", 7)), "-1 -1 0  0 -1 -1", mesh.ErrFormat},
		{"short", circlesField("2", "0 1 1"), "-1 -1 0  0 -1 -1", mesh.ErrFormat},
	} {
		_, _, err := mesh.ReadVTU(strings.NewReader(vtuSquare(tc.field, tc.curve)))
		t.Logf("%s: %v", tc.name, err)
		if !errors.Is(err, tc.want) || !errors.Is(err, mesh.ErrFormat) {
			t.Errorf("%s: err = %v, want %v and ErrFormat", tc.name, err, tc.want)
		}
	}
}
