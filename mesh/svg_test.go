package mesh

import (
	"bytes"
	"encoding/xml"
	"errors"
	"flag"
	"io"
	"math"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite golden files")

// checkXML fails unless b is well-formed XML.
func checkXML(t *testing.T, b []byte) {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(b))
	for {
		_, err := dec.Token()
		if err == io.EOF {
			return
		}
		if err != nil {
			t.Fatalf("output is not XML: %v", err)
		}
	}
}

func TestWriteSVGGolden(t *testing.T) {
	l, err := LShape(1)
	if err != nil {
		t.Fatal(err)
	}
	r, err := Rectangle(0, 0, 2, 1, 2, 1)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		file string
		m    *Mesh
		opt  *SVGOptions
	}{
		{"lshape1.svg", l, nil},
		{"rect_field.svg", r, &SVGOptions{Cell: []float64{1, 2, 3, 4}, Log: true, Label: "eta"}},
	} {
		var buf bytes.Buffer
		if err := WriteSVG(&buf, c.m, c.opt); err != nil {
			t.Fatalf("%s: %v", c.file, err)
		}
		checkXML(t, buf.Bytes())
		golden(t, c.file, buf.Bytes())
	}
}

func TestWriteSVGOptions(t *testing.T) {
	m, err := Quadrants(2)
	if err != nil {
		t.Fatal(err)
	}
	nt := m.NumTriangles()
	lin := make([]float64, nt)
	for k := range lin {
		lin[k] = float64(k) - 10
	}
	for _, c := range []struct {
		name string
		opt  SVGOptions
		want []string // substrings of the output
	}{
		{"title and label escaped", SVGOptions{Title: `a<b & "c"`, Label: "η <x>", Cell: lin},
			[]string{"a&lt;b &amp; &#34;c&#34;", "η &lt;x&gt;", `>-10</text>`, `>21</text>`, `>5.5</text>`}},
		{"constant field", SVGOptions{Cell: make([]float64, nt)}, []string{`>0</text>`, `fill="` + colourAt(0.5) + `"`}},
		{"constant log field", SVGOptions{Cell: slicesRepeat(1e-3, nt), Log: true}, []string{`>0.001</text>`}},
		{"log ticks", SVGOptions{Cell: append(slicesRepeat(1e-3, nt-1), 1e5), Log: true}, []string{`>0.001</text>`, `>0.1</text>`, `>1e+05</text>`}},
		{"no edges", SVGOptions{EdgeWidth: -1}, []string{`stroke="none"`, `stroke-width="1.00"`}},
		{"wide edges", SVGOptions{EdgeWidth: 2, Width: 300}, []string{`stroke-width="2.00"`, `stroke-width="4.00"`, `width="300"`}},
	} {
		var buf bytes.Buffer
		if err := WriteSVG(&buf, m, &c.opt); err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		checkXML(t, buf.Bytes())
		out := buf.String()
		if n := strings.Count(out, "<polygon"); n != nt {
			t.Errorf("%s: %d polygons, want %d", c.name, n, nt)
		}
		for _, s := range c.want {
			if !strings.Contains(out, s) {
				t.Errorf("%s: output lacks %q", c.name, s)
			}
		}
		if strings.Contains(out, "NaN") || strings.Contains(out, "Inf") {
			t.Errorf("%s: output has a NaN or Inf", c.name)
		}
	}
}

func slicesRepeat(v float64, n int) []float64 {
	s := make([]float64, n)
	for i := range s {
		s[i] = v
	}
	return s
}

// A tall, thin mesh keeps its height bounded, and extreme coordinates do
// not overflow.
func TestWriteSVGExtremes(t *testing.T) {
	for _, r := range [][4]float64{{0, 0, 1, 1e6}, {-1e150, -1e150, 1e150, 1e150}, {0, 0, 1e-150, 1e-150}} {
		m, err := Rectangle(r[0], r[1], r[2], r[3], 2, 2)
		if err != nil {
			t.Fatal(err)
		}
		var buf bytes.Buffer
		if err := WriteSVG(&buf, m, &SVGOptions{Cell: []float64{1, 2, 3, 4, 5, 6, 7, 8}}); err != nil {
			t.Fatalf("%v: %v", r, err)
		}
		checkXML(t, buf.Bytes())
		if s := buf.String(); strings.Contains(s, "NaN") || strings.Contains(s, "Inf") || len(s) > 1e4 {
			t.Errorf("%v: bad output:\n%s", r, s)
		}
	}
}

func TestWriteSVGRejects(t *testing.T) {
	m, err := Rectangle(0, 0, 1, 1, 1, 1)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name string
		opt  SVGOptions
		want error
	}{
		{"length", SVGOptions{Cell: []float64{1}}, ErrLength},
		{"NaN", SVGOptions{Cell: []float64{1, math.NaN()}}, ErrNotFinite},
		{"Inf", SVGOptions{Cell: []float64{math.Inf(1), 1}}, ErrNotFinite},
		{"log of zero", SVGOptions{Cell: []float64{1, 0}, Log: true}, ErrArgument},
		{"log of negative", SVGOptions{Cell: []float64{-1, 1}, Log: true}, ErrArgument},
		{"negative width", SVGOptions{Width: -5}, ErrArgument},
		{"tiny width", SVGOptions{Width: 50, Cell: []float64{1, 2}}, ErrArgument},
		{"NaN edge width", SVGOptions{EdgeWidth: math.NaN()}, ErrNotFinite},
	} {
		var buf bytes.Buffer
		if err := WriteSVG(&buf, m, &c.opt); !errors.Is(err, c.want) || !strings.HasPrefix(err.Error(), "mesh: svg: ") {
			t.Errorf("%s: error %v, want %v", c.name, err, c.want)
		}
		if buf.Len() != 0 {
			t.Errorf("%s: %d bytes written before the error", c.name, buf.Len())
		}
	}
	if err := WriteSVG(new(bytes.Buffer), nil, nil); !errors.Is(err, ErrArgument) {
		t.Errorf("nil mesh: error %v", err)
	}
	if err := WriteSVG(&errWriter{10}, m, nil); !errors.Is(err, errBoom) {
		t.Errorf("failing writer: error %v", err)
	}
}
