package mesh

import (
	"bytes"
	"errors"
	"io"
	"math"
	"slices"
	"strings"
	"testing"
)

// testMeshes returns one mesh from each generator.
func testMeshes(t testing.TB) map[string]*Mesh {
	t.Helper()
	out := map[string]*Mesh{}
	add := func(name string, m *Mesh, err error) {
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		out[name] = m
	}
	m, err := Rectangle(-0.1, 1.0/3, 2.7, 1e3, 3, 2)
	add("Rectangle", m, err)
	m, err = LShape(2)
	add("LShape", m, err)
	m, err = Slit(2)
	add("Slit", m, err)
	m, err = Quadrants(2)
	add("Quadrants", m, err)
	return out
}

// testData returns point and cell fields on m with awkward values.
func testData(m *Mesh) *Data {
	u := make([]float64, m.NumVertices())
	w := make([]float64, m.NumVertices())
	for i := range u {
		x, y := m.Vertex(i)
		u[i] = math.Sin(x) * math.Exp(y*1e-3) / 3
		w[i] = float64(i) * 1e-300
	}
	w[0] = math.Copysign(0, -1)
	eta := make([]float64, m.NumTriangles())
	for k := range eta {
		eta[k] = math.Sqrt(m.Area(k)) * 1e17
	}
	return &Data{
		Point: map[string][]float64{"u": u, "w_2.x-y": w},
		Cell:  map[string][]float64{"eta": eta},
	}
}

func sameFields(a, b map[string][]float64) bool {
	if len(a) != len(b) {
		return false
	}
	for name, v := range a {
		if w, ok := b[name]; !ok || !slices.Equal(v, w) {
			return false
		}
	}
	return true
}

func sameMesh(a, b *Mesh) bool {
	return slices.Equal(a.X, b.X) && slices.Equal(a.Tri, b.Tri) && slices.Equal(a.Region, b.Region) &&
		slices.Equal(a.Edge, b.Edge) && slices.Equal(a.EdgeTag, b.EdgeTag)
}

func TestJSONRoundTrip(t *testing.T) {
	for name, m := range testMeshes(t) {
		for _, d := range []*Data{nil, testData(m)} {
			var buf bytes.Buffer
			if err := WriteJSON(&buf, m, d); err != nil {
				t.Fatalf("%s: WriteJSON: %v", name, err)
			}
			m2, d2, err := ReadJSON(&buf)
			if err != nil {
				t.Fatalf("%s: ReadJSON: %v", name, err)
			}
			if !sameMesh(m, m2) {
				t.Errorf("%s: mesh differs after the round trip", name)
			}
			if d == nil {
				if d2 == nil || d2.Point != nil || d2.Cell != nil {
					t.Errorf("%s: want empty Data, got %+v", name, d2)
				}
				continue
			}
			if !sameFields(d.Point, d2.Point) || !sameFields(d.Cell, d2.Cell) {
				t.Errorf("%s: fields differ after the round trip", name)
			}
			if w := d2.Point["w_2.x-y"]; !math.Signbit(w[0]) {
				t.Errorf("%s: -0 lost its sign", name)
			}
		}
	}
}

// Numbers with exponents are written without the exponent's leading zeros
// and plus sign, and read back bit for bit: the extremes of float64
// (IEEE 754: the smallest subnormal, the largest finite value) and values
// on both sides of the exponent boundaries of the 'g' format.
func TestJSONExponents(t *testing.T) {
	m, err := Rectangle(0, 0, 1, 1, 1, 1)
	if err != nil {
		t.Fatal(err)
	}
	vals := []float64{1e-5, -2.5e-10, 1e21, 1.2345678901234567e-300, math.SmallestNonzeroFloat64, math.MaxFloat64,
		-math.MaxFloat64, 1e-4, 123456789012345680000}
	for i := 0; i+4 <= len(vals)+3; i += 4 {
		v := make([]float64, 4)
		for j := range v {
			v[j] = vals[(i+j)%len(vals)]
		}
		var buf bytes.Buffer
		if err := WriteJSON(&buf, m, &Data{Point: map[string][]float64{"v": v}}); err != nil {
			t.Fatal(err)
		}
		if s := buf.String(); strings.Contains(s, "e-0") || strings.Contains(s, "e+") {
			t.Errorf("exponent not shortened: %s", s)
		}
		_, d, err := ReadJSON(&buf)
		if err != nil {
			t.Fatal(err)
		}
		for j, x := range d.Point["v"] {
			if math.Float64bits(x) != math.Float64bits(v[j]) {
				t.Errorf("value %d: read %v, wrote %v", j, x, v[j])
			}
		}
	}
}

// P2 fields come back bit for bit, also on a refined mesh whose edges are
// not numbered as New numbers them, and the file has no indentation.
func TestJSONRoundTripP2(t *testing.T) {
	t.Parallel()
	for name, m := range roundTripMeshes(t) {
		d := p2Data(m)
		var buf bytes.Buffer
		if err := WriteJSON(&buf, m, d); err != nil {
			t.Fatalf("%s: WriteJSON: %v", name, err)
		}
		if bytes.Contains(buf.Bytes(), []byte(" ")) || bytes.Contains(buf.Bytes(), []byte("\n\n")) {
			t.Errorf("%s: the file holds spaces or empty lines", name)
		}
		m2, d2, err := ReadJSON(&buf)
		if err != nil {
			t.Fatalf("%s: ReadJSON: %v", name, err)
		}
		if !slices.Equal(m.X, m2.X) || !slices.Equal(m.Tri, m2.Tri) || !slices.Equal(m.Region, m2.Region) {
			t.Fatalf("%s: mesh differs", name)
		}
		if !sameData(m, m2, d, d2) {
			t.Fatalf("%s: fields differ", name)
		}
	}
}

// The keys of the earlier layout are read, and the edge order of the
// layout is that of the (low, high) vertex pairs: a hand-written file
// whose edge values are their own pair's code.
func TestReadJSONKeys(t *testing.T) {
	t.Parallel()
	old := `{"vertices":[[0,0],[1,0],[0,1]],"triangles":[[0,1,2]],"point_data":{"u":[1,2,3]},"cell_data":{"e":[4]}}`
	_, d, err := ReadJSON(strings.NewReader(old))
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(d.Point["u"], []float64{1, 2, 3}) || !slices.Equal(d.Cell["e"], []float64{4}) || d.Edge != nil {
		t.Errorf("old keys: %+v", d)
	}
	// Edges in (low, high) order: 0-1, 0-2, 1-2 (the layout of ReadJSON's doc).
	in := `{"vertices":[[0,0],[1,0],[0,1]],"triangles":[[2,0,1]],"vertex_fields":{"u":[0,0,0]},"edge_fields":{"u":[1,2,12]}}`
	m, d, err := ReadJSON(strings.NewReader(in))
	if err != nil {
		t.Fatal(err)
	}
	for e := range m.NumEdges() {
		a, b := m.Edge[2*e], m.Edge[2*e+1]
		if want := float64(10*a + b); d.Edge["u"][e] != want {
			t.Errorf("edge %d-%d: value %v, want %v", a, b, d.Edge["u"][e], want)
		}
	}
	for _, c := range []struct{ name, in, field string }{
		{"both vertex keys", `{"vertices":[[0,0],[1,0],[0,1]],"triangles":[[0,1,2]],"point_data":{"u":[1,2,3]},"vertex_fields":{"v":[1,2,3]}}`, "vertex_fields"},
		{"edge field alone", `{"vertices":[[0,0],[1,0],[0,1]],"triangles":[[0,1,2]],"edge_fields":{"u":[1,2,3]}}`, "edge_fields.u"},
		{"edge field length", `{"vertices":[[0,0],[1,0],[0,1]],"triangles":[[0,1,2]],"vertex_fields":{"u":[1,2,3]},"edge_fields":{"u":[1,2]}}`, "edge_fields.u"},
		{"edge field value", `{"vertices":[[0,0],[1,0],[0,1]],"triangles":[[0,1,2]],"vertex_fields":{"u":[1,2,3]},"edge_fields":{"u":[1,"2",3]}}`, "edge_fields.u[1]"},
	} {
		_, _, err := ReadJSON(strings.NewReader(c.in))
		var fe *FormatError
		if !errors.As(err, &fe) || !errors.Is(err, ErrFormat) || fe.Field != c.field {
			t.Errorf("%s: error %v, want a *FormatError at %s", c.name, err, c.field)
		}
	}
}

// A mesh whose regions, tags and untagged boundary survive the trip, and
// whose input was clockwise.
func TestJSONReadOrientationAndTags(t *testing.T) {
	in := `{"vertices": [[0,0],[1,0],[0,1]], "triangles": [[0,2,1]], "regions": [-7],
	        "boundary": [[1,2,9]]}`
	m, d, err := ReadJSON(strings.NewReader(in))
	if err != nil {
		t.Fatal(err)
	}
	if d == nil || d.Point != nil || d.Cell != nil {
		t.Errorf("Data = %+v, want empty", d)
	}
	if !slices.Equal(m.Tri, []int32{0, 1, 2}) || m.Region[0] != -7 {
		t.Errorf("Tri = %v, Region = %v", m.Tri, m.Region)
	}
	if e := m.findEdge(1, 2); m.EdgeTag[e] != 9 {
		t.Errorf("tag of edge 1-2 = %d, want 9", m.EdgeTag[e])
	}
	if e := m.findEdge(0, 1); m.EdgeTag[e] != 0 {
		t.Errorf("tag of edge 0-1 = %d, want 0", m.EdgeTag[e])
	}
}

const (
	okV = `"vertices": [[0,0],[1,0],[0,1]]`
	okT = `"triangles": [[0,1,2]]`
)

func TestReadJSONRejects(t *testing.T) {
	for _, c := range []struct {
		name, in string
		want     error
		field    string // "-" when the error is not a *FormatError
	}{
		{"empty input", ``, ErrFormat, ""},
		{"truncated", `{` + okV + `, "triangles": [[0,1,`, ErrFormat, "triangles[0][2]"},
		{"truncated array", `{"vertices": [[0,0],[1,0]`, ErrFormat, "vertices"},
		{"truncated key", `{"vert`, ErrFormat, ""},
		{"not an object", `[1, 2]`, ErrFormat, ""},
		{"vertices object", `{"vertices": {"a": 1}, ` + okT + `}`, ErrFormat, "vertices"},
		{"vertices string", `{"vertices": "abc", ` + okT + `}`, ErrFormat, "vertices"},
		{"vertices null", `{"vertices": null, ` + okT + `}`, ErrFormat, "vertices"},
		{"vertex of 3", `{"vertices": [[0,0],[1,2,3],[0,1]], ` + okT + `}`, ErrFormat, "vertices[1]"},
		{"vertex of 1", `{"vertices": [[0,0],[1]], ` + okT + `}`, ErrFormat, "vertices[1]"},
		{"vertex string", `{"vertices": [[0,"0"]], ` + okT + `}`, ErrFormat, "vertices[0][1]"},
		{"vertex nested", `{"vertices": [[0,[0]]], ` + okT + `}`, ErrFormat, "vertices[0][1]"},
		{"vertex huge", `{"vertices": [[1e400,0]], ` + okT + `}`, ErrFormat, "vertices[0][0]"},
		{"index 1.5", `{` + okV + `, "triangles": [[0,1.5,2]]}`, ErrFormat, "triangles[0][1]"},
		{"index 1e12", `{` + okV + `, "triangles": [[0,1,1e12]]}`, ErrFormat, "triangles[0][2]"},
		{"index -1", `{` + okV + `, "triangles": [[0,1,2],[-1,1,2]]}`, ErrFormat, "triangles[1][0]"},
		{"triangle of 2", `{` + okV + `, "triangles": [[0,1]]}`, ErrFormat, "triangles[0]"},
		{"index out of range", `{` + okV + `, "triangles": [[0,1,5]]}`, ErrIndex, "-"},
		{"zero area", `{"vertices": [[0,0],[1,0],[2,0]], ` + okT + `}`, ErrZeroArea, "-"},
		{"num_vertices huge", `{"num_vertices": 1000000000000, ` + okV + `, ` + okT + `}`, ErrTooLarge, "num_vertices"},
		{"num_triangles huge", `{"num_triangles": 1e300, ` + okV + `, ` + okT + `}`, ErrTooLarge, "num_triangles"},
		{"num_vertices 1e400", `{"num_vertices": 1e400}`, ErrTooLarge, "num_vertices"},
		{"num_vertices negative", `{"num_vertices": -1, ` + okV + `, ` + okT + `}`, ErrFormat, "num_vertices"},
		{"num_vertices fraction", `{"num_vertices": 2.5, ` + okV + `, ` + okT + `}`, ErrFormat, "num_vertices"},
		{"num_vertices string", `{"num_vertices": "3", ` + okV + `, ` + okT + `}`, ErrFormat, "num_vertices"},
		{"num_vertices mismatch", `{"num_vertices": 4, ` + okV + `, ` + okT + `}`, ErrFormat, "num_vertices"},
		{"num_triangles mismatch", `{"num_triangles": 2, ` + okV + `, ` + okT + `}`, ErrFormat, "num_triangles"},
		{"more vertices than declared", `{"num_vertices": 2, ` + okV + `, ` + okT + `}`, ErrFormat, "vertices"},
		{"point_data length", `{` + okV + `, ` + okT + `, "point_data": {"u": [1, 2]}}`, ErrFormat, "point_data.u"},
		{"cell_data length", `{` + okV + `, ` + okT + `, "cell_data": {"eta": [1, 2]}}`, ErrFormat, "cell_data.eta"},
		{"point_data value", `{` + okV + `, ` + okT + `, "point_data": {"u": [1, true, 3]}}`, ErrFormat, "point_data.u[1]"},
		{"point_data over declared", `{"num_vertices": 3, "point_data": {"u": [1, 2, 3, 4]}}`, ErrFormat, "point_data.u"},
		{"point_data name", `{` + okV + `, ` + okT + `, "point_data": {"a b": [1, 2, 3]}}`, ErrFormat, "point_data"},
		{"point_data duplicate", `{` + okV + `, ` + okT + `, "point_data": {"u": [1, 2, 3], "u": [1, 2, 3]}}`, ErrFormat, "point_data.u"},
		{"point_data array", `{` + okV + `, ` + okT + `, "point_data": [1, 2, 3]}`, ErrFormat, "point_data"},
		{"regions fraction", `{` + okV + `, ` + okT + `, "regions": [0.5]}`, ErrFormat, "regions[0]"},
		{"regions too big", `{` + okV + `, ` + okT + `, "regions": [3000000000]}`, ErrFormat, "regions[0]"},
		{"regions length", `{` + okV + `, ` + okT + `, "regions": [1, 2]}`, ErrFormat, "regions"},
		{"boundary pair", `{` + okV + `, ` + okT + `, "boundary": [[0, 1]]}`, ErrFormat, "boundary[0]"},
		{"boundary index", `{` + okV + `, ` + okT + `, "boundary": [[0, 1, 1], [-2, 1, 1]]}`, ErrFormat, "boundary[1][0]"},
		{"boundary negative tag", `{` + okV + `, ` + okT + `, "boundary": [[0, 1, -1]]}`, ErrNegativeTag, "-"},
		{"boundary not an edge", `{"vertices": [[0,0],[1,0],[0,1],[1,1]], "triangles": [[0,1,2],[1,3,2]], "boundary": [[0, 3, 1]]}`, ErrNotAnEdge, "-"},
		{"unknown key", `{` + okV + `, ` + okT + `, "vertexes": []}`, ErrFormat, "vertexes"},
		{"duplicate key", `{` + okV + `, ` + okV + `, ` + okT + `}`, ErrFormat, "vertices"},
		{"trailing object", `{` + okV + `, ` + okT + `} {}`, ErrFormat, ""},
		{"trailing garbage", `{` + okV + `, ` + okT + `}x`, ErrFormat, ""},
		{"missing comma", `{` + okV + ` ` + okT + `}`, ErrFormat, ""},
		{"empty object", `{}`, ErrFormat, "vertices"},
		{"missing triangles", `{` + okV + `}`, ErrFormat, "triangles"},
		{"empty mesh", `{"vertices": [], "triangles": []}`, ErrEmpty, "-"},
	} {
		m, d, err := ReadJSON(strings.NewReader(c.in))
		if err == nil {
			t.Errorf("%s: no error", c.name)
			continue
		}
		if m != nil || d != nil {
			t.Errorf("%s: non-nil results with an error", c.name)
		}
		if !errors.Is(err, c.want) {
			t.Errorf("%s: error %q does not wrap %q", c.name, err, c.want)
		}
		if !strings.HasPrefix(err.Error(), "mesh: json: ") {
			t.Errorf("%s: error %q lacks the prefix", c.name, err)
		}
		var fe *FormatError
		isFE := errors.As(err, &fe)
		switch {
		case c.field == "-" && isFE:
			t.Errorf("%s: unexpected *FormatError %q", c.name, err)
		case c.field == "-":
			var ve *ValidationError
			if !errors.As(err, &ve) {
				t.Errorf("%s: %q is not a *ValidationError", c.name, err)
			}
		case !isFE:
			t.Errorf("%s: %q is not a *FormatError", c.name, err)
		case fe.Field != c.field:
			t.Errorf("%s: Field = %q, want %q (%v)", c.name, fe.Field, c.field, err)
		}
	}
}

func TestFormatErrorMessage(t *testing.T) {
	_, _, err := ReadJSON(strings.NewReader(`{` + okV + `, "triangles": [[0,1,2],[0,1.5,2]]}`))
	want := "mesh: json: triangles[1][1]: malformed file: 1.5 is not a vertex index"
	if err == nil || !strings.HasPrefix(err.Error(), want) {
		t.Errorf("error %q, want prefix %q", err, want)
	}
}

// errWriter accepts n bytes, then fails.
type errWriter struct{ n int }

var errBoom = errors.New("boom")

func (w *errWriter) Write(p []byte) (int, error) {
	if len(p) <= w.n {
		w.n -= len(p)
		return len(p), nil
	}
	k := w.n
	w.n = 0
	return k, errBoom
}

func TestWriteJSONWriterFails(t *testing.T) {
	m, err := Quadrants(16)
	if err != nil {
		t.Fatal(err)
	}
	d := testData(m)
	var buf bytes.Buffer
	if err := WriteJSON(&buf, m, d); err != nil {
		t.Fatal(err)
	}
	for _, n := range []int{0, 1, 4095, 4096, 10000, buf.Len() / 2, buf.Len() - 1} {
		err := WriteJSON(&errWriter{n}, m, d)
		if !errors.Is(err, errBoom) || !strings.HasPrefix(err.Error(), "mesh: json: write: ") {
			t.Errorf("failing after %d of %d bytes: error %v", n, buf.Len(), err)
		}
	}
}

func TestWriteJSONBadData(t *testing.T) {
	m, err := Rectangle(0, 0, 1, 1, 1, 1)
	if err != nil {
		t.Fatal(err)
	}
	checkRejects(t, m, WriteJSON, []badData{
		{"NaN", &Data{Point: map[string][]float64{"u": {0, 1, math.NaN(), 3}}}, ErrNotFinite},
		{"Inf", &Data{Cell: map[string][]float64{"eta": {math.Inf(-1), 1}}}, ErrNotFinite},
		{"edge NaN", &Data{Point: map[string][]float64{"u": {0, 1, 2, 3}}, Edge: map[string][]float64{"u": {0, 1, math.NaN(), 3, 4}}}, ErrNotFinite},
		{"edge length", &Data{Point: map[string][]float64{"u": {0, 1, 2, 3}}, Edge: map[string][]float64{"u": {0, 1, 2, 3}}}, ErrLength},
		{"edge without point field", &Data{Edge: map[string][]float64{"u": {0, 1, 2, 3, 4}}}, ErrArgument},
		{"length", &Data{Cell: map[string][]float64{"eta": {1, 2, 3}}}, ErrLength},
		{"name", &Data{Point: map[string][]float64{"a\"b": {0, 1, 2, 3}}}, ErrArgument},
		{"empty name", &Data{Cell: map[string][]float64{"": {1, 2}}}, ErrArgument},
	})
	if err := WriteJSON(new(bytes.Buffer), nil, nil); !errors.Is(err, ErrArgument) {
		t.Errorf("nil mesh: error %v", err)
	}
	bad := *m
	bad.Region = nil
	if err := WriteJSON(new(bytes.Buffer), &bad, nil); !errors.Is(err, ErrLength) {
		t.Errorf("hand-made mesh: error %v", err)
	}
}

func FuzzReadJSON(f *testing.F) {
	m, err := Rectangle(0, 0, 1, 1, 1, 1)
	if err != nil {
		f.Fatal(err)
	}
	var buf bytes.Buffer
	if err := WriteJSON(&buf, m, testData(m)); err != nil {
		f.Fatal(err)
	}
	f.Add(buf.Bytes())
	f.Add([]byte(`{` + okV + `, ` + okT + `, "regions": [3], "boundary": [[1, 2, 7]], "cell_data": {"e": [1]}}`))
	f.Add([]byte(`{"num_vertices": 4, "vertices": [[0,0],[1,0],[0,1],[1,1]], "triangles": [[0,1,2],[1,3,2]]}`))
	f.Add([]byte(`{"vertices":[[0,0],[1,0],[1,1],[0,1]],"triangles":[[0,1,2],[0,2,3]],"circles":[[0,1,1]],"curved_edges":[[0,2,0]]}`))
	f.Add([]byte(`{"vertices": [[0,0],[1,0],[1,1],[0,1],[0.5,0.5]], "triangles": [[0,1,4],[1,2,4],[2,3,4],[3,0,4]], "boundary": [[0,1,1],[2,3,2]]}`))
	f.Add([]byte(`{"vertices": [[0,0]], "triangles": [[0,0,0]]}`))
	f.Add([]byte(`{"vertices":[[0,0],[1,0],[0,1]],"triangles":[[2,0,1]],"vertex_fields":{"u":[0,0,0]},"edge_fields":{"u":[1,2,12]}}`))
	buf.Reset()
	if err := WriteJSON(&buf, m, p2Data(m)); err != nil {
		f.Fatal(err)
	}
	f.Add(buf.Bytes())
	f.Add([]byte(`{}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		m, d, err := ReadJSON(bytes.NewReader(data))
		if err != nil {
			var ve *ValidationError
			if !errors.Is(err, ErrFormat) && !errors.Is(err, ErrTooLarge) && !errors.As(err, &ve) {
				t.Fatalf("unexpected kind of error: %v", err)
			}
			if !strings.HasPrefix(err.Error(), "mesh: json: ") {
				t.Fatalf("error %q lacks the prefix", err)
			}
			return
		}
		ab, tag := m.BoundaryEdges()
		if _, _, err := New(Arrays{X: m.X, Tri: m.Tri, Region: m.Region, Bnd: ab, BndTag: tag}); err != nil {
			t.Fatalf("read mesh is invalid: %v", err)
		}
		if err := d.Check(m); err != nil {
			t.Fatalf("read data is invalid: %v", err)
		}
		var out bytes.Buffer
		if err := WriteJSON(&out, m, d); err != nil {
			t.Fatalf("WriteJSON of a read mesh: %v", err)
		}
		m2, d2, err := ReadJSON(&out)
		if err != nil {
			t.Fatalf("reading back: %v", err)
		}
		if !sameMesh(m, m2) || !sameData(m, m2, d, d2) {
			t.Fatal("round trip changed the mesh or the fields")
		}
		if !slices.Equal(m.EdgeCurve, m2.EdgeCurve) || !slices.Equal(m.Curves, m2.Curves) {
			t.Fatal("round trip changed the curves")
		}
	})
}

// errReader returns its data, then fails.
type errReader struct{ data string }

func (r *errReader) Read(p []byte) (int, error) {
	if r.data == "" {
		return 0, errBoom
	}
	n := copy(p, r.data)
	r.data = r.data[n:]
	return n, nil
}

func TestReadJSONReaderFails(t *testing.T) {
	_, _, err := ReadJSON(&errReader{`{` + okV + `, "triangles": [[0,`})
	var fe *FormatError
	if !errors.Is(err, errBoom) || errors.As(err, &fe) || !strings.HasPrefix(err.Error(), "mesh: json: read: ") {
		t.Errorf("error %v, want a read error wrapping %v", err, errBoom)
	}
}

// badData is a case of data a writer must reject.
type badData struct {
	name string
	d    *Data
	want error
}

// checkRejects checks that write rejects each case with its error, which
// names the package, and writes nothing before the error.
func checkRejects(t *testing.T, m *Mesh, write func(io.Writer, *Mesh, *Data) error, cases []badData) {
	t.Helper()
	for _, c := range cases {
		var buf bytes.Buffer
		if err := write(&buf, m, c.d); !errors.Is(err, c.want) || !strings.HasPrefix(err.Error(), "mesh: ") {
			t.Errorf("%s: error %v, want %v", c.name, err, c.want)
		}
		if buf.Len() != 0 {
			t.Errorf("%s: %d bytes written before the error", c.name, buf.Len())
		}
	}
}
