package mesh

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"strconv"
)

// VTK cell type codes of the VTK file formats.
const (
	vtkTriangle          = 5  // linear triangle: 3 corners
	vtkQuadraticTriangle = 22 // 3 corners, then the midpoints of edges 0–1, 1–2, 2–0
)

// Names of the cell arrays that WriteVTU writes from the mesh itself; Cell
// fields may not use them.
const (
	vtuRegion    = "region"
	vtuEdgeTag   = "edge_tag"
	vtuEdgeCurve = "edge_curve"
)

// vtuCircles is the name of the FieldData array of the circles that edges
// follow.
const vtuCircles = "circles"

// VTUEncoding selects how WriteVTU stores the arrays of a VTU file.
type VTUEncoding int

// The encodings of the VTK XML format. The binary ones (all but VTUASCII)
// hold the exact bits of every number.
const (
	// VTUAppendedRaw puts the arrays as raw bytes in the AppendedData
	// section at the end of the file (encoding="raw"). It is the default:
	// the smallest and fastest, but not valid XML, since the bytes are raw.
	VTUAppendedRaw VTUEncoding = iota
	// VTUAppendedBase64 puts them in the AppendedData section in base64
	// (encoding="base64"), so that the file is valid XML.
	VTUAppendedBase64
	// VTUInline puts each array in base64 inside its DataArray element
	// (format="binary").
	VTUInline
	// VTUASCII writes each array as text inside its DataArray element
	// (format="ascii"), numbers in the shortest form that reads back
	// exactly. It is several times larger and slower than the binary
	// encodings, and is never compressed.
	VTUASCII
)

// VTUOptions selects the encoding of WriteVTU. A nil *VTUOptions, like the
// zero value, writes appended raw data, zlib-compressed, with UInt64
// headers.
type VTUOptions struct {
	Encoding VTUEncoding
	// Uncompressed leaves the binary data as it is instead of compressing
	// it with zlib (compressor="vtkZLibDataCompressor").
	Uncompressed bool
	// Header32 writes the byte counts of the binary data as UInt32
	// (header_type="UInt32") instead of UInt64; WriteVTU then refuses, with
	// ErrArgument, an array of 4 GiB or more.
	Header32 bool
}

// WriteVTU writes m, and the fields of d if d is not nil, as a VTK XML
// UnstructuredGrid file (.vtu, format version 1.0), which common
// visualisation tools open directly and ReadVTU reads back exactly. opt
// selects the encoding; nil means the default of VTUOptions.
//
// Without Edge fields the cells are linear triangles (VTK cell type 5) on
// the vertices of m. With Edge fields they are quadratic triangles (VTK
// cell type 22): the points are the vertices of m followed by the
// midpoints of its edges in edge order, and each cell lists its three
// corners Tri[3k], Tri[3k+1], Tri[3k+2], then the midpoints of its edges
// 0–1, 1–2 and 2–0. A Point field is then written at all these points: a
// field with an Edge field takes its Edge values at the midpoints (so that
// a reader rebuilds the P2 field exactly), a field without one takes
// 0.5·(a + b), the value of the linear field, at the midpoint of edge a–b.
//
// The points are written as Float64 with z = 0; the cells as connectivity
// (Int32, or Int64 beyond 2³¹ entries), Int32 or Int64 offsets and UInt8
// types. The cell data hold an Int32 array "region" with m.Region, an
// Int32 array "edge_tag" of 3 components holding, for the cell's edges 0–1,
// 1–2 and 2–0, the boundary tag, or Interior (-1) for an interior edge (so
// that ReadVTU recovers the tags, and the faces of a slit), and then the
// Cell fields of d as Float64. The point data hold the Point fields as
// Float64. Fields are written in sorted name order.
//
// When edges of m follow circles (Circle values of m.Curves), the
// UnstructuredGrid's FieldData holds a Float64 array "circles" of 3
// components (x and y of the centre, and the radius; NumberOfTuples the
// number of circles, in the order of m.Curves), and the cell data an Int32
// array "edge_curve" of 3 components holding, for the cell's edges 0–1,
// 1–2 and 2–0, the index of the circle the edge follows, or -1; ReadVTU
// attaches them again. Curves of other kinds (ProjectFunc) are not
// written.
//
// Binary data are compressed by default in blocks of 64 KiB with
// compress/zlib at its fastest level, the blocks in parallel; the output
// does not depend on GOMAXPROCS. WriteVTU holds the compressed data of the
// whole file in memory before writing it (the XML header, written first,
// needs their sizes), about the size of the file.
//
// On the uniform L-shape mesh LShape(409), about 1.0e6 triangles, with a
// smooth linear field "u", two Cell fields "eta" and "err" and the region
// (BenchmarkWriteFiles), the default encoding takes 27.8 bytes per
// triangle; with u quadratic, 53.7. Writing took 146–153 ns per triangle
// for the linear case and 345–356 for the quadratic one (three runs on a
// two-core machine).
//
// d is checked with Data.Check before anything is written; a Cell field may
// not be called "region", "edge_tag" or "edge_curve". Errors from w are returned wrapped.
func WriteVTU(w io.Writer, m *Mesh, d *Data, opt *VTUOptions) error {
	if err := checkShape(m, "vtu"); err != nil {
		return err
	}
	if err := d.Check(m); err != nil {
		return err
	}
	var o VTUOptions
	if opt != nil {
		o = *opt
	}
	if o.Encoding < VTUAppendedRaw || o.Encoding > VTUASCII {
		return fmt.Errorf("mesh: vtu: unknown encoding %d: %w", o.Encoding, ErrArgument)
	}
	if d == nil {
		d = &Data{}
	}
	for _, name := range []string{vtuRegion, vtuEdgeTag, vtuEdgeCurve} {
		if _, ok := d.Cell[name]; ok {
			return fmt.Errorf("mesh: vtu: cell field name %q is reserved for the mesh's own array: %w", name, ErrArgument)
		}
	}
	arrays := vtuArrays(m, d)
	hsize := 8
	if o.Header32 {
		hsize = 4
	}
	if o.Encoding != VTUASCII {
		for _, a := range arrays {
			if o.Header32 && a.n*a.width > math.MaxUint32 {
				return fmt.Errorf("mesh: vtu: array %q of %d bytes needs UInt64 headers: %w", a.name, a.n*a.width, ErrArgument)
			}
		}
	}
	var blocks [][]byte
	if o.Encoding != VTUASCII && !o.Uncompressed {
		var err error
		if blocks, err = compressArrays(arrays); err != nil {
			return fmt.Errorf("mesh: vtu: compress: %w", err)
		}
	}
	e := &vtuEncoder{o: o, hsize: hsize, arrays: arrays, blocks: blocks}
	t := &textWriter{w: bufio.NewWriterSize(w, 1<<16)}
	e.t = t
	e.write(m)
	if err := t.flush(); err != nil {
		return fmt.Errorf("mesh: vtu: write: %w", err)
	}
	return nil
}

// Sections of a Piece, in the order in which WriteVTU writes them, and
// then the FieldData of the UnstructuredGrid, which WriteVTU writes before
// the Piece.
const (
	inPointData = iota
	inCellData
	inPoints
	inCells
	inFieldData
)

var sectionNames = [...]string{"PointData", "CellData", "Points", "Cells", "FieldData"}

// pieceSections is the number of sections of a Piece.
const pieceSections = inFieldData

// vtuArray describes one DataArray to write: n values (components
// counted), of width bytes each, given by f for a Float64 array and by k
// for an integer one.
type vtuArray struct {
	section int
	typ     string // Float64, Int32, Int64 or UInt8
	name    string // empty for the points
	ncomp   int    // 0: not written (one component)
	n       int
	width   int
	f       func(i int) float64
	k       func(i int) int64
	block0  int // index of the array's first block in the compressed blocks
}

// vtuArrays lists the arrays of m and d in the order of the file.
func vtuArrays(m *Mesh, d *Data) []*vtuArray {
	nv, nt := m.NumVertices(), m.NumTriangles()
	quad := len(d.Edge) > 0
	np, npc, typ := nv, 3, int64(vtkTriangle)
	if quad {
		np, npc, typ = nv+m.NumEdges(), 6, vtkQuadraticTriangle
	}
	var out []*vtuArray
	circles, edgeCircle := circlesOf(m)
	if circles != nil {
		out = append(out, &vtuArray{section: inFieldData, typ: "Float64", name: vtuCircles, ncomp: 3, n: 3 * len(circles), width: 8,
			f: func(i int) float64 {
				c := circles[i/3]
				return [3]float64{c.X, c.Y, c.R}[i%3]
			}})
	}
	for _, name := range sortedNames(d.Point) {
		v, ev := d.Point[name], d.Edge[name]
		f := func(i int) float64 {
			switch {
			case i < nv:
				return v[i]
			case ev != nil:
				return ev[i-nv]
			}
			e := i - nv
			return 0.5 * (v[m.Edge[2*e]] + v[m.Edge[2*e+1]])
		}
		out = append(out, &vtuArray{section: inPointData, typ: "Float64", name: name, n: np, width: 8, f: f})
	}
	out = append(out, &vtuArray{section: inCellData, typ: "Int32", name: vtuRegion, n: nt, width: 4,
		k: func(k int) int64 { return int64(m.Region[k]) }})
	out = append(out, &vtuArray{section: inCellData, typ: "Int32", name: vtuEdgeTag, ncomp: 3, n: 3 * nt, width: 4,
		k: func(i int) int64 { return int64(m.EdgeTag[m.TriEdge[vtkEdge(i)]]) }})
	if circles != nil {
		out = append(out, &vtuArray{section: inCellData, typ: "Int32", name: vtuEdgeCurve, ncomp: 3, n: 3 * nt, width: 4,
			k: func(i int) int64 { return int64(edgeCircle[m.TriEdge[vtkEdge(i)]]) }})
	}
	for _, name := range sortedNames(d.Cell) {
		v := d.Cell[name]
		out = append(out, &vtuArray{section: inCellData, typ: "Float64", name: name, n: nt, width: 8,
			f: func(k int) float64 { return v[k] }})
	}
	out = append(out, &vtuArray{section: inPoints, typ: "Float64", ncomp: 3, n: 3 * np, width: 8,
		f: func(i int) float64 {
			p, c := i/3, i%3
			switch {
			case c == 2:
				return 0
			case p < nv:
				return m.X[2*p+c]
			}
			e := p - nv
			return 0.5 * (m.X[2*m.Edge[2*e]+int32(c)] + m.X[2*m.Edge[2*e+1]+int32(c)])
		}})
	idx := &vtuArray{section: inCells, typ: "Int32", name: "connectivity", n: npc * nt, width: 4,
		k: func(i int) int64 {
			if i%npc < 3 {
				return int64(m.Tri[3*(i/npc)+i%npc])
			}
			return int64(nv) + int64(m.TriEdge[vtkEdge(3*(i/npc)+i%npc-3)])
		}}
	off := &vtuArray{section: inCells, typ: "Int32", name: "offsets", n: nt, width: 4,
		k: func(k int) int64 { return int64(npc) * int64(k+1) }}
	if npc*nt > math.MaxInt32 {
		idx.typ, idx.width, off.typ, off.width = "Int64", 8, "Int64", 8
	}
	out = append(out, idx, off, &vtuArray{section: inCells, typ: "UInt8", name: "types", n: nt, width: 1,
		k: func(int) int64 { return typ }})
	return out
}

// vtkEdge maps 3k+j, edge j of triangle k in the VTK order (0–1, 1–2,
// 2–0), to the index into TriEdge of that edge: edge i of a triangle in
// TriEdge is the one opposite its vertex i, so 0–1 is TriEdge[3k+2], 1–2
// is TriEdge[3k] and 2–0 is TriEdge[3k+1].
func vtkEdge(i int) int {
	return i - i%3 + (i%3+2)%3
}

// vtuEncoder writes the XML and the data of a VTU file.
type vtuEncoder struct {
	o      VTUOptions
	hsize  int
	arrays []*vtuArray
	blocks [][]byte // compressed blocks of all arrays, nil if uncompressed
	t      *textWriter
}

func (e *vtuEncoder) write(m *Mesh) {
	t := e.t
	t.str("<?xml version=\"1.0\"?>\n")
	t.str("<VTKFile type=\"UnstructuredGrid\" version=\"1.0\" byte_order=\"LittleEndian\"")
	if e.o.Encoding != VTUASCII {
		if e.o.Header32 {
			t.str(" header_type=\"UInt32\"")
		} else {
			t.str(" header_type=\"UInt64\"")
		}
		if !e.o.Uncompressed {
			t.str(" compressor=\"vtkZLibDataCompressor\"")
		}
	}
	t.str(">\n  <UnstructuredGrid>\n")
	np := m.NumVertices()
	for _, a := range e.arrays {
		if a.section == inPoints {
			np = a.n / 3
		}
	}
	offset := 0
	e.section(inFieldData, "    ", &offset)
	t.printf("    <Piece NumberOfPoints=\"%d\" NumberOfCells=\"%d\">\n", np, m.NumTriangles())
	for s := range pieceSections {
		e.section(s, "      ", &offset)
	}
	t.str("    </Piece>\n  </UnstructuredGrid>\n")
	if e.o.Encoding == VTUAppendedRaw || e.o.Encoding == VTUAppendedBase64 {
		b64 := e.o.Encoding == VTUAppendedBase64
		if b64 {
			t.str("  <AppendedData encoding=\"base64\">\n   _")
		} else {
			t.str("  <AppendedData encoding=\"raw\">\n   _")
		}
		for _, a := range e.arrays {
			e.binary(a, b64)
		}
		t.str("\n  </AppendedData>\n")
	}
	t.str("</VTKFile>\n")
}

// section writes the DataArray elements of section s, with the given
// indentation, advancing offset by the appended size of each. A FieldData
// section is left out when it has no arrays; its arrays carry
// NumberOfTuples, as the format requires there.
func (e *vtuEncoder) section(s int, indent string, offset *int) {
	t := e.t
	some := false
	for _, a := range e.arrays {
		some = some || a.section == s
	}
	if s == inFieldData && !some {
		return
	}
	t.str(indent + "<" + sectionNames[s] + ">\n")
	for _, a := range e.arrays {
		if a.section != s {
			continue
		}
		t.str(indent + "  <DataArray type=\"" + a.typ + "\"")
		if a.name != "" {
			t.str(" Name=\"" + a.name + "\"")
		}
		if a.ncomp > 0 {
			t.str(" NumberOfComponents=\"" + strconv.Itoa(a.ncomp) + "\"")
		}
		if s == inFieldData {
			t.str(" NumberOfTuples=\"" + strconv.Itoa(a.n/max(a.ncomp, 1)) + "\"")
		}
		switch e.o.Encoding {
		case VTUASCII:
			t.str(" format=\"ascii\">\n")
			e.ascii(a)
			t.str(indent + "  </DataArray>\n")
		case VTUInline:
			t.str(" format=\"binary\">\n" + indent + "    ")
			e.binary(a, true)
			t.str("\n" + indent + "  </DataArray>\n")
		default:
			t.str(" format=\"appended\" offset=\"" + strconv.Itoa(*offset) + "\"/>\n")
			*offset += e.encodedSize(a)
		}
	}
	t.str(indent + "</" + sectionNames[s] + ">\n")
}

// ascii writes the values of a as text, a few to a line.
func (e *vtuEncoder) ascii(a *vtuArray) {
	t := e.t
	perLine := 6
	if a.ncomp == 3 {
		perLine = 3
	} else if a.k != nil {
		perLine = 12
	}
	for i := 0; i < a.n && t.err == nil; i++ {
		if i%perLine == 0 {
			t.str("          ")
		} else {
			t.str(" ")
		}
		if a.f != nil {
			t.float(a.f(i))
		} else {
			t.int(a.k(i))
		}
		if i%perLine == perLine-1 || i == a.n-1 {
			t.str("\n")
		}
	}
}
