package mesh

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
)

// The element readers of ReadJSON. Each returns a *FormatError whose Field
// is empty or an element suffix such as "[2]"; the caller puts the name of
// the array in front with at.

// limitV is the most vertices the file may still have.
func (r *jsonReader) limitV() int {
	if r.declV >= 0 {
		return r.declV
	}
	return MaxReadVertices
}

func (r *jsonReader) limitT() int {
	if r.declT >= 0 {
		return r.declT
	}
	return MaxReadTriangles
}

// tooMany is the error for an array that passed its limit.
func tooMany(field string, limit, declared int, what string) error {
	if declared >= 0 {
		return formatErr(field, ErrFormat, "more than the %d %s declared", declared, what)
	}
	return formatErr(field, ErrTooLarge, "more than %d %s", limit, what)
}

func initialCap(declared, per int) int { return per * min(max(declared, 0), 1<<16) }

func (r *jsonReader) vertices() error {
	r.x = make([]float64, 0, initialCap(r.declV, 2))
	var buf [2]float64
	if err := r.delim('['); err != nil {
		return err
	}
	for i := 0; r.dec.More(); i++ {
		if i >= r.limitV() {
			return tooMany("vertices", MaxReadVertices, r.declV, "vertices")
		}
		if err := r.tuple(buf[:]); err != nil {
			return at(err, elem("vertices", i))
		}
		r.x = append(r.x, buf[0], buf[1])
	}
	return r.delim(']')
}

func (r *jsonReader) triangles() error {
	r.tri = make([]int32, 0, initialCap(r.declT, 3))
	var buf [3]float64
	if err := r.delim('['); err != nil {
		return err
	}
	for k := 0; r.dec.More(); k++ {
		if k >= r.limitT() {
			return tooMany("triangles", MaxReadTriangles, r.declT, "triangles")
		}
		if err := r.tuple(buf[:]); err != nil {
			return at(err, elem("triangles", k))
		}
		for i, v := range buf {
			if err := index(v); err != nil {
				return at(err, elem(elem("triangles", k), i))
			}
			r.tri = append(r.tri, int32(v))
		}
	}
	return r.delim(']')
}

func (r *jsonReader) regions() error {
	r.region = make([]int32, 0, initialCap(r.declT, 1))
	if err := r.delim('['); err != nil {
		return err
	}
	for k := 0; r.dec.More(); k++ {
		if k >= r.limitT() {
			return tooMany("regions", MaxReadTriangles, r.declT, "triangles")
		}
		v, err := r.number()
		if err == nil {
			err = integer(v)
		}
		if err != nil {
			return at(err, elem("regions", k))
		}
		r.region = append(r.region, int32(v))
	}
	return r.delim(']')
}

// triples reads the array under key of triples of numbers, at most three
// per triangle (tooMany says so otherwise), and hands each to put.
func (r *jsonReader) triples(key, tooMany string, put func(i int, v [3]float64) error) error {
	var buf [3]float64
	if err := r.delim('['); err != nil {
		return err
	}
	for i := 0; r.dec.More(); i++ {
		if i >= 3*r.limitT() {
			return formatErr(key, ErrTooLarge, "%s", tooMany)
		}
		if err := r.tuple(buf[:]); err != nil {
			return at(err, elem(key, i))
		}
		if err := put(i, buf); err != nil {
			return err
		}
	}
	return r.delim(']')
}

func (r *jsonReader) boundary() error {
	return r.triples("boundary", "more than three boundary edges per triangle", func(b int, v [3]float64) error {
		for i, x := range v {
			err := index(x)
			if i == 2 {
				err = integer(x)
			}
			if err != nil {
				return at(err, elem(elem("boundary", b), i))
			}
		}
		r.bnd = append(r.bnd, int32(v[0]), int32(v[1]))
		r.tag = append(r.tag, int32(v[2]))
		return nil
	})
}

// circles reads the circles that curved edges follow.
func (r *jsonReader) circles() error {
	return r.triples("circles", "more circles than edges", func(_ int, v [3]float64) error {
		r.circle = append(r.circle, Circle{X: v[0], Y: v[1], R: v[2]})
		return nil
	})
}

// curvedEdges reads the edges that follow a circle.
func (r *jsonReader) curvedEdges() error {
	return r.triples("curved_edges", "more than three curved edges per triangle", func(b int, v [3]float64) error {
		for i, x := range v {
			if err := index(x); err != nil {
				return at(err, elem(elem("curved_edges", b), i))
			}
		}
		r.curved = append(r.curved, int32(v[0]), int32(v[1]), int32(v[2]))
		return nil
	})
}

// attachCurves gives the curved edges read their circles (see
// curveReading.attach).
func (r *jsonReader) attachCurves(m *Mesh) (*Mesh, error) {
	c := &curveReading{format: "json", circles: r.circle, curved: r.curved, emptyField: "circles",
		circleField: func(i int) string { return elem("circles", i) },
		edgeField:   func(i int) string { return elem("curved_edges", i) }}
	return c.attach(m)
}

// fields reads an object of named arrays of at most limit numbers each, or
// of at most declared if that is not negative.
func (r *jsonReader) fields(key string, limit, declared int, what string) (map[string][]float64, error) {
	if declared >= 0 {
		limit = declared
	}
	f := map[string][]float64{}
	if err := r.delim('{'); err != nil {
		return nil, err
	}
	for r.dec.More() {
		tok, err := r.dec.Token()
		if err != nil {
			return nil, r.decodeErr(err)
		}
		name, _ := tok.(string)
		if !validName(name) {
			return nil, formatErr(key, ErrFormat, "field name %q must be non-empty and made of A-Z a-z 0-9 _ . -", name)
		}
		field := key + "." + name
		if _, dup := f[name]; dup {
			return nil, formatErr(field, ErrFormat, "duplicate field")
		}
		if err := r.delim('['); err != nil {
			return nil, at(err, field)
		}
		v := []float64{}
		for i := 0; r.dec.More(); i++ {
			if i >= limit {
				return nil, tooMany(field, limit, declared, what)
			}
			x, err := r.number()
			if err != nil {
				return nil, at(err, elem(field, i))
			}
			v = append(v, x)
		}
		if err := r.delim(']'); err != nil {
			return nil, at(err, field)
		}
		f[name] = v
	}
	return f, r.delim('}')
}

// count reads a declared size, at most limit.
func (r *jsonReader) count(limit int, what string) (int, error) {
	v, err := r.number()
	if errors.Is(err, errHuge) {
		return 0, formatErr("", ErrTooLarge, "more than %d %s", limit, what)
	}
	if err != nil {
		return 0, err
	}
	switch {
	case v != math.Trunc(v) || v < 0:
		return 0, formatErr("", ErrFormat, "%v is not a count", v)
	case v > float64(limit):
		return 0, formatErr("", ErrTooLarge, "%.0f %s, the limit is %d", v, what, limit)
	}
	return int(v), nil
}

// index checks that v is a vertex index: an integer in [0, 2³¹).
func index(v float64) error {
	if v != math.Trunc(v) || v < 0 || v > math.MaxInt32 {
		return formatErr("", ErrFormat, "%v is not a vertex index (an integer in [0, %d])", v, math.MaxInt32)
	}
	return nil
}

// integer checks that v is an int32.
func integer(v float64) error {
	if v != math.Trunc(v) || v < math.MinInt32 || v > math.MaxInt32 {
		return formatErr("", ErrFormat, "%v is not an int32", v)
	}
	return nil
}

// tuple reads an array of exactly len(buf) numbers into buf.
func (r *jsonReader) tuple(buf []float64) error {
	if err := r.delim('['); err != nil {
		return err
	}
	n := 0
	for r.dec.More() {
		if n == len(buf) {
			return formatErr("", ErrFormat, "more than %d numbers", len(buf))
		}
		v, err := r.number()
		if err != nil {
			return at(err, elem("", n)) // completed by the caller
		}
		buf[n] = v
		n++
	}
	if n < len(buf) {
		return formatErr("", ErrFormat, "%d numbers, want %d", n, len(buf))
	}
	return r.delim(']')
}

// errHuge marks a number beyond the range of float64.
var errHuge = errors.New("number out of the range of float64")

// number reads one finite number.
func (r *jsonReader) number() (float64, error) {
	tok, err := r.dec.Token()
	if err != nil {
		return 0, r.decodeErr(err)
	}
	num, ok := tok.(json.Number)
	if !ok {
		return 0, formatErr("", ErrFormat, "want a number, got %s", describe(tok))
	}
	v, err := strconv.ParseFloat(string(num), 64)
	if math.IsInf(v, 0) {
		return 0, &FormatError{Format: "json", Err: fmt.Errorf("%w: %w: %s", ErrFormat, errHuge, num)}
	}
	if err != nil {
		return 0, formatErr("", ErrFormat, "bad number %s", num)
	}
	return v, nil
}

// delim reads the delimiter want.
func (r *jsonReader) delim(want json.Delim) error {
	tok, err := r.dec.Token()
	if err != nil {
		return r.decodeErr(err)
	}
	if tok != want {
		return formatErr("", ErrFormat, "want %s, got %s", describe(want), describe(tok))
	}
	return nil
}

// decodeErr turns an error of the decoder into a *FormatError, or, for an
// error of the underlying reader, wraps it as a read error.
func (r *jsonReader) decodeErr(err error) error {
	var se *json.SyntaxError
	switch {
	case errors.Is(err, io.EOF), errors.Is(err, io.ErrUnexpectedEOF):
		return formatErr("", ErrFormat, "unexpected end of input")
	case errors.As(err, &se):
		return formatErr("", ErrFormat, "%v (at byte %d)", se, se.Offset)
	}
	return fmt.Errorf("mesh: json: read: %w", err)
}

// describe names a JSON token for an error message.
func describe(tok json.Token) string {
	switch t := tok.(type) {
	case json.Delim:
		switch t {
		case '[':
			return "an array"
		case '{':
			return "an object"
		case ']':
			return "the end of an array"
		}
		return "the end of an object"
	case string:
		return "a string"
	case json.Number:
		return "a number"
	case bool:
		return "a boolean"
	case nil:
		return "null"
	}
	return fmt.Sprintf("%v", tok)
}
