package mesh

import (
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"
	"math"
	"sync"
)

// PictureOptions controls the picture drawn by WritePNG. The zero value
// draws the whole mesh, 800 pixels wide, coloured by triangle diameter.
type PictureOptions struct {
	// Width is the width of the picture in pixels, from 200 to 2000; 0
	// means 800. The height follows the aspect ratio of the view and is
	// at most 2000 pixels.
	Width int
	// Cell is an optional field to colour the triangles by, one value per
	// triangle. Nil colours them by their diameter h_T on a log scale,
	// which shows the mesh density where the triangles are too small to
	// draw their edges.
	Cell []float64
	// Log colours by log10 of Cell, whose values must then be > 0.
	Log bool
	// Label is the caption of the colour bar; "" with a nil Cell means
	// "h_T".
	Label string
	// Title is an optional title above the picture.
	Title string
	// Center and HalfWidth select a zoomed view: the square of half-width
	// HalfWidth around Center. HalfWidth 0 shows the whole mesh. The
	// colour scale spans the values of all triangles in either view, so
	// the colours of a zoomed picture match those of the whole one.
	Center    [2]float64
	HalfWidth float64
	// EdgePixels is the smallest diameter, in pixels, of the triangles
	// whose edges are drawn: an edge is drawn only when the triangles on
	// both sides are at least this large, so that the colour of small
	// triangles is not hidden under their edges. 0 means 8; a negative
	// value draws no edges.
	EdgePixels float64
}

// Layout and limits of the picture, in pixels.
const (
	pngDefaultWidth      = 800
	pngMinWidth          = 200
	pngMaxSide           = 2000 // the largest width and height
	pngDefaultEdgePixels = 8
	pngMargin            = 10
	pngTick              = 5  // length of a tick mark
	pngGap               = 4  // between a tick mark and its label
	pngBarGap            = 18 // between the drawing and the colour bar
	pngBarWidth          = 14
	pngBarMinHeight      = 120
	pngInset             = 3 // free pixels between the whole mesh and the frame
)

// Palette of the picture: pngLevels colours of the scale, then the same
// levels as drawn under a triangle edge, then the fixed colours.
const (
	pngLevels = 120
	idxWhite  = 2 * pngLevels
	idxBlack  = idxWhite + 1
)

// pngPalette returns the palette: level i is Lichen((i + 0.5)/pngLevels);
// its edge colour, at index pngLevels + i, has its OKLab lightness moved
// by 0.25 towards the far end (darker on light levels, lighter on dark
// ones) and its chroma scaled by 0.6, so that edges show on every level.
var pngPalette = sync.OnceValue(func() color.Palette {
	p := make(color.Palette, idxBlack+1)
	for i := range pngLevels {
		c := Lichen((float64(i) + 0.5) / pngLevels)
		p[i] = c
		L, a, b := linearToOKLab(decode8(c.R), decode8(c.G), decode8(c.B))
		if L >= 0.55 {
			L -= 0.25
		} else {
			L += 0.25
		}
		r, g, bl := oklabToLinear(L, 0.6*a, 0.6*b)
		p[pngLevels+i] = color.NRGBA{R: encode8(r), G: encode8(g), B: encode8(bl), A: 0xff}
	}
	p[idxWhite] = color.NRGBA{R: 0xff, G: 0xff, B: 0xff, A: 0xff}
	p[idxBlack] = color.NRGBA{A: 0xff}
	return p
})

// level returns the palette index of position t ∈ [0, 1] of the scale.
func level(t float64) uint8 {
	return uint8(min(max(int(t*pngLevels), 0), pngLevels-1))
}

// WritePNG draws m as a PNG picture: the triangles filled with the colour
// of their value on the Lichen scale, the edges of the triangles large
// enough to show them (see PictureOptions.EdgePixels), the boundaries
// between regions as a black-and-white dashed line two pixels wide, and
// the boundary of the domain as a black line two pixels wide; axes with
// coordinates at the left and bottom; and at the right a colour bar with
// values and the caption opt.Label. The y axis points up and both axes
// have the same scale. opt may be nil.
//
// The picture is a raster whose size does not depend on the mesh: it is
// an 8-bit paletted PNG of at most 2000 × 2000 pixels, so the file holds
// at most about 4 MB whatever the number of triangles. Each pixel takes
// the colour of the triangle that contains its centre (the last one in
// triangle order when the centre lies on an edge), so triangles smaller
// than a pixel show their field as samples, never as a blot of edges.
// Drawing is sequential and in a fixed order, so the picture is the same
// on every run. Text is set in this package's own bitmap font.
//
// The cost is linear in the number of triangles plus the number of
// pixels. Measured with BenchmarkWritePNG (800 pixels wide, a field on a
// log scale, two cores shared with other work): 44 to 52 ms (median 48)
// and 3.8 MB allocated for 2.6e5 triangles, 0.16 s and 14 MB for 1.35e6
// triangles; a field of random values on 1e6 triangles at 2000 pixels
// gives a file of 2.9 MB (TestWritePNGSizeBound).
//
// WritePNG checks its arguments before writing anything: the mesh arrays,
// finite coordinates, the length of opt.Cell, that its values are finite
// (and positive for opt.Log), and the width and view.
func WritePNG(w io.Writer, m *Mesh, opt *PictureOptions) error {
	img, _, err := drawPicture(m, opt)
	if err != nil {
		return err
	}
	if err := png.Encode(w, img); err != nil {
		return fmt.Errorf("mesh: png: write: %w", err)
	}
	return nil
}

// SavePNG writes a picture of m to the file at path as WritePNG does,
// atomically as SaveJSON.
func SavePNG(path string, m *Mesh, opt *PictureOptions) error {
	return WriteFile(path, func(w io.Writer) error { return WritePNG(w, m, opt) })
}

// view is the rectangle of the plane that the drawing shows.
type view struct{ x0, y0, x1, y1 float64 }

// checkPicture checks m and the options (defaults filled in) and returns
// the value of each triangle and the view.
func checkPicture(m *Mesh, o *PictureOptions) ([]float64, view, error) {
	var v view
	if err := checkShape(m, "png"); err != nil {
		return nil, v, err
	}
	if o.Width < pngMinWidth || o.Width > pngMaxSide {
		return nil, v, fmt.Errorf("mesh: png: Width %d: want %d to %d: %w", o.Width, pngMinWidth, pngMaxSide, ErrArgument)
	}
	if math.IsNaN(o.EdgePixels) || math.IsInf(o.EdgePixels, 0) {
		return nil, v, fmt.Errorf("mesh: png: EdgePixels is %v: %w", o.EdgePixels, ErrNotFinite)
	}
	for i, x := range m.X {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return nil, v, fmt.Errorf("mesh: png: vertex %d: coordinate %v: %w", i/2, x, ErrNotFinite)
		}
	}
	vals := o.Cell
	if vals == nil {
		vals = make([]float64, m.NumTriangles())
		for k := range vals {
			vals[k] = m.Diameter(k)
			if !(vals[k] > 0) || math.IsInf(vals[k], 0) {
				return nil, v, fmt.Errorf("mesh: png: triangle %d: diameter %v: %w", k, vals[k], ErrZeroArea)
			}
		}
	} else {
		if len(vals) != m.NumTriangles() {
			return nil, v, fmt.Errorf("mesh: png: Cell has %d values, want %d (one per triangle): %w", len(vals), m.NumTriangles(), ErrLength)
		}
		for k, x := range vals {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				return nil, v, fmt.Errorf("mesh: png: Cell[%d] is %v: %w", k, x, ErrNotFinite)
			}
			if o.Log && x <= 0 {
				return nil, v, fmt.Errorf("mesh: png: Cell[%d] = %v is not positive, as Log needs: %w", k, x, ErrArgument)
			}
		}
	}
	c, hw := o.Center, o.HalfWidth
	switch {
	case math.IsNaN(hw) || math.IsInf(hw, 0) || math.IsNaN(c[0]) || math.IsInf(c[0], 0) || math.IsNaN(c[1]) || math.IsInf(c[1], 0):
		return nil, v, fmt.Errorf("mesh: png: view centre (%v, %v), half-width %v: %w", c[0], c[1], hw, ErrNotFinite)
	case hw < 0:
		return nil, v, fmt.Errorf("mesh: png: HalfWidth %v is negative: %w", hw, ErrArgument)
	case hw > 0:
		v = view{c[0] - hw, c[1] - hw, c[0] + hw, c[1] + hw}
	default:
		v = view{math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)}
		for i := 0; i < len(m.X); i += 2 {
			v.x0, v.x1 = min(v.x0, m.X[i]), max(v.x1, m.X[i])
			v.y0, v.y1 = min(v.y0, m.X[i+1]), max(v.y1, m.X[i+1])
		}
	}
	dx, dy := v.x1/2-v.x0/2, v.y1/2-v.y0/2 // halved so that they stay finite
	if !(dx > 0 && dy > 0) || math.IsInf(v.x0, 0) || math.IsInf(v.x1, 0) || math.IsInf(v.y0, 0) || math.IsInf(v.y1, 0) ||
		math.IsInf(1/dx, 0) || math.IsInf(1/dy, 0) {
		return nil, v, fmt.Errorf("mesh: png: the view [%g, %g] × [%g, %g] has no extent to draw: %w", v.x0, v.x1, v.y0, v.y1, ErrArgument)
	}
	return vals, v, nil
}

// drawPicture draws the picture of WritePNG and returns it with the
// rectangle of the drawing (inside the frame).
func drawPicture(m *Mesh, opt *PictureOptions) (*image.Paletted, image.Rectangle, error) {
	var o PictureOptions
	if opt != nil {
		o = *opt
	}
	if o.Width == 0 {
		o.Width = pngDefaultWidth
	}
	if o.EdgePixels == 0 {
		o.EdgePixels = pngDefaultEdgePixels
	}
	vals, v, err := checkPicture(m, &o)
	if err != nil {
		return nil, image.Rectangle{}, err
	}
	log := o.Log
	if o.Cell == nil {
		log = true
		if o.Label == "" {
			o.Label = "h_T"
		}
	}
	sc := newScale(vals, log)

	// Ticks, then the layout that makes room for their labels.
	mag := 1
	if o.Width >= 600 {
		mag = 2
	}
	nx := max(2, min(6, o.Width/150))
	xt := axisTicks(v.x0, v.x1, nx)
	yt := axisTicks(v.y0, v.y1, 5)
	bt := barTicks(sc)
	capH := glyphAsc * mag // height of capitals and digits
	wide := func(ts []tick) int {
		n := 0
		for _, t := range ts {
			n = max(n, textWidth(t.label, mag))
		}
		return n
	}
	top := pngMargin
	if o.Title != "" {
		top += glyphH*mag + 8
	}
	top += glyphH*mag + 6 // the caption of the bar
	left := pngMargin + wide(yt) + pngGap + pngTick
	right := pngMargin + max(pngBarGap+pngBarWidth+pngTick+pngGap+wide(bt), pngBarGap+textWidth(o.Label, mag))
	if len(xt) > 0 {
		right = max(right, pngMargin+textWidth(xt[len(xt)-1].label, mag)/2)
	}
	bottom := pngTick + pngGap + capH + pngMargin
	dw := o.Width - left - right
	if dw < 40 {
		return nil, image.Rectangle{}, fmt.Errorf("mesh: png: Width %d leaves no room for the drawing: %w", o.Width, ErrArgument)
	}
	// Scale: pixels per unit length, the same on both axes. The whole
	// mesh is drawn pngInset pixels inside the frame so that its boundary
	// line is not cut.
	inset := 0.0
	if o.HalfWidth == 0 {
		inset = pngInset
	}
	hx, hy := v.x1/2-v.x0/2, v.y1/2-v.y0/2
	maxH := pngMaxSide - top - bottom
	s := (float64(dw) - 2*inset) / (2 * hx)
	if 2*hy*s+2*inset > float64(maxH) {
		s = (float64(maxH) - 2*inset) / (2 * hy)
		dw = int(math.Ceil(2*hx*s + 2*inset))
	}
	dh := int(math.Ceil(2*hy*s + 2*inset))
	H := top + max(dh, pngBarMinHeight) + bottom
	draw := image.Rect(left, top, left+dw, top+dh)
	px := func(x float64) float64 { return float64(left) + inset + 2*s*(x/2-v.x0/2) }
	py := func(y float64) float64 { return float64(top) + inset + 2*s*(v.y1/2-y/2) }

	img := image.NewPaletted(image.Rect(0, 0, o.Width, H), pngPalette())
	cv := &canvas{img: img, clip: draw}
	cv.rect(0, 0, o.Width, H, idxWhite)

	// Triangles, in order.
	nv := m.NumVertices()
	vx, vy := make([]float64, nv), make([]float64, nv)
	for i := range nv {
		vx[i], vy[i] = px(m.X[2*i]), py(m.X[2*i+1])
	}
	for k := range m.NumTriangles() {
		t := m.Tri[3*k : 3*k+3]
		cv.triangle([3]float64{vx[t[0]], vx[t[1]], vx[t[2]]}, [3]float64{vy[t[0]], vy[t[1]], vy[t[2]]},
			[3]int32{t[0], t[1], t[2]}, level(sc.at(vals[k])))
	}

	// Edges of the large triangles, in edge order, in the edge colour of
	// the level under them.
	if o.EdgePixels > 0 {
		big := make([]bool, m.NumTriangles())
		for k := range big {
			big[k] = m.Diameter(k)*s >= o.EdgePixels
		}
		under := func(x, y int) uint8 {
			c := img.Pix[y*img.Stride+x]
			if c < pngLevels {
				c += pngLevels
			}
			return c
		}
		for e := range m.NumEdges() {
			k0, k1 := m.EdgeTri[2*e], m.EdgeTri[2*e+1]
			if k1 < 0 || !big[k0] || !big[k1] || m.Region[k0] != m.Region[k1] {
				continue
			}
			a, b := m.Edge[2*e], m.Edge[2*e+1]
			cv.line(vx[a], vy[a], vx[b], vy[b], 1, under)
		}
	}
	// Region boundaries, then the boundary of the domain.
	dash := func(x, y int) uint8 {
		if (x+y)>>2&1 == 0 {
			return idxBlack
		}
		return idxWhite
	}
	black := func(int, int) uint8 { return idxBlack }
	for pass := range 2 {
		for e := range m.NumEdges() {
			k0, k1 := m.EdgeTri[2*e], m.EdgeTri[2*e+1]
			a, b := m.Edge[2*e], m.Edge[2*e+1]
			switch {
			case pass == 0 && k1 >= 0 && m.Region[k0] != m.Region[k1]:
				cv.line(vx[a], vy[a], vx[b], vy[b], 2, dash)
			case pass == 1 && k1 < 0:
				cv.line(vx[a], vy[a], vx[b], vy[b], 2, black)
			}
		}
	}

	// Frame, axes and their labels.
	cv.rect(draw.Min.X-1, draw.Min.Y-1, draw.Max.X+1, draw.Min.Y, idxBlack)
	cv.rect(draw.Min.X-1, draw.Max.Y, draw.Max.X+1, draw.Max.Y+1, idxBlack)
	cv.rect(draw.Min.X-1, draw.Min.Y, draw.Min.X, draw.Max.Y, idxBlack)
	cv.rect(draw.Max.X, draw.Min.Y, draw.Max.X+1, draw.Max.Y, idxBlack)
	for _, t := range xt {
		x := floorInt(px(t.at))
		if x < draw.Min.X-1 || x > draw.Max.X {
			continue
		}
		cv.rect(x, draw.Max.Y+1, x+1, draw.Max.Y+1+pngTick, idxBlack)
		cv.text(x-textWidth(t.label, mag)/2, draw.Max.Y+1+pngTick+pngGap, t.label, mag, idxBlack)
	}
	for _, t := range yt {
		y := floorInt(py(t.at))
		if y < draw.Min.Y-1 || y > draw.Max.Y {
			continue
		}
		cv.rect(draw.Min.X-1-pngTick, y, draw.Min.X-1, y+1, idxBlack)
		cv.text(draw.Min.X-1-pngTick-pngGap-textWidth(t.label, mag), y-capH/2, t.label, mag, idxBlack)
	}

	// Colour bar: top row the largest value.
	bx, bh := draw.Max.X+pngBarGap, max(dh, pngBarMinHeight)
	for r := range bh {
		cv.rect(bx, top+r, bx+pngBarWidth, top+r+1, level(1-(float64(r)+0.5)/float64(bh)))
	}
	cv.rect(bx-1, top-1, bx+pngBarWidth+1, top, idxBlack)
	cv.rect(bx-1, top+bh, bx+pngBarWidth+1, top+bh+1, idxBlack)
	cv.rect(bx-1, top, bx, top+bh, idxBlack)
	cv.rect(bx+pngBarWidth, top, bx+pngBarWidth+1, top+bh, idxBlack)
	for _, t := range bt {
		y := top + min(int(math.Round((1-t.at)*float64(bh))), bh-1)
		cv.rect(bx+pngBarWidth+1, y, bx+pngBarWidth+1+pngTick, y+1, idxBlack)
		cv.text(bx+pngBarWidth+1+pngTick+pngGap, y-capH/2, t.label, mag, idxBlack)
	}
	cv.text(bx, top-6-capH-2*mag, o.Label, mag, idxBlack)
	if o.Title != "" {
		cv.text((o.Width-textWidth(o.Title, mag))/2, pngMargin, o.Title, mag, idxBlack)
	}
	return img, draw, nil
}
