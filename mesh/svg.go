package mesh

import (
	"bufio"
	"bytes"
	"encoding/xml"
	"fmt"
	"io"
	"math"
)

// SVGOptions controls the picture drawn by WriteSVG. The zero value draws
// white triangles with thin edges, 640 pixels wide.
type SVGOptions struct {
	// Width is the picture width in pixels; 0 means 640. The height follows
	// the mesh's aspect ratio, up to four times the width of the drawing.
	Width int
	// Cell is an optional cell field to colour the triangles by, one value
	// per triangle; nil draws white triangles.
	Cell []float64
	// Log colours by log10 of Cell, whose values must then be > 0.
	Log bool
	// Label is the caption of the colour bar.
	Label string
	// Title is an optional title above the picture.
	Title string
	// EdgeWidth is the stroke width of triangle edges in pixels; 0 means
	// 0.5, and a negative width draws no triangle edges (the boundary is
	// then outlined 1 pixel wide).
	EdgeWidth float64
}

// Layout of the picture, in pixels.
const (
	svgDefaultWidth = 640
	svgMargin       = 10
	svgTitleBand    = 28  // height of the title row
	svgLabelBand    = 20  // height of the colour bar caption row
	svgBarSpace     = 100 // width kept right of the drawing for the colour bar
	svgBarGap       = 20  // gap between the drawing and the bar
	svgBarWidth     = 16
	svgBarMinHeight = 120
	svgMaxAspect    = 4 // the drawing is at most this many times as high as wide
)

// WriteSVG draws m as an SVG picture: every triangle as a polygon, with the
// y axis pointing up, and the boundary edges twice as thick as the others.
// With opt.Cell the triangles are coloured by the field on the Lichen
// scale (dark rust red for the smallest value through olive to pale mint
// for the largest; a constant field is drawn in the middle colour), and a
// vertical colour bar with five tick labels and the caption opt.Label is
// drawn at the right. opt may be nil.
//
// The file holds one polygon per triangle, so its size grows with the
// mesh (77 bytes per triangle on a graded mesh of 2.6e5 triangles): WriteSVG suits meshes of up to some
// thousands of triangles, WritePNG pictures of any size.
//
// Coordinates are written with two decimals, so that the output is compact
// and deterministic. WriteSVG checks its arguments before writing anything:
// the length of opt.Cell, that its values are finite, and positive for
// opt.Log.
func WriteSVG(w io.Writer, m *Mesh, opt *SVGOptions) error {
	if err := checkShape(m, "svg"); err != nil {
		return err
	}
	var o SVGOptions
	if opt != nil {
		o = *opt
	}
	if o.Width == 0 {
		o.Width = svgDefaultWidth
	}
	if o.EdgeWidth == 0 {
		o.EdgeWidth = 0.5
	}
	if err := checkSVGOptions(m, &o); err != nil {
		return err
	}

	// Layout.
	xmin, ymin, xmax, ymax := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
	for i := range m.NumVertices() {
		x, y := m.Vertex(i)
		xmin, xmax = min(xmin, x), max(xmax, x)
		ymin, ymax = min(ymin, y), max(ymax, y)
	}
	bar := o.Cell != nil
	W := float64(o.Width)
	pw := W - 2*svgMargin
	if bar {
		pw -= svgBarSpace
	}
	if pw < 20 {
		return fmt.Errorf("mesh: svg: Width %d leaves no room for the drawing: %w", o.Width, ErrArgument)
	}
	dx, dy := xmax/2-xmin/2, ymax/2-ymin/2 // halved so that they stay finite
	if !(dx > 0 && dy > 0) || math.IsInf(pw/dx, 0) {
		return fmt.Errorf("mesh: svg: the mesh has no extent to draw: %w", ErrArgument)
	}
	s := min(pw/dx, svgMaxAspect*pw/dy) / 2
	top := float64(svgMargin)
	if o.Title != "" {
		top += svgTitleBand
	}
	if bar && o.Label != "" {
		top += svgLabelBand
	}
	ph := 2 * s * dy
	H := top + ph + svgMargin
	if bar {
		H = max(H, top+svgBarMinHeight+svgMargin)
	}
	px := func(x float64) float64 { return svgMargin + 2*s*(x/2-xmin/2) }
	py := func(y float64) float64 { return top + 2*s*(ymax/2-y/2) }

	t := &textWriter{w: bufio.NewWriter(w)}
	t.printf("<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"%d\" height=\"%.0f\" viewBox=\"0 0 %d %.0f\">\n", o.Width, math.Ceil(H), o.Width, math.Ceil(H))
	t.str("<rect width=\"100%\" height=\"100%\" fill=\"#fff\"/>\n")
	if o.Title != "" {
		t.printf("<text x=\"%.2f\" y=\"%d\" text-anchor=\"middle\" font-family=\"sans-serif\" font-size=\"14\">%s</text>\n", W/2, svgMargin+18, escape(o.Title))
	}

	// Triangles.
	stroke := "stroke=\"none\""
	if o.EdgeWidth > 0 {
		stroke = fmt.Sprintf("stroke=\"#303030\" stroke-width=\"%.2f\" stroke-linejoin=\"round\"", o.EdgeWidth)
	}
	var sc scale
	if bar {
		sc = newScale(o.Cell, o.Log)
		t.printf("<g %s>\n", stroke)
	} else {
		t.printf("<g fill=\"#fff\" %s>\n", stroke)
	}
	for k := 0; k < m.NumTriangles() && t.err == nil; k++ {
		t.str("<polygon points=\"")
		for i, v := range m.Tri[3*k : 3*k+3] {
			if i > 0 {
				t.str(" ")
			}
			x, y := m.Vertex(int(v))
			t.printf("%.2f,%.2f", px(x), py(y))
		}
		if bar {
			t.str("\" fill=\"" + colourAt(sc.at(o.Cell[k])) + "\"/>\n")
		} else {
			t.str("\"/>\n")
		}
	}
	t.str("</g>\n")

	// Boundary.
	bw := 1.0
	if o.EdgeWidth > 0 {
		bw = 2 * o.EdgeWidth
	}
	t.printf("<path fill=\"none\" stroke=\"#000\" stroke-width=\"%.2f\" stroke-linecap=\"round\" d=\"", bw)
	ab, _ := m.BoundaryEdges()
	for b := 0; b+1 < len(ab) && t.err == nil; b += 2 {
		if b > 0 {
			t.str(" ")
		}
		ax, ay := m.Vertex(int(ab[b]))
		bx, by := m.Vertex(int(ab[b+1]))
		t.printf("M%.2f %.2fL%.2f %.2f", px(ax), py(ay), px(bx), py(by))
	}
	t.str("\"/>\n")

	if bar {
		colourBar(t, sc, W-svgMargin-svgBarSpace+svgBarGap, top, max(ph, svgBarMinHeight), o.Label)
	}
	t.str("</svg>\n")
	if err := t.flush(); err != nil {
		return fmt.Errorf("mesh: svg: write: %w", err)
	}
	return nil
}

// checkSVGOptions checks the options, with the defaults filled in.
func checkSVGOptions(m *Mesh, o *SVGOptions) error {
	if o.Width < 0 {
		return fmt.Errorf("mesh: svg: Width %d is negative: %w", o.Width, ErrArgument)
	}
	if math.IsNaN(o.EdgeWidth) || math.IsInf(o.EdgeWidth, 0) {
		return fmt.Errorf("mesh: svg: EdgeWidth is %v: %w", o.EdgeWidth, ErrNotFinite)
	}
	if o.Cell == nil {
		return nil
	}
	if len(o.Cell) != m.NumTriangles() {
		return fmt.Errorf("mesh: svg: Cell has %d values, want %d (one per triangle): %w", len(o.Cell), m.NumTriangles(), ErrLength)
	}
	for k, v := range o.Cell {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("mesh: svg: Cell[%d] is %v: %w", k, v, ErrNotFinite)
		}
		if o.Log && v <= 0 {
			return fmt.Errorf("mesh: svg: Cell[%d] = %v is not positive, as Log needs: %w", k, v, ErrArgument)
		}
	}
	return nil
}

// colourBar draws the colour bar with its top left corner at (x, y), its
// ticks and its caption.
func colourBar(t *textWriter, sc scale, x, y, h float64, label string) {
	t.str("<defs><linearGradient id=\"mesh-colour-ramp\" x1=\"0\" y1=\"1\" x2=\"0\" y2=\"0\">")
	for i := range svgStops {
		f := float64(i) / (svgStops - 1)
		t.printf("<stop offset=\"%g\" stop-color=\"%s\"/>", f, colourAt(f))
	}
	t.str("</linearGradient></defs>\n")
	t.printf("<rect x=\"%.2f\" y=\"%.2f\" width=\"%d\" height=\"%.2f\" fill=\"url(#mesh-colour-ramp)\" stroke=\"#000\" stroke-width=\"0.5\"/>\n", x, y, svgBarWidth, h)
	t.str("<g font-family=\"sans-serif\" font-size=\"11\">\n")
	if label != "" {
		t.printf("<text x=\"%.2f\" y=\"%.2f\">%s</text>\n", x, y-8, escape(label))
	}
	ticks := []float64{0, 0.25, 0.5, 0.75, 1}
	if !(sc.hi > sc.lo) {
		ticks = []float64{0.5}
	}
	xr := x + svgBarWidth
	for _, f := range ticks {
		ty := y + h*(1-f)
		v := sc.tick(f)
		var s string
		if sc.log {
			s = fmt.Sprintf("%.2g", v)
		} else {
			s = fmt.Sprintf("%.3g", v)
		}
		t.printf("<line x1=\"%.2f\" y1=\"%.2f\" x2=\"%.2f\" y2=\"%.2f\" stroke=\"#000\" stroke-width=\"0.5\"/>", xr, ty, xr+4, ty)
		t.printf("<text x=\"%.2f\" y=\"%.2f\" dy=\"0.35em\">%s</text>\n", xr+7, ty, escape(s))
	}
	t.str("</g>\n")
}

// escape returns s with the XML special characters escaped.
func escape(s string) string {
	var b bytes.Buffer
	_ = xml.EscapeText(&b, []byte(s)) // writing to a bytes.Buffer cannot fail
	return b.String()
}

// svgStops is the number of stops of the colour bar's gradient, at
// equal steps of the scale; between stops an SVG gradient interpolates
// the sRGB components linearly.
const svgStops = 17

// colourAt returns the colour of the Lichen scale at t as "#rrggbb".
// t is clamped to [0, 1]; NaN gives the colour at 0.
func colourAt(t float64) string {
	c := Lichen(t)
	return hexColour(float64(c.R), float64(c.G), float64(c.B))
}

// hexColour formats an sRGB colour with components in [0, 255].
func hexColour(r, g, b float64) string {
	const digits = "0123456789abcdef"
	s := []byte{'#', 0, 0, 0, 0, 0, 0}
	for i, c := range [3]float64{r, g, b} {
		v := int(math.Round(min(max(c, 0), 255)))
		s[1+2*i], s[2+2*i] = digits[v>>4], digits[v&15]
	}
	return string(s)
}

// scale maps field values to [0, 1] for the colour ramp: linearly between
// the smallest and the largest value, of log10 of the values if log is
// set. A constant field maps to 0.5.
type scale struct {
	lo, hi float64 // range of the (log10 of the) values
	log    bool
}

func newScale(v []float64, log bool) scale {
	s := scale{lo: math.Inf(1), hi: math.Inf(-1), log: log}
	for _, x := range v {
		x = s.transform(x)
		s.lo, s.hi = min(s.lo, x), max(s.hi, x)
	}
	return s
}

func (s scale) transform(x float64) float64 {
	if s.log {
		return math.Log10(x)
	}
	return x
}

// at returns the position of value x on the ramp.
func (s scale) at(x float64) float64 {
	if !(s.hi > s.lo) {
		return 0.5
	}
	// Halving first keeps hi - lo finite for any finite lo and hi.
	return (s.transform(x)/2 - s.lo/2) / (s.hi/2 - s.lo/2)
}

// tick returns the value at position f of the ramp, back in the units of
// the field.
func (s scale) tick(f float64) float64 {
	t := s.lo*(1-f) + s.hi*f
	if s.log {
		return math.Pow(10, t)
	}
	return t
}
