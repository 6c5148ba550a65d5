package mesh

import (
	"image"
	"math"
)

// canvas is the paletted image that WritePNG draws into (its Rect starts
// at the origin), with the
// rectangle clip that triangles and mesh lines are confined to. Every
// drawing operation sets whole pixels to a palette index, in the order of
// the calls, so that the result is the same on every run and machine.
type canvas struct {
	img  *image.Paletted
	clip image.Rectangle
}

// set sets pixel (x, y) to index c if it lies in r.
func (cv *canvas) set(x, y int, c uint8, r image.Rectangle) {
	if x >= r.Min.X && x < r.Max.X && y >= r.Min.Y && y < r.Max.Y {
		cv.img.Pix[y*cv.img.Stride+x] = c
	}
}

// rect fills the pixels [x0, x1) × [y0, y1) with index c.
func (cv *canvas) rect(x0, y0, x1, y1 int, c uint8) {
	r := image.Rect(x0, y0, x1, y1).Intersect(cv.img.Rect)
	for y := r.Min.Y; y < r.Max.Y; y++ {
		row := cv.img.Pix[y*cv.img.Stride:]
		for x := r.Min.X; x < r.Max.X; x++ {
			row[x] = c
		}
	}
}

// triangle sets, within the clip, the pixels whose centres lie in the
// triangle with corners (x[i], y[i]) in pixel coordinates to index c; a
// centre on an edge counts as inside. fill returns without drawing if the
// triangle is degenerate in floating point.
//
// Each edge function is evaluated with the edge's end points in the
// order given by key (the vertex numbers), so that the two triangles that
// share an edge compute bit-identical values of opposite sign, and no
// pixel centre on a shared edge is left out by rounding: every centre in
// the union of the triangles is set. Where two triangles both contain a
// centre (on their common edge), the later call wins.
func (cv *canvas) triangle(x, y [3]float64, key [3]int32, c uint8) {
	xmin, xmax := min(x[0], x[1], x[2]), max(x[0], x[1], x[2])
	ymin, ymax := min(y[0], y[1], y[2]), max(y[0], y[1], y[2])
	// Pixel i has its centre at i + 0.5.
	i0, i1 := ceilInt(xmin-0.5), floorInt(xmax-0.5)
	j0, j1 := ceilInt(ymin-0.5), floorInt(ymax-0.5)
	i0, j0 = max(i0, cv.clip.Min.X), max(j0, cv.clip.Min.Y)
	i1, j1 = min(i1, cv.clip.Max.X-1), min(j1, cv.clip.Max.Y-1)
	if i0 > i1 || j0 > j1 {
		return
	}
	// Edge i runs between corners a = (i+1)%3 and b = (i+2)%3, oriented
	// from the lower to the higher key; sign[i] makes the opposite corner
	// positive.
	var ax, ay, dx, dy, sign [3]float64
	for i := range 3 {
		a, b := (i+1)%3, (i+2)%3
		if key[a] > key[b] {
			a, b = b, a
		}
		ax[i], ay[i], dx[i], dy[i] = x[a], y[a], x[b]-x[a], y[b]-y[a]
		s := dx[i]*(y[i]-ay[i]) - dy[i]*(x[i]-ax[i])
		switch {
		case s > 0:
			sign[i] = 1
		case s < 0:
			sign[i] = -1
		default:
			return
		}
	}
	for j := j0; j <= j1; j++ {
		py := float64(j) + 0.5
		row := cv.img.Pix[j*cv.img.Stride:]
		for i := i0; i <= i1; i++ {
			px := float64(i) + 0.5
			if sign[0]*(dx[0]*(py-ay[0])-dy[0]*(px-ax[0])) >= 0 &&
				sign[1]*(dx[1]*(py-ay[1])-dy[1]*(px-ax[1])) >= 0 &&
				sign[2]*(dx[2]*(py-ay[2])-dy[2]*(px-ax[2])) >= 0 {
				row[i] = c
			}
		}
	}
}

// line draws the segment from (x0, y0) to (x1, y1), in pixel coordinates,
// w pixels wide, clipped to the clip rectangle: at unit steps along the
// segment's longer axis it sets a w × w block of pixels to index
// pattern(x, y) (a function, so that a dash pattern tied to the pixel grid
// runs on across the segments of a polyline).
func (cv *canvas) line(x0, y0, x1, y1 float64, w int, pattern func(x, y int) uint8) {
	// Clip to the clip rectangle widened by the line width (Liang–Barsky).
	pad := float64(w)
	lo := [2]float64{float64(cv.clip.Min.X) - pad, float64(cv.clip.Min.Y) - pad}
	hi := [2]float64{float64(cv.clip.Max.X) + pad, float64(cv.clip.Max.Y) + pad}
	d := [2]float64{x1 - x0, y1 - y0}
	p := [2]float64{x0, y0}
	t0, t1 := 0.0, 1.0
	for k := range 2 {
		if d[k] == 0 {
			if p[k] < lo[k] || p[k] > hi[k] {
				return
			}
			continue
		}
		ta, tb := (lo[k]-p[k])/d[k], (hi[k]-p[k])/d[k]
		if ta > tb {
			ta, tb = tb, ta
		}
		t0, t1 = max(t0, ta), min(t1, tb)
	}
	if !(t0 <= t1) {
		return
	}
	xa, ya := x0+t0*d[0], y0+t0*d[1]
	xb, yb := x0+t1*d[0], y0+t1*d[1]
	n := int(math.Ceil(max(math.Abs(xb-xa), math.Abs(yb-ya))))
	off := float64(w-1) / 2
	for s := 0; s <= n; s++ {
		f := 0.0
		if n > 0 {
			f = float64(s) / float64(n)
		}
		px, py := floorInt(xa+f*(xb-xa)-off), floorInt(ya+f*(yb-ya)-off)
		for v := py; v < py+w; v++ {
			for u := px; u < px+w; u++ {
				cv.set(u, v, pattern(u, v), cv.clip)
			}
		}
	}
}

// text draws s with the top of its capitals at row y and its left edge at
// column x, at magnification mag, in index c, anywhere on the image.
func (cv *canvas) text(x, y int, s string, mag int, c uint8) {
	for _, r := range s {
		for j, row := range glyph(r) {
			for i := range glyphW {
				if row[i] == '#' {
					cv.rect(x+i*mag, y+j*mag, x+(i+1)*mag, y+(j+1)*mag, c)
				}
			}
		}
		x += glyphAdv * mag
	}
}

// floorInt returns ⌊v⌋ as an int, clamped to ±2^30 so that far-away
// points of a zoomed view cannot overflow.
func floorInt(v float64) int {
	return int(max(min(math.Floor(v), 1<<30), -(1 << 30)))
}

// ceilInt returns ⌈v⌉ as an int, clamped as floorInt.
func ceilInt(v float64) int {
	return int(max(min(math.Ceil(v), 1<<30), -(1 << 30)))
}
