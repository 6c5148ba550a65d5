package mesh

import (
	"bytes"
	"encoding/binary"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
)

// ReadVTU reads a mesh and its fields from a VTK XML UnstructuredGrid file
// (.vtu) in any of the encodings of the format: ASCII, binary inline in
// base64, or in an appended section in raw bytes or base64; uncompressed or
// compressed with zlib (compressor="vtkZLibDataCompressor"); with UInt32 or
// UInt64 headers; in either byte order. Arrays may be of any of the
// format's numeric types (Int8 to UInt64, Float32, Float64); integer data
// must be integers, and values are converted to float64 (exactly, for
// every type but 64-bit integers beyond 2⁵³, which are refused).
//
// The file must hold one Piece whose cells are all linear triangles (VTK
// cell type 5) or all quadratic triangles (type 22), with points in the
// plane z = 0. The corner points of the cells, in the order of the file,
// become the vertices of the mesh, and the cells its triangles, in order;
// every point must be a corner or (for quadratic cells) an edge midpoint of
// some cell, and no point both. The coordinates of midpoint points are not
// used: the edges are straight.
//
// A CellData array "region" (integers) gives the regions; an Int32 array
// "edge_tag" of 3 components, as WriteVTU writes it, gives the boundary
// tags of each cell's edges 0–1, 1–2 and 2–0 (-1 for none), which New needs
// to accept the two faces of a slit. Without it every boundary edge gets
// tag 0, and a mesh with a slit is refused (ErrCoincident). Every other
// array of one component becomes a field: a CellData array a Cell field, a
// PointData array a Point field (its values at the corner points) and, on
// quadratic cells, also an Edge field with its values at the midpoint
// points, unless each of them is exactly 0.5·(a + b) of the values a and b
// at the ends of its edge, as WriteVTU writes a linear field (such a field
// is read as a Point field alone, which is the same function up to the
// rounding of that mean). Two midpoint points of one edge must carry equal
// values. Field names follow the rules of Data; arrays of several
// components other than "edge_tag" and "edge_curve" are refused.
//
// Circles, as WriteVTU writes them: a FieldData array "circles" of the
// UnstructuredGrid (3 components, x, y and r, and NumberOfTuples) and a
// CellData array "edge_curve" of 3 components (for each cell edge in the
// order of "edge_tag", the index of its circle or -1; the two cells of an
// interior edge must agree) give the mesh's Curves and EdgeCurve. As in
// ReadJSON, the ends of a curved edge need not lie on its circle (a vertex
// that Refine left on a chord), but the midpoint of its chord must not be
// the centre (ErrNotFinite). Other FieldData arrays, and other elements,
// are ignored.
//
// Malformed input gives a *FormatError wrapping ErrFormat (and ErrNotFinite
// for a NaN or infinite field value), or ErrTooLarge for more than
// MaxReadTriangles cells or MaxReadVertices + 3·MaxReadTriangles points.
// The arrays are then handed to New, whose *ValidationError is returned
// wrapped. ReadVTU reads the whole input into memory; beyond it, it
// allocates in proportion to the data it decodes (at most about 1,000
// times the compressed size, the limit of zlib), never to a size declared
// in a header alone. On success the *Data is not nil; an empty map is nil.
func ReadVTU(r io.Reader) (*Mesh, *Data, error) {
	src, err := io.ReadAll(r)
	if err != nil {
		return nil, nil, fmt.Errorf("mesh: vtu: read: %w", err)
	}
	p := &vtuParser{src: src}
	if err := p.parse(); err != nil {
		return nil, nil, err
	}
	return p.build()
}

// vtuErr returns a VTU *FormatError for field wrapping base.
func vtuErr(field string, base error, format string, args ...any) *FormatError {
	return &FormatError{Format: "vtu", Field: field, Err: fmt.Errorf("%w: "+format, append([]any{base}, args...)...)}
}

// vtuInput is one DataArray as found in the file.
type vtuInput struct {
	section int
	field   string // for errors: "PointData.u", "Cells.offsets", "Points"
	typ     string
	name    string
	ncomp   int
	tuples  int    // NumberOfTuples, for a FieldData array
	format  string // ascii, binary or appended
	offset  int
	text    []byte
	values  []float64
}

// vtuParser holds the state of ReadVTU.
type vtuParser struct {
	src        []byte
	order      binary.ByteOrder
	hsize      int
	compressed bool
	np, nc     int
	havePiece  bool
	arrays     []*vtuInput
	appended   int    // offset in src of the first byte after the underscore, -1 if none
	appEnc     string // raw or base64
}

// isCircles tells whether a DataArray of FieldData is the one ReadVTU
// reads (the others are ignored).
func isCircles(se xml.StartElement) bool {
	name, _ := attr(se, "Name")
	return name == vtuCircles
}

// Sections of a Piece that hold DataArrays: the order of sectionNames.
func sectionOf(name string) int {
	for s, n := range sectionNames[:pieceSections] {
		if n == name {
			return s
		}
	}
	return -1
}

func attr(se xml.StartElement, name string) (string, bool) {
	for _, a := range se.Attr {
		if a.Name.Local == name {
			return a.Value, true
		}
	}
	return "", false
}

// parse reads the XML structure and then decodes the arrays.
func (p *vtuParser) parse() error {
	p.appended = -1
	dec := xml.NewDecoder(bytes.NewReader(p.src))
	var stack []string
	section, sectionDepth := -1, -1
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			return vtuErr("", ErrFormat, "%v", err)
		}
		switch t := tok.(type) {
		case xml.StartElement:
			name := t.Name.Local
			depth := len(stack)
			stack = append(stack, name)
			switch {
			case depth == 0:
				if err := p.root(t); err != nil {
					return err
				}
			case depth == 1 && name == "UnstructuredGrid":
			case depth == 1 && name == "AppendedData":
				p.appEnc, _ = attr(t, "encoding")
				p.appended = int(dec.InputOffset())
				return p.decodeAll()
			case depth == 2 && name == "Piece" && stack[1] == "UnstructuredGrid":
				if err := p.piece(t); err != nil {
					return err
				}
			case depth == 2 && name == "FieldData" && stack[1] == "UnstructuredGrid":
				section, sectionDepth = inFieldData, depth
			case depth == 3 && stack[2] == "Piece" && sectionOf(name) >= 0:
				section, sectionDepth = sectionOf(name), depth
			case depth == sectionDepth+1 && section >= 0 && name == "DataArray" && (section != inFieldData || isCircles(t)):
				a, err := p.dataArray(dec, t, section)
				if err != nil {
					return err
				}
				p.arrays = append(p.arrays, a)
				stack = stack[:len(stack)-1] // dataArray read the end element
			default:
				if err := dec.Skip(); err != nil {
					return vtuErr("", ErrFormat, "%v", err)
				}
				stack = stack[:len(stack)-1]
			}
		case xml.EndElement:
			stack = stack[:len(stack)-1]
			if len(stack) == sectionDepth {
				section, sectionDepth = -1, -1
			}
		}
	}
	if p.order == nil {
		return vtuErr("", ErrFormat, "no VTKFile element")
	}
	return p.decodeAll()
}

// root reads the attributes of the VTKFile element.
func (p *vtuParser) root(se xml.StartElement) error {
	if se.Name.Local != "VTKFile" {
		return vtuErr("", ErrFormat, "root element %q, want VTKFile", se.Name.Local)
	}
	if typ, _ := attr(se, "type"); typ != "UnstructuredGrid" {
		return vtuErr("VTKFile", ErrFormat, "type %q, want UnstructuredGrid", typ)
	}
	switch bo, _ := attr(se, "byte_order"); bo {
	case "LittleEndian", "":
		p.order = binary.LittleEndian
	case "BigEndian":
		p.order = binary.BigEndian
	default:
		return vtuErr("VTKFile", ErrFormat, "byte_order %q, want LittleEndian or BigEndian", bo)
	}
	switch h, _ := attr(se, "header_type"); h {
	case "UInt32", "":
		p.hsize = 4
	case "UInt64":
		p.hsize = 8
	default:
		return vtuErr("VTKFile", ErrFormat, "header_type %q, want UInt32 or UInt64", h)
	}
	switch c, _ := attr(se, "compressor"); c {
	case "":
	case "vtkZLibDataCompressor":
		p.compressed = true
	default:
		return vtuErr("VTKFile", ErrFormat, "compressor %q is not supported (only vtkZLibDataCompressor)", c)
	}
	return nil
}

// piece reads the counts of the Piece element.
func (p *vtuParser) piece(se xml.StartElement) error {
	if p.havePiece {
		return vtuErr("Piece", ErrFormat, "more than one piece")
	}
	p.havePiece = true
	var err error
	if p.np, err = count(se, "NumberOfPoints", MaxReadVertices+3*MaxReadTriangles); err != nil {
		return err
	}
	p.nc, err = count(se, "NumberOfCells", MaxReadTriangles)
	return err
}

func count(se xml.StartElement, name string, limit int) (int, error) {
	s, ok := attr(se, name)
	if !ok {
		return 0, vtuErr("Piece", ErrFormat, "no %s", name)
	}
	v, err := strconv.ParseUint(s, 10, 63)
	switch {
	case errors.Is(err, strconv.ErrRange) || err == nil && v > uint64(limit):
		return 0, vtuErr("Piece", ErrTooLarge, "%s = %s, the limit is %d", name, s, limit)
	case err != nil:
		return 0, vtuErr("Piece", ErrFormat, "%s = %q is not a count", name, s)
	}
	return int(v), nil
}

// dataArray reads a DataArray element up to its end.
func (p *vtuParser) dataArray(dec *xml.Decoder, se xml.StartElement, section int) (*vtuInput, error) {
	a := &vtuInput{section: section, ncomp: 1}
	a.typ, _ = attr(se, "type")
	a.name, _ = attr(se, "Name")
	a.format, _ = attr(se, "format")
	a.field = sectionNames[section]
	if a.name != "" && section != inPoints {
		a.field += "." + a.name
	}
	if s, ok := attr(se, "NumberOfComponents"); ok {
		n, err := strconv.Atoi(s)
		if err != nil || n < 1 || n > 3 {
			return nil, vtuErr(a.field, ErrFormat, "NumberOfComponents %q (want 1, 2 or 3)", s)
		}
		a.ncomp = n
	}
	if _, ok := typeWidth(a.typ); !ok {
		return nil, vtuErr(a.field, ErrFormat, "type %q is not a numeric type of the format", a.typ)
	}
	if section == inFieldData {
		s, _ := attr(se, "NumberOfTuples")
		n, err := strconv.ParseUint(s, 10, 31)
		if err != nil {
			return nil, vtuErr(a.field, ErrFormat, "NumberOfTuples %q is not a count", s)
		}
		a.tuples = int(n)
	}
	switch a.format {
	case "ascii", "binary":
	case "appended":
		s, _ := attr(se, "offset")
		off, err := strconv.ParseUint(s, 10, 62)
		if err != nil {
			return nil, vtuErr(a.field, ErrFormat, "offset %q is not a count", s)
		}
		a.offset = int(off)
	default:
		return nil, vtuErr(a.field, ErrFormat, "format %q, want ascii, binary or appended", a.format)
	}
	for depth := 0; ; {
		tok, err := dec.Token()
		if err != nil {
			return nil, vtuErr(a.field, ErrFormat, "%v", err)
		}
		switch t := tok.(type) {
		case xml.CharData:
			if depth == 0 {
				a.text = append(a.text, t...)
			}
		case xml.StartElement:
			depth++
		case xml.EndElement:
			if depth == 0 {
				return a, nil
			}
			depth--
		}
	}
}

// typeWidth returns the size in bytes of a value of the numeric type typ.
func typeWidth(typ string) (int, bool) {
	switch typ {
	case "Int8", "UInt8":
		return 1, true
	case "Int16", "UInt16":
		return 2, true
	case "Int32", "UInt32", "Float32":
		return 4, true
	case "Int64", "UInt64", "Float64":
		return 8, true
	}
	return 0, false
}

// decodeAll decodes the values of every array.
func (p *vtuParser) decodeAll() error {
	if !p.havePiece {
		return vtuErr("", ErrFormat, "no UnstructuredGrid Piece")
	}
	var app []byte
	if p.appended >= 0 {
		rest := p.src[p.appended:]
		i := bytes.IndexByte(rest, '_')
		if i < 0 || len(bytes.TrimSpace(rest[:i])) != 0 {
			return vtuErr("AppendedData", ErrFormat, "no underscore before the data")
		}
		app = rest[i+1:]
		switch p.appEnc {
		case "raw":
		case "base64":
			if j := bytes.IndexByte(app, '<'); j >= 0 {
				app = app[:j]
			}
		default:
			return vtuErr("AppendedData", ErrFormat, "encoding %q, want raw or base64", p.appEnc)
		}
	}
	for _, a := range p.arrays {
		n, exact, err := p.expected(a)
		if err != nil {
			return err
		}
		switch a.format {
		case "ascii":
			a.values, err = decodeASCII(a, n, exact)
		case "binary":
			a.values, err = p.decodeBinary(a, &b64Source{text: a.text}, n, exact)
		default:
			if app == nil {
				return vtuErr(a.field, ErrFormat, "appended data, but no AppendedData section")
			}
			if a.offset > len(app) {
				return vtuErr(a.field, ErrFormat, "offset %d beyond the %d bytes of appended data", a.offset, len(app))
			}
			var s byteSource = &rawSource{b: app[a.offset:]}
			if p.appEnc == "base64" {
				s = &b64Source{text: app[a.offset:]}
			}
			a.values, err = p.decodeBinary(a, s, n, exact)
		}
		if err != nil {
			return at(err, a.field)
		}
		a.text = nil
	}
	return nil
}

// expected returns the number of values a must hold, exactly or (for the
// connectivity, checked later against the offsets) at most.
func (p *vtuParser) expected(a *vtuInput) (n int, exact bool, err error) {
	switch a.section {
	case inPoints:
		if a.ncomp != 3 {
			return 0, false, vtuErr(a.field, ErrFormat, "%d components, want 3", a.ncomp)
		}
		return 3 * p.np, true, nil
	case inPointData:
		if a.ncomp != 1 {
			return 0, false, vtuErr(a.field, ErrFormat, "%d components: only arrays of one component are read", a.ncomp)
		}
		return p.np, true, nil
	case inFieldData:
		// The circles: at most one per cell edge, since each must be
		// followed by an edge.
		if a.ncomp != 3 {
			return 0, false, vtuErr(a.field, ErrFormat, "%d components, want 3 (x, y and r of each circle)", a.ncomp)
		}
		if a.tuples > 3*p.nc {
			return 0, false, vtuErr(a.field, ErrFormat, "%d circles, more than the %d cell edges", a.tuples, 3*p.nc)
		}
		return 3 * a.tuples, true, nil
	case inCellData:
		want := 1
		if a.name == vtuEdgeTag || a.name == vtuEdgeCurve {
			want = 3
		}
		if a.ncomp != want {
			return 0, false, vtuErr(a.field, ErrFormat, "%d components, want %d", a.ncomp, want)
		}
		return want * p.nc, true, nil
	}
	switch a.name {
	case "offsets", "types":
		return p.nc, true, nil
	case "connectivity":
		return 6 * p.nc, false, nil
	}
	return 0, false, vtuErr(a.field, ErrFormat, "unknown array of Cells (want connectivity, offsets or types)")
}

// find returns the array of section s called name, or nil.
func (p *vtuParser) find(s int, name string) *vtuInput {
	for _, a := range p.arrays {
		if a.section == s && (a.name == name || s == inPoints) {
			return a
		}
	}
	return nil
}

// build checks the cells and makes the mesh and its fields.
func (p *vtuParser) build() (*Mesh, *Data, error) {
	seen := map[string]bool{}
	for _, a := range p.arrays {
		key := sectionNames[a.section] + "." + a.name
		if seen[key] {
			return nil, nil, vtuErr(a.field, ErrFormat, "two arrays of that name")
		}
		seen[key] = true
		if (a.section == inPointData || a.section == inCellData) && !validName(a.name) {
			return nil, nil, vtuErr(sectionNames[a.section], ErrFormat, "field name %q must be non-empty and made of A-Z a-z 0-9 _ . -", a.name)
		}
	}
	pts, conn, offs, types := p.find(inPoints, ""), p.find(inCells, "connectivity"), p.find(inCells, "offsets"), p.find(inCells, "types")
	for _, c := range []struct {
		a    *vtuInput
		what string
	}{{pts, "Points"}, {conn, "Cells.connectivity"}, {offs, "Cells.offsets"}, {types, "Cells.types"}} {
		if c.a == nil {
			return nil, nil, vtuErr(c.what, ErrFormat, "missing")
		}
	}
	np, nc := p.np, p.nc
	if nc == 0 {
		return nil, nil, within("vtu", triErr(-1, ErrEmpty))
	}
	npc, typ := 3, float64(vtkTriangle)
	if types.values[0] == vtkQuadraticTriangle {
		npc, typ = 6, vtkQuadraticTriangle
	}
	for k, t := range types.values {
		if t != typ {
			return nil, nil, vtuErr(elem("Cells.types", k), ErrFormat, "cell type %v: want all cells of type 5 (triangle) or all of type 22 (quadratic triangle)", t)
		}
		if offs.values[k] != float64(npc*(k+1)) {
			return nil, nil, vtuErr(elem("Cells.offsets", k), ErrFormat, "%v, want %d (%d points per cell)", offs.values[k], npc*(k+1), npc)
		}
	}
	if len(conn.values) != npc*nc {
		return nil, nil, vtuErr("Cells.connectivity", ErrFormat, "%d values, want %d", len(conn.values), npc*nc)
	}
	// Roles of the points: 1 corner, 2 midpoint.
	role := make([]uint8, np)
	for i, v := range conn.values {
		if v < 0 || v >= float64(np) || v != math.Trunc(v) {
			return nil, nil, vtuErr(elem("Cells.connectivity", i), ErrFormat, "%v is not a point index (%d points)", v, np)
		}
		r := uint8(1)
		if i%npc >= 3 {
			r = 2
		}
		if role[int(v)] != 0 && role[int(v)] != r {
			return nil, nil, vtuErr(elem("Cells.connectivity", i), ErrFormat, "point %v is both a corner and an edge midpoint", v)
		}
		role[int(v)] = r
	}
	vid := make([]int32, np) // vertex of each corner point
	var x []float64
	for i, r := range role {
		switch r {
		case 0:
			return nil, nil, vtuErr(elem("Points", i), ErrFormat, "point belongs to no cell")
		case 1:
			if z := pts.values[3*i+2]; z != 0 {
				return nil, nil, vtuErr(elem("Points", i), ErrFormat, "z = %v: only plane meshes (z = 0) are read", z)
			}
			vid[i] = int32(len(x) / 2)
			x = append(x, pts.values[3*i], pts.values[3*i+1])
		}
	}
	tri := make([]int32, 3*nc)
	for k := range nc {
		for j := range 3 {
			tri[3*k+j] = vid[int(conn.values[npc*k+j])]
		}
	}
	a := Arrays{X: x, Tri: tri}
	if reg := p.find(inCellData, vtuRegion); reg != nil {
		a.Region = make([]int32, nc)
		for k, v := range reg.values {
			if err := integer(v); err != nil {
				return nil, nil, vtuErr(elem("CellData.region", k), ErrFormat, "%v is not an int32", v)
			}
			a.Region[k] = int32(v)
		}
	}
	if et := p.find(inCellData, vtuEdgeTag); et != nil {
		for i, v := range et.values {
			if err := integer(v); err != nil {
				return nil, nil, vtuErr(elem("CellData.edge_tag", i), ErrFormat, "%v is not an int32", v)
			}
			if v == float64(Interior) {
				continue
			}
			k, j := i/3, i%3
			a.Bnd = append(a.Bnd, tri[3*k+j], tri[3*k+(j+1)%3])
			a.BndTag = append(a.BndTag, int32(v))
		}
	}
	m, _, err := New(a)
	if err != nil {
		return nil, nil, within("vtu", err)
	}
	if m, err = p.attachCurves(m, tri); err != nil {
		return nil, nil, err
	}
	d := &Data{}
	for _, f := range p.arrays {
		if f.section != inCellData || f.name == vtuRegion || f.name == vtuEdgeTag || f.name == vtuEdgeCurve {
			continue
		}
		if d.Cell == nil {
			d.Cell = map[string][]float64{}
		}
		d.Cell[f.name] = f.values
	}
	// The midpoint point of each edge, from the first cell that names it.
	var node []int32
	var edgeOf []int32 // edgeOf[npc*k+j] is the edge of midpoint j of cell k
	if npc == 6 {
		node = make([]int32, m.NumEdges())
		edgeOf = make([]int32, 3*nc)
		for i := range node {
			node[i] = -1
		}
		for k := range nc {
			for j := range 3 {
				va, vb := tri[3*k+j], tri[3*k+(j+1)%3]
				e := int32(-1)
				for l := range 3 {
					if v := m.Tri[3*k+l]; v != va && v != vb {
						e = m.TriEdge[3*k+l]
					}
				}
				edgeOf[3*k+j] = e
				if node[e] < 0 {
					node[e] = int32(conn.values[6*k+3+j])
				}
			}
		}
	}
	for _, f := range p.arrays {
		if f.section != inPointData {
			continue
		}
		if d.Point == nil {
			d.Point = map[string][]float64{}
		}
		v := make([]float64, m.NumVertices())
		for i, r := range role {
			if r == 1 {
				v[vid[i]] = f.values[i]
			}
		}
		d.Point[f.name] = v
		if npc != 6 {
			continue
		}
		ev := make([]float64, m.NumEdges())
		linear := true
		for e, n := range node {
			ev[e] = f.values[n]
			mid := 0.5 * (v[m.Edge[2*e]] + v[m.Edge[2*e+1]])
			linear = linear && math.Float64bits(ev[e]) == math.Float64bits(mid)
		}
		for i, e := range edgeOf {
			if w := f.values[int(conn.values[6*(i/3)+3+i%3])]; math.Float64bits(w) != math.Float64bits(ev[e]) {
				return nil, nil, vtuErr(f.field, ErrFormat, "cell %d: two values, %v and %v, at the midpoint of one edge", i/3, w, ev[e])
			}
		}
		if !linear {
			if d.Edge == nil {
				d.Edge = map[string][]float64{}
			}
			d.Edge[f.name] = ev
		}
	}
	return m, d, nil
}

// attachCurves gives the mesh the circles of the FieldData array "circles"
// on the edges that the CellData array "edge_curve" names (see ReadVTU).
func (p *vtuParser) attachCurves(m *Mesh, tri []int32) (*Mesh, error) {
	ca, ec := p.find(inFieldData, vtuCircles), p.find(inCellData, vtuEdgeCurve)
	c := &curveReading{format: "vtu", emptyField: "FieldData." + vtuCircles,
		circleField: func(i int) string { return elem("FieldData."+vtuCircles, i) }}
	if ca != nil {
		for i := 0; i < len(ca.values); i += 3 {
			c.circles = append(c.circles, Circle{X: ca.values[i], Y: ca.values[i+1], R: ca.values[i+2]})
		}
	}
	if ec == nil {
		return c.attach(m)
	}
	// Each curved edge once, from the first cell that names it; the other
	// cell of an interior edge must give the same value.
	const unseen = -2
	circle := make([]int32, m.NumEdges())
	for e := range circle {
		circle[e] = unseen
	}
	var first []int // the place in edge_curve of each curved edge
	for i, v := range ec.values {
		field := elem("CellData."+vtuEdgeCurve, i)
		if err := integer(v); err != nil || v < -1 {
			return nil, vtuErr(field, ErrFormat, "%v is not a circle index or -1", v)
		}
		k, j := i/3, i%3
		a, b := tri[3*k+j], tri[3*k+(j+1)%3]
		e := m.findEdge(a, b)
		switch {
		case circle[e] == unseen:
			circle[e] = int32(v)
			if v >= 0 {
				c.curved = append(c.curved, a, b, int32(v))
				first = append(first, i)
			}
		case float64(circle[e]) != v:
			return nil, vtuErr(field, ErrFormat, "%v, but another cell gives edge %d–%d the value %d", v, a, b, circle[e])
		}
	}
	c.edgeField = func(i int) string { return elem("CellData."+vtuEdgeCurve, first[i]) }
	return c.attach(m)
}
