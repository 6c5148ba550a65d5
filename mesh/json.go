package mesh

import (
	"bufio"
	"cmp"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"slices"
	"strconv"
)

// Limits of ReadJSON: a file with more vertices or triangles, declared or
// actual, is rejected with ErrTooLarge before it is read further.
const (
	MaxReadVertices  = 1 << 26
	MaxReadTriangles = 1 << 27
)

// Reasons ReadJSON rejects a file. They are wrapped in a *FormatError;
// match them with errors.Is.
var (
	ErrFormat   = errors.New("malformed file")
	ErrTooLarge = errors.New("declared or actual size exceeds the reader's limit")
)

// FormatError reports malformed input: in which file format, which field
// (e.g. "triangles[17][2]", "vertex_fields.u[4]", "num_vertices" in JSON,
// "CellData.region[3]" in VTU) and why. Field is empty for a problem with
// the file as a whole. Err wraps ErrFormat or ErrTooLarge.
type FormatError struct {
	Format string // "json" or "vtu"
	Field  string
	Err    error
}

// Error returns "mesh: <format>: <field>: <reason>".
func (e *FormatError) Error() string {
	if e.Field == "" {
		return "mesh: " + e.Format + ": " + e.Err.Error()
	}
	return "mesh: " + e.Format + ": " + e.Field + ": " + e.Err.Error()
}

// Unwrap returns Err, so that errors.Is matches ErrFormat or ErrTooLarge.
func (e *FormatError) Unwrap() error { return e.Err }

// formatErr returns a JSON *FormatError for field wrapping base.
func formatErr(field string, base error, format string, args ...any) *FormatError {
	return &FormatError{Format: "json", Field: field, Err: fmt.Errorf("%w: "+format, append([]any{base}, args...)...)}
}

// at puts field in front of the field of a *FormatError that has none yet
// or only an element suffix such as "[2]", so that inner readers need not
// build field names unless something goes wrong.
func at(err error, field string) error {
	var fe *FormatError
	if errors.As(err, &fe) && (fe.Field == "" || fe.Field[0] == '[') {
		fe.Field = field + fe.Field
	}
	return err
}

func elem(name string, i int) string { return name + "[" + strconv.Itoa(i) + "]" }

// WriteJSON writes m, and the fields of d if d is not nil, as one JSON
// object in the layout described at ReadJSON, compactly: no spaces, one
// line per key. It writes the declared sizes, the regions, every
// boundary edge with its tag (as m.BoundaryEdges gives them) and the
// edges that follow circles, with the circles (see ReadJSON), and formats
// numbers in the shortest form that reads back exactly, so that ReadJSON
// returns an identical mesh and identical fields. Fields are written in
// sorted name order; Edge fields in the order of the edges' (low, high)
// vertex pairs, which is the edge numbering of New, whatever the numbering
// of m.
//
// On the uniform L-shape mesh LShape(409), about 1.0e6 triangles, with a
// smooth linear field and two Cell fields (BenchmarkWriteFiles; its
// coordinates are multiples of 1/409, so most take 17 digits), the file
// takes 96 bytes per triangle, 126 with the field quadratic (its 1.5
// midpoint values per triangle); writing took 317–334 ns per triangle
// (P1) and 431–469 (P2) in three runs on a two-core machine. On adaptive
// meshes, whose coordinates are short binary fractions, the files are
// smaller: the P2 mesh.json of `lshape -p 2 -max-dofs 2000000` (871,802
// triangles) takes 118.7 bytes per triangle, the P1 one of `lshape
// -max-dofs 1000000` (1,739,008 triangles) 88.5.
//
// d is checked with Data.Check before anything is written. Errors from w
// are returned wrapped.
func WriteJSON(w io.Writer, m *Mesh, d *Data) error {
	if err := checkShape(m, "json"); err != nil {
		return err
	}
	if err := d.Check(m); err != nil {
		return err
	}
	t := &textWriter{w: bufio.NewWriterSize(w, 1<<16)}
	nv, nt := m.NumVertices(), m.NumTriangles()
	t.printf("{\"num_vertices\":%d,\n\"num_triangles\":%d,\n\"vertices\":[", nv, nt)
	for i := 0; i < nv && t.err == nil; i++ {
		if i > 0 {
			t.str(",")
		}
		t.str("[")
		t.float(m.X[2*i])
		t.str(",")
		t.float(m.X[2*i+1])
		t.str("]")
	}
	t.str("],\n\"triangles\":[")
	for k := 0; k < nt && t.err == nil; k++ {
		if k > 0 {
			t.str(",")
		}
		t.intTriple(int64(m.Tri[3*k]), int64(m.Tri[3*k+1]), int64(m.Tri[3*k+2]))
	}
	t.str("],\n")
	if slices.ContainsFunc(m.Region, func(r int32) bool { return r != 0 }) {
		// Omitted when every triangle is in region 0, the reader's default.
		t.str("\"regions\":")
		jsonList(t, len(m.Region), func(k int) { t.int(int64(m.Region[k])) })
		t.str(",\n")
	}
	t.str("\"boundary\":[")
	ab, tag := m.BoundaryEdges()
	for b := 0; b < len(tag) && t.err == nil; b++ {
		if b > 0 {
			t.str(",")
		}
		t.intTriple(int64(ab[2*b]), int64(ab[2*b+1]), int64(tag[b]))
	}
	t.str("]")
	jsonCurves(t, m)
	if d != nil {
		jsonFields(t, keyVertexFields, d.Point, nil)
		jsonFields(t, keyTriangleFields, d.Cell, nil)
		if len(d.Edge) > 0 {
			jsonFields(t, keyEdgeFields, d.Edge, sortedEdges(m))
		}
	}
	t.str("}\n")
	if err := t.flush(); err != nil {
		return fmt.Errorf("mesh: json: write: %w", err)
	}
	return nil
}

// The keys of the fields in the JSON layout, and the names that older
// files used for the first two, which ReadJSON still accepts.
const (
	keyVertexFields   = "vertex_fields"
	keyTriangleFields = "triangle_fields"
	keyEdgeFields     = "edge_fields"
	oldVertexFields   = "point_data"
	oldTriangleFields = "cell_data"
)

// jsonCurves writes the circles that edges of m follow ("circles", in the
// order of m.Curves, other curves left out) and those edges ("curved_edges":
// the edge's ends, low first, and its circle, in the order of the edges'
// (low, high) vertex pairs); nothing when no edge follows a circle.
func jsonCurves(t *textWriter, m *Mesh) {
	circles, edgeCircle := circlesOf(m)
	if circles == nil {
		return
	}
	var edges []int32
	for _, e := range sortedEdges(m) {
		if edgeCircle[e] >= 0 {
			edges = append(edges, e)
		}
	}
	t.str(",\n\"circles\":[")
	for i, c := range circles {
		if i > 0 {
			t.str(",")
		}
		t.str("[")
		t.float(c.X)
		t.str(",")
		t.float(c.Y)
		t.str(",")
		t.float(c.R)
		t.str("]")
	}
	t.str("],\n\"curved_edges\":[")
	for i, e := range edges {
		if i > 0 {
			t.str(",")
		}
		t.intTriple(int64(m.Edge[2*e]), int64(m.Edge[2*e+1]), int64(edgeCircle[e]))
	}
	t.str("]")
}

// jsonList writes an array of n numbers.
func jsonList(t *textWriter, n int, write func(i int)) {
	t.str("[")
	for i := 0; i < n && t.err == nil; i++ {
		if i > 0 {
			t.str(",")
		}
		write(i)
	}
	t.str("]")
}

// jsonFields writes the fields f under key, each value i taken from
// index order[i] if order is not nil.
func jsonFields(t *textWriter, key string, f map[string][]float64, order []int32) {
	if len(f) == 0 {
		return
	}
	t.str(",\n\"" + key + "\":{")
	for i, name := range sortedNames(f) {
		if i > 0 {
			t.str(",\n")
		}
		t.str("\"" + name + "\":")
		v := f[name]
		if order == nil {
			jsonList(t, len(v), func(i int) { t.float(v[i]) })
		} else {
			jsonList(t, len(v), func(i int) { t.float(v[order[i]]) })
		}
	}
	t.str("}")
}

// sortedEdges returns the edges of m in increasing order of their (low,
// high) vertex pairs: by a counting sort on the low vertex, then a sort of
// each vertex's few edges. It is linear in the number of edges.
func sortedEdges(m *Mesh) []int32 {
	ne, nv := m.NumEdges(), m.NumVertices()
	order := make([]int32, ne)
	start := make([]int32, nv+1)
	for e := range ne {
		start[m.Edge[2*e]+1]++
	}
	for i := range nv {
		start[i+1] += start[i]
	}
	next := slices.Clone(start[:nv])
	for e := range ne {
		a := m.Edge[2*e]
		order[next[a]] = int32(e)
		next[a]++
	}
	for i := range nv {
		slices.SortFunc(order[start[i]:start[i+1]], func(e, f int32) int {
			return cmp.Compare(m.Edge[2*e+1], m.Edge[2*f+1])
		})
	}
	return order
}

// ReadJSON reads a mesh and its fields written as one JSON object with
// these keys, indices counted from 0:
//
//	"num_vertices":    N                        optional, the number of vertices
//	"num_triangles":   M                        optional, the number of triangles
//	"vertices":        [[x, y], ...]            N coordinate pairs
//	"triangles":       [[a, b, c], ...]         M vertex triples, counter-clockwise
//	"regions":         [r, ...]                 optional, M int32 region tags
//	"boundary":        [[a, b, tag], ...]       optional, tagged boundary edges
//	"circles":         [[x, y, r], ...]         optional, circles that edges follow
//	"curved_edges":    [[a, b, k], ...]         optional, edges that follow circle k
//	"vertex_fields":   {"name": [v, ...], ...}  optional, N values per field
//	"triangle_fields": {"name": [v, ...], ...}  optional, M values per field
//	"edge_fields":     {"name": [v, ...], ...}  optional, one value per edge
//
// An edge field completes the vertex field of the same name to a P2
// field, as Data's Edge fields do: its values are those at the edge
// midpoints, the edges taken in increasing order of their (low, high)
// vertex pairs, which is how New numbers them. Files of an earlier layout
// named the vertex and triangle fields "point_data" and "cell_data"; those
// names are read too (a file may not use both names of one kind).
//
// A curved edge (boundary or interface) follows its circle as if
// attached by WithCurves or WithInterfaceCurves: refinement puts new
// vertices on it. The circle must be usable and the projection of the
// edge's midpoint finite; its ends need not lie on the circle, since a
// refinement may have left a vertex on the chord (see Refine), which
// later refinements try to move again. WriteJSON writes the
// edges that follow a Circle; curves of other kinds (ProjectFunc) are not
// written, and are attached again with WithCurves or WithInterfaceCurves.
//
// Vertex indices are integers in [0, 2³¹); regions and tags are int32. The
// declared sizes, when present, must match the arrays; they let the reader
// refuse an oversized file at once. Boundary edges not listed get tag 0.
// Any other key is an error, as are duplicate keys and data after the
// object. Field names follow the rules of Data.
//
// ReadJSON streams its input and allocates in proportion to what it has
// read. It refuses more than MaxReadVertices vertices or MaxReadTriangles
// triangles, declared or actual, with ErrTooLarge. Malformed input gives a
// *FormatError wrapping ErrFormat or ErrTooLarge. The arrays are then
// handed to New, whose *ValidationError is returned wrapped (match it with
// errors.Is, e.g. against ErrZeroArea); clockwise triangles are reoriented
// as New does. On success the *Data is not nil; a map absent from the file
// is nil.
func ReadJSON(r io.Reader) (*Mesh, *Data, error) {
	jr := &jsonReader{dec: json.NewDecoder(r), declV: -1, declT: -1}
	jr.dec.UseNumber()
	if err := jr.read(); err != nil {
		return nil, nil, err
	}
	return jr.build()
}

// jsonReader holds the state of ReadJSON.
type jsonReader struct {
	dec          *json.Decoder
	declV, declT int // declared sizes, -1 if absent
	x            []float64
	tri          []int32
	region       []int32
	bnd, tag     []int32
	circle       []Circle
	curved       []int32 // 3 per curved edge: its ends and its circle
	point, cell  map[string][]float64
	edge         map[string][]float64
	pointKey     string // the key the vertex fields came under
	cellKey      string
	haveV, haveT bool
	haveR        bool
}

func (r *jsonReader) read() error {
	if err := r.delim('{'); err != nil {
		return err
	}
	seen := map[string]bool{}
	for r.dec.More() {
		tok, err := r.dec.Token()
		if err != nil {
			return r.decodeErr(err)
		}
		key, ok := tok.(string)
		if !ok { // the decoder only hands out strings as keys; be safe
			return formatErr("", ErrFormat, "object key is not a string")
		}
		field := key
		if !validName(key) {
			field = strconv.Quote(key)
		}
		if seen[key] {
			return formatErr(field, ErrFormat, "duplicate key")
		}
		seen[key] = true
		switch key {
		case "num_vertices":
			r.declV, err = r.count(MaxReadVertices, "vertices")
		case "num_triangles":
			r.declT, err = r.count(MaxReadTriangles, "triangles")
		case "vertices":
			r.haveV = true
			err = r.vertices()
		case "triangles":
			r.haveT = true
			err = r.triangles()
		case "regions":
			r.haveR = true
			err = r.regions()
		case "boundary":
			err = r.boundary()
		case "circles":
			err = r.circles()
		case "curved_edges":
			err = r.curvedEdges()
		case keyVertexFields, oldVertexFields:
			if r.point != nil {
				return formatErr(field, ErrFormat, "vertex fields given twice (as %s and %s)", keyVertexFields, oldVertexFields)
			}
			r.pointKey = key
			r.point, err = r.fields(key, MaxReadVertices, r.declV, "vertices")
		case keyTriangleFields, oldTriangleFields:
			if r.cell != nil {
				return formatErr(field, ErrFormat, "triangle fields given twice (as %s and %s)", keyTriangleFields, oldTriangleFields)
			}
			r.cellKey = key
			r.cell, err = r.fields(key, MaxReadTriangles, r.declT, "triangles")
		case keyEdgeFields:
			declE := -1
			if r.declT >= 0 {
				declE = 3 * r.declT
			}
			r.edge, err = r.fields(key, 3*MaxReadTriangles, declE, "edges")
		default:
			return formatErr(field, ErrFormat, "unknown key (want num_vertices, num_triangles, vertices, triangles, regions, boundary, circles, curved_edges, vertex_fields, triangle_fields or edge_fields)")
		}
		if err != nil {
			return at(err, field)
		}
	}
	if err := r.delim('}'); err != nil {
		return err
	}
	if _, err := r.dec.Token(); err != io.EOF {
		return formatErr("", ErrFormat, "data after the end of the object")
	}
	return nil
}

// build checks the sizes and makes the mesh.
func (r *jsonReader) build() (*Mesh, *Data, error) {
	if !r.haveV {
		return nil, nil, formatErr("vertices", ErrFormat, "missing")
	}
	if !r.haveT {
		return nil, nil, formatErr("triangles", ErrFormat, "missing")
	}
	nv, nt := len(r.x)/2, len(r.tri)/3
	if r.declV >= 0 && r.declV != nv {
		return nil, nil, formatErr("num_vertices", ErrFormat, "declares %d, but there are %d vertices", r.declV, nv)
	}
	if r.declT >= 0 && r.declT != nt {
		return nil, nil, formatErr("num_triangles", ErrFormat, "declares %d, but there are %d triangles", r.declT, nt)
	}
	if r.haveR && len(r.region) != nt {
		return nil, nil, formatErr("regions", ErrFormat, "has %d values, want %d (one per triangle)", len(r.region), nt)
	}
	d := &Data{Point: r.point, Cell: r.cell, Edge: r.edge}
	for _, name := range sortedNames(d.Point) {
		if n := len(d.Point[name]); n != nv {
			return nil, nil, formatErr(r.pointKey+"."+name, ErrFormat, "has %d values, want %d (one per vertex)", n, nv)
		}
	}
	for _, name := range sortedNames(d.Cell) {
		if n := len(d.Cell[name]); n != nt {
			return nil, nil, formatErr(r.cellKey+"."+name, ErrFormat, "has %d values, want %d (one per triangle)", n, nt)
		}
	}
	for _, name := range sortedNames(d.Edge) {
		if _, ok := d.Point[name]; !ok {
			return nil, nil, formatErr(keyEdgeFields+"."+name, ErrFormat, "no vertex field of that name to complete")
		}
	}
	m, _, err := New(Arrays{X: r.x, Tri: r.tri, Region: r.region, Bnd: r.bnd, BndTag: r.tag})
	if err != nil {
		return nil, nil, within("json", err)
	}
	for _, name := range sortedNames(d.Edge) {
		if n := len(d.Edge[name]); n != m.NumEdges() {
			return nil, nil, formatErr(keyEdgeFields+"."+name, ErrFormat, "has %d values, want %d (one per edge)", n, m.NumEdges())
		}
	}
	if m, err = r.attachCurves(m); err != nil {
		return nil, nil, err
	}
	return m, d, nil
}
