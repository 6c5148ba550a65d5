package mesh

import (
	"bufio"
	"bytes"
	"fmt"
	"math"
	"slices"
	"strconv"
)

// Data holds named fields on a mesh: Point fields have one value per
// vertex, Cell fields one per triangle, and Edge fields one per edge.
// Any map may be nil.
//
// An Edge field completes the Point field of the same name to a
// continuous piecewise quadratic (P2) field: Edge[name][e] is its value at
// the midpoint of edge e, whose ends are m.Edge[2e] and m.Edge[2e+1], so
// that Point[name] followed by Edge[name] is the coefficient vector of a
// degree-2 fem.Function (vertex DOFs, then one DOF per edge in edge
// order). A Point field without an Edge field is piecewise linear.
//
// A field name is non-empty and made of the characters A–Z, a–z, 0–9, '_',
// '.' and '-', so that it can be written unquoted into any of the file
// formats of this package. The writers emit fields in sorted name order,
// so their output is deterministic.
type Data struct {
	Point, Cell, Edge map[string][]float64
}

// Check reports whether d fits m: every Point field has NumVertices values,
// every Cell field NumTriangles and every Edge field NumEdges, every Edge
// field has a Point field of the same name, all values are finite, and
// every name is valid. The error, which names the field, wraps ErrArgument
// for a bad name or an Edge field without its Point field, ErrLength for a
// wrong length and ErrNotFinite for a NaN or infinite value. A nil d
// passes.
func (d *Data) Check(m *Mesh) error {
	if d == nil {
		return nil
	}
	if m == nil {
		return fmt.Errorf("mesh: Data.Check: nil mesh: %w", ErrArgument)
	}
	kinds := []struct {
		kind   string
		fields map[string][]float64
		n      int
		per    string
	}{
		{"point", d.Point, m.NumVertices(), "vertex"},
		{"cell", d.Cell, m.NumTriangles(), "triangle"},
		{"edge", d.Edge, m.NumEdges(), "edge"},
	}
	for _, k := range kinds {
		for _, name := range sortedNames(k.fields) {
			v := k.fields[name]
			if !validName(name) {
				return fmt.Errorf("mesh: %s field %q: a name must be non-empty and made of A-Z a-z 0-9 _ . -: %w", k.kind, name, ErrArgument)
			}
			if _, ok := d.Point[name]; k.kind == "edge" && !ok {
				return fmt.Errorf("mesh: edge field %q: no point field of that name to complete: %w", name, ErrArgument)
			}
			if len(v) != k.n {
				return fmt.Errorf("mesh: %s field %q: %d values, want %d (one per %s): %w", k.kind, name, len(v), k.n, k.per, ErrLength)
			}
			for i, x := range v {
				if math.IsNaN(x) || math.IsInf(x, 0) {
					return fmt.Errorf("mesh: %s field %q: value %d is %v: %w", k.kind, name, i, x, ErrNotFinite)
				}
			}
		}
	}
	return nil
}

// validName reports whether s is a valid field name.
func validName(s string) bool {
	if s == "" {
		return false
	}
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case 'a' <= c && c <= 'z', 'A' <= c && c <= 'Z', '0' <= c && c <= '9':
		case c == '_', c == '.', c == '-':
		default:
			return false
		}
	}
	return true
}

// sortedNames returns the keys of f in increasing order.
func sortedNames(f map[string][]float64) []string {
	names := make([]string, 0, len(f))
	for name := range f {
		names = append(names, name)
	}
	slices.Sort(names)
	return names
}

// checkShape checks that the arrays of m have consistent lengths and that
// every index in them is in range, so that the writers cannot panic on a
// Mesh value that was put together by hand instead of by New. It does not
// repeat New's geometric checks.
func checkShape(m *Mesh, who string) error {
	if m == nil {
		return fmt.Errorf("mesh: %s: nil mesh: %w", who, ErrArgument)
	}
	nv, nt, ne := len(m.X)/2, len(m.Tri)/3, len(m.Edge)/2
	switch {
	case len(m.X)%2 != 0 || len(m.Tri)%3 != 0 || len(m.Edge)%2 != 0:
		return fmt.Errorf("mesh: %s: len(X), len(Tri) or len(Edge) is not a multiple of 2, 3, 2: %w", who, ErrLength)
	case nt == 0:
		return fmt.Errorf("mesh: %s: %w", who, ErrEmpty)
	case len(m.Region) != nt || len(m.TriEdge) != 3*nt || len(m.EdgeTri) != 2*ne || len(m.EdgeTag) != ne:
		return fmt.Errorf("mesh: %s: Region, TriEdge, EdgeTri or EdgeTag has the wrong length (build meshes with New): %w", who, ErrLength)
	}
	if m.EdgeCurve != nil && len(m.EdgeCurve) != ne {
		return fmt.Errorf("mesh: %s: len(EdgeCurve) = %d, want %d (build curved meshes with WithCurves): %w", who, len(m.EdgeCurve), ne, ErrLength)
	}
	for e, c := range m.EdgeCurve {
		switch {
		case c < -1 || int(c) >= len(m.Curves):
			return fmt.Errorf("mesh: %s: edge %d: curve %d of %d: %w", who, e, c, len(m.Curves), ErrIndex)
		case c >= 0:
			if err := checkCurve(m.Curves[c]); err != nil {
				return fmt.Errorf("mesh: %s: edge %d: %w", who, e, err)
			}
		}
	}
	for _, v := range m.Tri {
		if v < 0 || int(v) >= nv {
			return fmt.Errorf("mesh: %s: triangle vertex %d out of range: %w", who, v, ErrIndex)
		}
	}
	for _, v := range m.Edge {
		if v < 0 || int(v) >= nv {
			return fmt.Errorf("mesh: %s: edge vertex %d out of range: %w", who, v, ErrIndex)
		}
	}
	for _, e := range m.TriEdge {
		if e < 0 || int(e) >= ne {
			return fmt.Errorf("mesh: %s: TriEdge entry %d out of range: %w", who, e, ErrIndex)
		}
	}
	for i, k := range m.EdgeTri {
		if int(k) >= nt || k < -1 || (k < 0 && i%2 == 0) {
			return fmt.Errorf("mesh: %s: EdgeTri entry %d out of range: %w", who, k, ErrIndex)
		}
	}
	return nil
}

// textWriter writes text through a bufio.Writer and remembers the first
// error, after which it writes nothing more.
type textWriter struct {
	w   *bufio.Writer
	err error
	buf []byte
}

func (t *textWriter) str(s string) {
	if t.err == nil {
		_, t.err = t.w.WriteString(s)
	}
}

func (t *textWriter) bytes(b []byte) {
	if t.err == nil {
		_, t.err = t.w.Write(b)
	}
}

// float writes v in the shortest form that reads back exactly, with the
// exponent's sign kept only when negative and without leading zeros
// (1e-05 is written 1e-5, 1e+21 as 1e21): valid JSON and XML numbers that
// strconv.ParseFloat reads back to the same value.
func (t *textWriter) float(v float64) {
	t.buf = strconv.AppendFloat(t.buf[:0], v, 'g', -1, 64)
	if i := bytes.IndexByte(t.buf, 'e'); i >= 0 {
		j := i + 1
		neg := t.buf[j] == '-'
		j++ // past the sign, which AppendFloat always writes
		for j < len(t.buf)-1 && t.buf[j] == '0' {
			j++
		}
		out := t.buf[:i+1]
		if neg {
			out = append(out, '-')
		}
		t.buf = append(out, t.buf[j:]...)
	}
	t.bytes(t.buf)
}

func (t *textWriter) int(v int64) {
	t.buf = strconv.AppendInt(t.buf[:0], v, 10)
	t.bytes(t.buf)
}

// intTriple writes the JSON array [a,b,c].
func (t *textWriter) intTriple(a, b, c int64) {
	t.str("[")
	t.int(a)
	t.str(",")
	t.int(b)
	t.str(",")
	t.int(c)
	t.str("]")
}

func (t *textWriter) printf(format string, args ...any) {
	if t.err == nil {
		_, t.err = fmt.Fprintf(t.w, format, args...)
	}
}

// flush flushes the buffer and returns the first error seen.
func (t *textWriter) flush() error {
	if t.err == nil {
		t.err = t.w.Flush()
	}
	return t.err
}
