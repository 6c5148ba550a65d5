package mesh

import (
	"bytes"
	"errors"
	"image"
	"image/png"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// gradedLShape returns an L-shape mesh of at least n triangles, graded
// towards the re-entrant corner at the origin by bisecting the triangles
// of diameter h > H·max(r, h)^0.6 (r the distance of the centroid from the
// corner) with H shrinking by 0.85 per step: invented data for pictures.
func gradedLShape(tb testing.TB, n int) *Mesh {
	tb.Helper()
	m, err := LShape(2)
	if err != nil {
		tb.Fatal(err)
	}
	H := 0.5
	for m.NumTriangles() < n {
		H *= 0.85
		marked := make([]bool, m.NumTriangles())
		for k := range marked {
			t := m.Tri[3*k : 3*k+3]
			cx := (m.X[2*t[0]] + m.X[2*t[1]] + m.X[2*t[2]]) / 3
			cy := (m.X[2*t[0]+1] + m.X[2*t[1]+1] + m.X[2*t[2]+1]) / 3
			h := m.Diameter(k)
			marked[k] = h > H*math.Pow(max(math.Hypot(cx, cy), h), 0.6)
		}
		if m, _, err = m.Refine(marked); err != nil {
			tb.Fatal(err)
		}
	}
	return m
}

// cornerField is an invented field for pictures: h_T r^(-1/3) at the
// first vertex of each triangle, a shape like that of error indicators
// near a re-entrant corner.
func cornerField(m *Mesh) []float64 {
	f := make([]float64, m.NumTriangles())
	for k := range f {
		a := m.Tri[3*k]
		f[k] = m.Diameter(k) * math.Pow(math.Hypot(m.X[2*a], m.X[2*a+1])+1e-6, -1.0/3)
	}
	return f
}

// pngPicture draws m and decodes the result.
func pngPicture(t *testing.T, m *Mesh, opt *PictureOptions) ([]byte, *image.Paletted) {
	t.Helper()
	var buf bytes.Buffer
	if err := WritePNG(&buf, m, opt); err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(buf.Bytes()))
	if err != nil {
		t.Fatalf("output is not a PNG: %v", err)
	}
	p, ok := img.(*image.Paletted)
	if !ok {
		t.Fatalf("decoded %T, want a paletted image", img)
	}
	return buf.Bytes(), p
}

// goldenPNG compares a picture with testdata/name pixel for pixel (the
// encoder's compression may change between Go versions; the pixels may
// not), or rewrites the file under -update.
func goldenPNG(t *testing.T, name string, got []byte) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -update to create it)", err)
	}
	a, err := png.Decode(bytes.NewReader(got))
	if err != nil {
		t.Fatal(err)
	}
	b, err := png.Decode(bytes.NewReader(want))
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	if a.Bounds() != b.Bounds() {
		t.Fatalf("%s: picture is %v, golden file %v", name, a.Bounds(), b.Bounds())
	}
	diff := 0
	for y := a.Bounds().Min.Y; y < a.Bounds().Max.Y; y++ {
		for x := a.Bounds().Min.X; x < a.Bounds().Max.X; x++ {
			r0, g0, b0, a0 := a.At(x, y).RGBA()
			r1, g1, b1, a1 := b.At(x, y).RGBA()
			if r0 != r1 || g0 != g1 || b0 != b1 || a0 != a1 {
				if diff == 0 {
					t.Errorf("%s: first differing pixel at (%d, %d)", name, x, y)
				}
				diff++
			}
		}
	}
	if diff > 0 {
		t.Errorf("%s: %d pixels differ from %s (run go test -update after checking the picture)", name, diff, path)
	}
}

func TestWritePNGGolden(t *testing.T) {
	l, err := LShape(1)
	if err != nil {
		t.Fatal(err)
	}
	q, err := Quadrants(4)
	if err != nil {
		t.Fatal(err)
	}
	lin := make([]float64, q.NumTriangles())
	for k := range lin {
		lin[k] = float64(k%7) - 2
	}
	g := gradedLShape(t, 3000)
	for _, c := range []struct {
		file string
		m    *Mesh
		opt  *PictureOptions
	}{
		{"lshape1.png", l, &PictureOptions{Width: 240}},
		{"quadrants_field.png", q, &PictureOptions{Width: 320, Cell: lin, Label: "value", Title: "Quadrants(4)"}},
		{"graded_zoom.png", g, &PictureOptions{Width: 300, Cell: cornerField(g), Log: true, Label: "η_T", HalfWidth: 0.1, EdgePixels: 6}},
	} {
		b, _ := pngPicture(t, c.m, c.opt)
		goldenPNG(t, c.file, b)
	}
}

// interior draws m and returns the picture with the rectangle of its
// drawing, inside the frame.
func interior(t *testing.T, m *Mesh, opt *PictureOptions) (*image.Paletted, image.Rectangle) {
	t.Helper()
	p, r, err := drawPicture(m, opt)
	if err != nil {
		t.Fatal(err)
	}
	return p, r
}

// Triangles of a few pixels or less do not turn into a blot of edges:
// no pixel is drawn in an edge colour, and every pixel centre in the
// domain gets a colour of the scale (the fill has no cracks along shared
// edges).
func TestWritePNGSmallTriangles(t *testing.T) {
	t.Parallel()
	m, err := Rectangle(0, 0, 1, 1, 150, 150) // 45,000 triangles, 2.6 pixels wide at Width 400
	if err != nil {
		t.Fatal(err)
	}
	f := make([]float64, m.NumTriangles())
	for k := range f {
		f[k] = float64(k)
	}
	p, r := interior(t, m, &PictureOptions{Width: 400, Cell: f})
	// Leave out the inset and the 2-pixel boundary line.
	in := r.Inset(pngInset + 2)
	for y := in.Min.Y; y < in.Max.Y; y++ {
		for x := in.Min.X; x < in.Max.X; x++ {
			if c := p.ColorIndexAt(x, y); c >= pngLevels {
				t.Fatalf("pixel (%d, %d) has index %d, want a level of the scale", x, y, c)
			}
		}
	}
	// With large triangles the edges are drawn.
	coarse, err := Rectangle(0, 0, 1, 1, 4, 4)
	if err != nil {
		t.Fatal(err)
	}
	_, p = pngPicture(t, coarse, &PictureOptions{Width: 400})
	edges := 0
	for _, c := range p.Pix {
		if c >= pngLevels && c < 2*pngLevels {
			edges++
		}
	}
	if edges < 400 {
		t.Errorf("%d edge pixels on a 4 × 4 mesh", edges)
	}
}

// Region boundaries are drawn as a black-and-white dash, and only where
// the regions differ.
func TestWritePNGRegions(t *testing.T) {
	t.Parallel()
	q, err := Quadrants(6)
	if err != nil {
		t.Fatal(err)
	}
	one, _, err := New(Arrays{X: q.X, Tri: q.Tri}) // the same mesh, one region
	if err != nil {
		t.Fatal(err)
	}
	count := func(m *Mesh) int {
		p, r := interior(t, m, &PictureOptions{Width: 300, EdgePixels: -1})
		r = r.Inset(pngInset + 2)
		n := 0
		for y := r.Min.Y; y < r.Max.Y; y++ {
			for x := r.Min.X; x < r.Max.X; x++ {
				if p.ColorIndexAt(x, y) == idxWhite {
					n++
				}
			}
		}
		return n
	}
	if n := count(q); n < 200 {
		t.Errorf("four regions: %d white dash pixels inside the domain", n)
	}
	if n := count(one); n != 0 {
		t.Errorf("one region: %d white pixels inside the domain", n)
	}
}

// A zoomed view shows only the values near its centre: with the field
// x on [0, 1], the square of half-width 0.1 around (0.5, 0.5) holds only
// the levels of [0.4, 0.6], up to the width of a triangle (0.01).
func TestWritePNGZoom(t *testing.T) {
	t.Parallel()
	m, err := Rectangle(0, 0, 1, 1, 100, 100)
	if err != nil {
		t.Fatal(err)
	}
	f := make([]float64, m.NumTriangles())
	for k := range f {
		tr := m.Tri[3*k : 3*k+3]
		f[k] = (m.X[2*tr[0]] + m.X[2*tr[1]] + m.X[2*tr[2]]) / 3
	}
	p, r := interior(t, m, &PictureOptions{Width: 400, Cell: f, Center: [2]float64{0.5, 0.5}, HalfWidth: 0.1})
	lo, hi := level(0.39), level(0.61)
	seenLo, seenHi := false, false
	for y := r.Min.Y; y < r.Max.Y; y++ {
		for x := r.Min.X; x < r.Max.X; x++ {
			c := p.ColorIndexAt(x, y)
			if c >= pngLevels {
				c -= pngLevels // an edge over level c
			}
			if c < lo || c > hi {
				t.Fatalf("pixel (%d, %d): level %d outside [%d, %d]", x, y, c, lo, hi)
			}
			seenLo = seenLo || c <= level(0.41)
			seenHi = seenHi || c >= level(0.59)
		}
	}
	if !seenLo || !seenHi {
		t.Errorf("the zoomed view does not reach both ends of [0.4, 0.6]: %v %v", seenLo, seenHi)
	}
}

// The picture of a million triangles stays under 5 MB at the largest
// width, also for a field of random values, which compresses worst.
func TestWritePNGSizeBound(t *testing.T) {
	if testing.Short() {
		t.Skip("builds a mesh of 1e6 triangles")
	}
	t.Parallel()
	m, err := Rectangle(0, 0, 1, 1, 708, 708) // 1,002,528 triangles
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 1))
	f := make([]float64, m.NumTriangles())
	for k := range f {
		f[k] = rng.Float64()
	}
	for _, o := range []PictureOptions{{Width: pngMaxSide, Cell: f}, {Width: pngMaxSide}} {
		var buf bytes.Buffer
		if err := WritePNG(&buf, m, &o); err != nil {
			t.Fatal(err)
		}
		if buf.Len() >= 5e6 { // the bound for pictures
			t.Errorf("picture of %d triangles: %d bytes", m.NumTriangles(), buf.Len())
		}
		t.Logf("%d triangles, field %v: %d bytes", m.NumTriangles(), o.Cell != nil, buf.Len())
	}
}

// Two calls give the same bytes, and the size does not depend on the
// number of triangles beyond the pixels.
func TestWritePNGDeterministic(t *testing.T) {
	t.Parallel()
	m := gradedLShape(t, 20000)
	o := &PictureOptions{Cell: cornerField(m), Log: true, Title: "x"}
	a, _ := pngPicture(t, m, o)
	b, _ := pngPicture(t, m, o)
	if !bytes.Equal(a, b) {
		t.Error("two pictures of the same mesh differ")
	}
}

// Axis and bar labels come from the nice steps 1, 2, 5 × 10^k.
func TestTicks(t *testing.T) {
	t.Parallel()
	labels := func(ts []tick) string {
		var s []string
		for _, t := range ts {
			s = append(s, t.label)
		}
		return strings.Join(s, " ")
	}
	for _, c := range []struct {
		lo, hi float64
		n      int
		want   string // worked by hand
	}{
		{-1, 1, 5, "-1.0 -0.5 0 0.5 1.0"},
		{0, 1, 4, "0 0.5 1.0"},
		{-0.05, 0.05, 5, "-0.04 -0.02 0 0.02 0.04"},
		{0, 3e6, 3, "0 1e6 2e6 3e6"},
		{1e-6, 5e-6, 4, "1e-6 2e-6 3e-6 4e-6 5e-6"},
		{2, 2.5, 5, "2.0 2.1 2.2 2.3 2.4 2.5"},
	} {
		if got := labels(axisTicks(c.lo, c.hi, c.n)); got != c.want {
			t.Errorf("axisTicks(%g, %g, %d) = %q, want %q", c.lo, c.hi, c.n, got, c.want)
		}
	}
	for _, c := range []struct {
		s    scale
		want string
	}{
		{scale{lo: -3, hi: 0.5, log: true}, "1e-3 1e-2 1e-1 1e0"},
		{scale{lo: -20, hi: 0, log: true}, "1e-20 1e-17 1e-14 1e-11 1e-8 1e-5 1e-2"},
		{scale{lo: 0.7, hi: 0.7}, "0.7"},
		{scale{lo: math.Log10(1.5e-5), hi: math.Log10(6.5e-4), log: true}, "2e-5 5e-5 1e-4 2e-4 5e-4"},
		{scale{lo: math.Log10(3.5), hi: math.Log10(4.5), log: true}, "3.5 4.0 4.5"},
		{scale{lo: math.Log10(3.5), hi: math.Log10(5.5), log: true}, "4 5"},
		{scale{lo: -2, hi: 21}, "0 5 10 15 20"},
	} {
		if got := labels(barTicks(c.s)); got != c.want {
			t.Errorf("barTicks(%+v) = %q, want %q", c.s, got, c.want)
		}
	}
}

func TestWritePNGRejects(t *testing.T) {
	t.Parallel()
	m, err := Rectangle(0, 0, 1, 1, 1, 1)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name string
		opt  PictureOptions
		want error
	}{
		{"length", PictureOptions{Cell: []float64{1}}, ErrLength},
		{"NaN", PictureOptions{Cell: []float64{1, math.NaN()}}, ErrNotFinite},
		{"Inf", PictureOptions{Cell: []float64{math.Inf(1), 1}}, ErrNotFinite},
		{"log of zero", PictureOptions{Cell: []float64{1, 0}, Log: true}, ErrArgument},
		{"negative width", PictureOptions{Width: -5}, ErrArgument},
		{"tiny width", PictureOptions{Width: 100}, ErrArgument},
		{"huge width", PictureOptions{Width: 2001}, ErrArgument},
		{"NaN edge pixels", PictureOptions{EdgePixels: math.NaN()}, ErrNotFinite},
		{"negative half-width", PictureOptions{HalfWidth: -1}, ErrArgument},
		{"NaN centre", PictureOptions{HalfWidth: 1, Center: [2]float64{math.NaN(), 0}}, ErrNotFinite},
		{"Inf half-width", PictureOptions{HalfWidth: math.Inf(1)}, ErrNotFinite},
		{"view overflows", PictureOptions{HalfWidth: math.MaxFloat64, Center: [2]float64{math.MaxFloat64, 0}}, ErrArgument},
		{"view too small", PictureOptions{HalfWidth: 1e-320}, ErrArgument},
	} {
		var buf bytes.Buffer
		if err := WritePNG(&buf, m, &c.opt); !errors.Is(err, c.want) || !strings.HasPrefix(err.Error(), "mesh: png: ") {
			t.Errorf("%s: error %v, want %v", c.name, err, c.want)
		}
		if buf.Len() != 0 {
			t.Errorf("%s: %d bytes written before the error", c.name, buf.Len())
		}
	}
	bad := *m
	bad.X = append([]float64(nil), m.X...)
	bad.X[3] = math.NaN()
	if err := WritePNG(new(bytes.Buffer), &bad, nil); !errors.Is(err, ErrNotFinite) {
		t.Errorf("NaN vertex: error %v", err)
	}
	if err := WritePNG(new(bytes.Buffer), nil, nil); !errors.Is(err, ErrArgument) {
		t.Errorf("nil mesh: error %v", err)
	}
	if err := WritePNG(&errWriter{10}, m, nil); !errors.Is(err, errBoom) {
		t.Errorf("failing writer: error %v", err)
	}
}

// Extreme coordinates neither overflow nor fail.
func TestWritePNGExtremes(t *testing.T) {
	t.Parallel()
	for _, r := range [][4]float64{{0, 0, 1, 1e6}, {-1e150, -1e150, 1e150, 1e150}, {0, 0, 1e-150, 1e-150}} {
		m, err := Rectangle(r[0], r[1], r[2], r[3], 2, 2)
		if err != nil {
			t.Fatal(err)
		}
		_, p := pngPicture(t, m, &PictureOptions{Width: 300, Cell: []float64{1, 2, 3, 4, 5, 6, 7, 8}})
		if p.Rect.Dx() != 300 || p.Rect.Dy() > pngMaxSide {
			t.Errorf("%v: picture %v", r, p.Rect)
		}
	}
	// Deep zooms put the far vertices at huge or infinite pixel
	// coordinates; the triangles around the centre still fill the view.
	m, err := Rectangle(0, 0, 1, 1, 2, 2)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct{ x, y, hw float64 }{{0.3, 0.1, 1e-15}, {0.3, 0.1, 1e-9}, {3e-300, 2e-300, 1e-300}} {
		p, r := interior(t, m, &PictureOptions{Width: 300, Center: [2]float64{c.x, c.y}, HalfWidth: c.hw})
		for _, q := range []image.Point{r.Min, r.Max.Sub(image.Pt(1, 1)), r.Min.Add(r.Max).Div(2)} {
			if ci := p.ColorIndexAt(q.X, q.Y); ci >= 2*pngLevels {
				t.Errorf("%+v: pixel %v has index %d, want a level or its edge colour", c, q, ci)
			}
		}
	}
}

// Every glyph of the pictures' font is a bitmap of glyphH rows of glyphW
// pixels, each '.' or '#', and the characters the examples' labels use
// (degrees, primes, brackets) have one.
func TestGlyphs(t *testing.T) {
	for r, g := range glyphs {
		rows := strings.Split(g, "|")
		if len(rows) != glyphH {
			t.Errorf("%q: %d rows, want %d", r, len(rows), glyphH)
		}
		for i, row := range rows {
			if len(row) != glyphW || strings.Trim(row, ".#") != "" {
				t.Errorf("%q: row %d is %q, want %d of '.' and '#'", r, i, row, glyphW)
			}
		}
	}
	for _, r := range "°'[]*!;<>ασ" {
		if _, ok := glyphs[r]; !ok {
			t.Errorf("no glyph for %q", r)
		}
	}
}
