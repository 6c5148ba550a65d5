package mesh

import (
	"bufio"
	"encoding/json"
	"errors"
	"fmt"
	"io"
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

// FormatError reports malformed input: which field (e.g. "triangles[17][2]",
// "point_data.u[4]", "num_vertices") and why. Field is empty for a problem
// with the file as a whole. Err wraps ErrFormat or ErrTooLarge.
type FormatError struct {
	Field string
	Err   error
}

// Error returns "mesh: json: <field>: <reason>".
func (e *FormatError) Error() string {
	if e.Field == "" {
		return "mesh: json: " + e.Err.Error()
	}
	return "mesh: json: " + e.Field + ": " + e.Err.Error()
}

// Unwrap returns Err, so that errors.Is matches ErrFormat or ErrTooLarge.
func (e *FormatError) Unwrap() error { return e.Err }

// formatErr returns a *FormatError for field wrapping base.
func formatErr(field string, base error, format string, args ...any) *FormatError {
	return &FormatError{Field: field, Err: fmt.Errorf("%w: "+format, append([]any{base}, args...)...)}
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
// object in the layout described at ReadJSON. It writes the declared sizes,
// the regions and every boundary edge with its tag (as m.BoundaryEdges
// gives them), and formats numbers in the shortest form that reads back
// exactly, so that ReadJSON returns an identical mesh and identical fields.
// Fields are written in sorted name order.
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
	t := &textWriter{w: bufio.NewWriter(w)}
	nv, nt := m.NumVertices(), m.NumTriangles()
	t.printf("{\n  \"num_vertices\": %d,\n  \"num_triangles\": %d,\n", nv, nt)
	t.str("  \"vertices\": [")
	for i := 0; i < nv && t.err == nil; i++ {
		t.str(sep(i))
		t.float(m.X[2*i])
		t.str(", ")
		t.float(m.X[2*i+1])
		t.str("]")
	}
	t.str("\n  ],\n  \"triangles\": [")
	for k := 0; k < nt && t.err == nil; k++ {
		t.str(sep(k))
		for i, v := range m.Tri[3*k : 3*k+3] {
			if i > 0 {
				t.str(", ")
			}
			t.int(int64(v))
		}
		t.str("]")
	}
	t.str("\n  ],\n  \"regions\": ")
	jsonList(t, len(m.Region), 10, "    ", func(k int) { t.int(int64(m.Region[k])) })
	t.str(",\n  \"boundary\": [")
	ab, tag := m.BoundaryEdges()
	for b := 0; b < len(tag) && t.err == nil; b++ {
		t.str(sep(b))
		t.int(int64(ab[2*b]))
		t.str(", ")
		t.int(int64(ab[2*b+1]))
		t.str(", ")
		t.int(int64(tag[b]))
		t.str("]")
	}
	if len(tag) > 0 {
		t.str("\n  ")
	}
	t.str("]")
	if d != nil {
		jsonFields(t, "point_data", d.Point)
		jsonFields(t, "cell_data", d.Cell)
	}
	t.str("\n}\n")
	if err := t.flush(); err != nil {
		return fmt.Errorf("mesh: json: write: %w", err)
	}
	return nil
}

// sep starts element i of an array of tuples, one per line.
func sep(i int) string {
	if i == 0 {
		return "\n    ["
	}
	return ",\n    ["
}

// jsonList writes an array of n numbers, perLine to a line, with the
// lines indented by indent and the closing bracket by two spaces less. A
// short array stays on one line.
func jsonList(t *textWriter, n, perLine int, indent string, write func(i int)) {
	t.str("[")
	for i := 0; i < n && t.err == nil; i++ {
		switch {
		case n <= perLine && i > 0:
			t.str(", ")
		case n <= perLine:
		case i == 0:
			t.str("\n" + indent)
		case i%perLine == 0:
			t.str(",\n" + indent)
		default:
			t.str(", ")
		}
		write(i)
	}
	if n > perLine {
		t.str("\n" + indent[2:])
	}
	t.str("]")
}

func jsonFields(t *textWriter, key string, f map[string][]float64) {
	if len(f) == 0 {
		return
	}
	t.str(",\n  \"" + key + "\": {")
	for i, name := range sortedNames(f) {
		if i > 0 {
			t.str(",")
		}
		t.str("\n    \"" + name + "\": ")
		v := f[name]
		jsonList(t, len(v), 5, "      ", func(i int) { t.float(v[i]) })
	}
	t.str("\n  }")
}

// ReadJSON reads a mesh and its fields written as one JSON object with
// these keys, indices counted from 0:
//
//	"num_vertices":  N                        optional, the number of vertices
//	"num_triangles": M                        optional, the number of triangles
//	"vertices":      [[x, y], ...]            N coordinate pairs
//	"triangles":     [[a, b, c], ...]         M vertex triples, counter-clockwise
//	"regions":       [r, ...]                 optional, M int32 region tags
//	"boundary":      [[a, b, tag], ...]       optional, tagged boundary edges
//	"point_data":    {"name": [v, ...], ...}  optional, N values per field
//	"cell_data":     {"name": [v, ...], ...}  optional, M values per field
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
	point, cell  map[string][]float64
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
		case "point_data":
			r.point, err = r.fields(key, MaxReadVertices, r.declV, "vertices")
		case "cell_data":
			r.cell, err = r.fields(key, MaxReadTriangles, r.declT, "triangles")
		default:
			return formatErr(field, ErrFormat, "unknown key (want num_vertices, num_triangles, vertices, triangles, regions, boundary, point_data or cell_data)")
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
	d := &Data{Point: r.point, Cell: r.cell}
	for _, name := range sortedNames(d.Point) {
		if n := len(d.Point[name]); n != nv {
			return nil, nil, formatErr("point_data."+name, ErrFormat, "has %d values, want %d (one per vertex)", n, nv)
		}
	}
	for _, name := range sortedNames(d.Cell) {
		if n := len(d.Cell[name]); n != nt {
			return nil, nil, formatErr("cell_data."+name, ErrFormat, "has %d values, want %d (one per triangle)", n, nt)
		}
	}
	m, _, err := New(Arrays{X: r.x, Tri: r.tri, Region: r.region, Bnd: r.bnd, BndTag: r.tag})
	if err != nil {
		return nil, nil, within("json", err)
	}
	return m, d, nil
}
