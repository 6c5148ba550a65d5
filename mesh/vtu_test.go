package mesh

import (
	"bytes"
	"encoding/xml"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// vtkFile is the part of a VTK XML UnstructuredGrid file that the tests
// look at.
type vtkFile struct {
	XMLName xml.Name `xml:"VTKFile"`
	Type    string   `xml:"type,attr"`
	Piece   struct {
		NumberOfPoints int        `xml:"NumberOfPoints,attr"`
		NumberOfCells  int        `xml:"NumberOfCells,attr"`
		PointData      []vtkArray `xml:"PointData>DataArray"`
		CellData       []vtkArray `xml:"CellData>DataArray"`
		Points         []vtkArray `xml:"Points>DataArray"`
		Cells          []vtkArray `xml:"Cells>DataArray"`
	} `xml:"UnstructuredGrid>Piece"`
}

type vtkArray struct {
	Type   string `xml:"type,attr"`
	Name   string `xml:"Name,attr"`
	NComp  int    `xml:"NumberOfComponents,attr"`
	Format string `xml:"format,attr"`
	Text   string `xml:",chardata"`
}

func (a vtkArray) values(t *testing.T) []float64 {
	t.Helper()
	var v []float64
	for _, s := range strings.Fields(a.Text) {
		x, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatalf("array %q: %v", a.Name, err)
		}
		v = append(v, x)
	}
	return v
}

func TestWriteVTU(t *testing.T) {
	m, err := Quadrants(2)
	if err != nil {
		t.Fatal(err)
	}
	d := testData(m)
	var buf bytes.Buffer
	if err := WriteVTU(&buf, m, d, &VTUOptions{Encoding: VTUASCII}); err != nil {
		t.Fatal(err)
	}
	var f vtkFile
	if err := xml.Unmarshal(buf.Bytes(), &f); err != nil {
		t.Fatal(err)
	}
	p := f.Piece
	nv, nt := m.NumVertices(), m.NumTriangles()
	if f.Type != "UnstructuredGrid" || p.NumberOfPoints != nv || p.NumberOfCells != nt {
		t.Fatalf("type %q, %d points, %d cells; want %d, %d", f.Type, p.NumberOfPoints, p.NumberOfCells, nv, nt)
	}
	if len(p.Points) != 1 || p.Points[0].NComp != 3 || p.Points[0].Type != "Float64" {
		t.Fatalf("Points = %+v", p.Points)
	}
	pts := p.Points[0].values(t)
	if len(pts) != 3*nv {
		t.Fatalf("%d point values, want %d", len(pts), 3*nv)
	}
	for i := range nv {
		if pts[3*i] != m.X[2*i] || pts[3*i+1] != m.X[2*i+1] || pts[3*i+2] != 0 {
			t.Fatalf("point %d = %v", i, pts[3*i:3*i+3])
		}
	}
	cells := map[string]vtkArray{}
	for _, a := range p.Cells {
		cells[a.Name] = a
	}
	conn, off, typ := cells["connectivity"].values(t), cells["offsets"].values(t), cells["types"].values(t)
	if len(conn) != 3*nt || len(off) != nt || len(typ) != nt || cells["types"].Type != "UInt8" {
		t.Fatalf("cells: %d, %d, %d values", len(conn), len(off), len(typ))
	}
	for k := range nt {
		if off[k] != float64(3*(k+1)) || typ[k] != 5 {
			t.Fatalf("cell %d: offset %v, type %v", k, off[k], typ[k])
		}
	}
	for i, v := range conn {
		if v != float64(m.Tri[i]) {
			t.Fatalf("connectivity[%d] = %v, want %d", i, v, m.Tri[i])
		}
	}
	// Cell data: region and edge tags first, then the fields in name order.
	if len(p.CellData) != 3 || p.CellData[0].Name != "region" || p.CellData[0].Type != "Int32" ||
		p.CellData[1].Name != "edge_tag" || p.CellData[1].NComp != 3 || p.CellData[2].Name != "eta" {
		t.Fatalf("CellData = %+v", p.CellData)
	}
	tags := p.CellData[1].values(t)
	for k := range nt {
		for j := range 3 { // edge j joins corners j and j+1 (VTK order)
			a, b := m.Tri[3*k+j], m.Tri[3*k+(j+1)%3]
			if want := m.EdgeTag[m.findEdge(a, b)]; tags[3*k+j] != float64(want) {
				t.Fatalf("edge_tag of cell %d, edge %d-%d = %v, want %d", k, a, b, tags[3*k+j], want)
			}
		}
	}
	reg := p.CellData[0].values(t)
	for k := range nt {
		if reg[k] != float64(m.Region[k]) {
			t.Fatalf("region[%d] = %v, want %d", k, reg[k], m.Region[k])
		}
	}
	if !slices.Equal(p.CellData[2].values(t), d.Cell["eta"]) {
		t.Error("cell field eta differs")
	}
	if len(p.PointData) != 2 || p.PointData[0].Name != "u" || p.PointData[1].Name != "w_2.x-y" {
		t.Fatalf("PointData = %+v", p.PointData)
	}
	for _, a := range p.PointData {
		if a.Type != "Float64" || a.Format != "ascii" || !slices.Equal(a.values(t), d.Point[a.Name]) {
			t.Errorf("point field %q differs", a.Name)
		}
	}
}

// writeVTU returns WriteVTU with the options opt, in the shape of the
// other writers.
func writeVTU(opt *VTUOptions) func(io.Writer, *Mesh, *Data) error {
	return func(w io.Writer, m *Mesh, d *Data) error { return WriteVTU(w, m, d, opt) }
}

func TestWriteVTURejects(t *testing.T) {
	m, err := Rectangle(0, 0, 1, 1, 1, 1)
	if err != nil {
		t.Fatal(err)
	}
	checkRejects(t, m, writeVTU(nil), []badData{
		{"NaN", &Data{Point: map[string][]float64{"u": {0, 1, math.NaN(), 3}}}, ErrNotFinite},
		{"length", &Data{Point: map[string][]float64{"u": {0, 1}}}, ErrLength},
		{"name", &Data{Cell: map[string][]float64{"a<b": {1, 2}}}, ErrArgument},
		{"region", &Data{Cell: map[string][]float64{"region": {1, 2}}}, ErrArgument},
	})
	if err := WriteVTU(&errWriter{100}, m, nil, nil); !errors.Is(err, errBoom) {
		t.Errorf("failing writer: error %v", err)
	}
}

func TestWriteVTUGolden(t *testing.T) {
	m, err := Rectangle(0, 0, 1, 1, 1, 1)
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := WriteVTU(&buf, m, nil, &VTUOptions{Encoding: VTUASCII}); err != nil {
		t.Fatal(err)
	}
	golden(t, "rect1.vtu", buf.Bytes())
}

// golden compares got with the file testdata/name, or rewrites the file
// when the -update flag is given.
func golden(t *testing.T, name string, got []byte) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.MkdirAll("testdata", 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -update to create it)", err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("output differs from %s (run go test -update after checking it):\n%s", path, got)
	}
}
