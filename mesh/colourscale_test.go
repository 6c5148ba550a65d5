package mesh

import (
	"math"
	"testing"
)

// The OKLab conversion against values outside this package.
func TestOKLab(t *testing.T) {
	t.Parallel()
	const tol = 1e-3 // the sources give three or four digits
	for _, c := range []struct {
		name    string
		rgb     [3]float64 // linear sRGB
		L, a, b float64
	}{
		// White maps to L = 1, a = b = 0 and black to 0: Ottosson 2020
		// states both as design conditions of OKLab.
		{"white", [3]float64{1, 1, 1}, 1, 0, 0},
		{"black", [3]float64{0, 0, 0}, 0, 0, 0},
		// sRGB red is oklab(62.8% 0.225 0.126): from memory, as the
		// examples of the W3C's CSS Color Module Level 4 write it.
		{"red", [3]float64{1, 0, 0}, 0.628, 0.225, 0.126},
	} {
		L, a, b := linearToOKLab(c.rgb[0], c.rgb[1], c.rgb[2])
		if math.Abs(L-c.L) > tol || math.Abs(a-c.a) > tol || math.Abs(b-c.b) > tol {
			t.Errorf("%s: OKLab (%.4f, %.4f, %.4f), want (%.3f, %.3f, %.3f)", c.name, L, a, b, c.L, c.a, c.b)
		}
	}
	// The published matrices and their inverses are rounded to ten
	// digits, so they invert each other only to about 1e-8 per entry, and
	// the cube roots between them amplify that: a round trip returns the
	// colour to 2e-7 at most on these colours (measured), hence 1e-6.
	const roundTrip = 1e-6
	for _, rgb := range [][3]float64{{0.2, 0.5, 0.9}, {1, 0, 0}, {0, 1, 0}, {0, 0, 1}, {0.01, 0.02, 0.03}} {
		L, a, b := linearToOKLab(rgb[0], rgb[1], rgb[2])
		r, g, bl := oklabToLinear(L, a, b)
		if math.Abs(r-rgb[0]) > roundTrip || math.Abs(g-rgb[1]) > roundTrip || math.Abs(bl-rgb[2]) > roundTrip {
			t.Errorf("round trip of %v gives (%g, %g, %g)", rgb, r, g, bl)
		}
	}
	// The sRGB transfer function (IEC 61966-2-1): 8-bit 128 is linear
	// 0.2158605 (from the standard's formula, evaluated by hand).
	if got := decode8(128); math.Abs(got-0.2158605) > 1e-6 {
		t.Errorf("decode8(128) = %.7f, want 0.2158605", got)
	}
	for v := range 256 {
		if got := encode8(decode8(uint8(v))); got != uint8(v) {
			t.Errorf("encode8(decode8(%d)) = %d", v, got)
		}
	}
}

// luminance returns the relative luminance Y of an 8-bit sRGB colour:
// Y = 0.2126 R + 0.7152 G + 0.0722 B of the linear components (IEC
// 61966-2-1, ITU-R BT.709 primaries), the grey that a conversion keeps.
func luminance(r, g, b uint8) float64 {
	return 0.2126*decode8(r) + 0.7152*decode8(g) + 0.0722*decode8(b)
}

// Lichen follows its rule and reads in grey: its luminance rises strictly
// along the scale, at 256 samples and on the 120 levels of WritePNG.
func TestLichen(t *testing.T) {
	t.Parallel()
	prev := -1.0
	for i := range 256 {
		f := float64(i) / 255
		c := Lichen(f)
		y := luminance(c.R, c.G, c.B)
		if !(y > prev) {
			t.Errorf("luminance at t = %.4f is %.5f, not above %.5f", f, y, prev)
		}
		prev = y
		// The rule: OKLab lightness 0.28 + 0.67 t, up to the rounding
		// to 8 bits (half a unit moves L by less than 0.004).
		L, a, b := linearToOKLab(decode8(c.R), decode8(c.G), decode8(c.B))
		if want := 0.28 + 0.67*f; math.Abs(L-want) > 0.004 {
			t.Errorf("t = %.4f: lightness %.4f, want %.4f", f, L, want)
		}
		// The hue path 20° + 180° t, where the chroma is large enough to
		// give a hue (the 8-bit rounding moves a, b by up to about 0.003).
		if C := math.Hypot(a, b); C > 0.04 {
			h := math.Atan2(b, a) * 180 / math.Pi
			if h < 0 {
				h += 360
			}
			if want := 20 + 180*f; math.Abs(h-want) > 5 {
				t.Errorf("t = %.4f: hue %.1f°, want %.1f°", f, h, want)
			}
		}
	}
	p := pngPalette()
	prev = -1
	for i := range pngLevels {
		r, g, b, _ := p[i].RGBA()
		y := luminance(uint8(r>>8), uint8(g>>8), uint8(b>>8))
		if !(y > prev) {
			t.Errorf("palette level %d: luminance %.5f not above %.5f", i, y, prev)
		}
		prev = y
	}
	if Lichen(-1) != Lichen(0) || Lichen(2) != Lichen(1) || Lichen(math.NaN()) != Lichen(0) {
		t.Error("Lichen does not clamp")
	}
}

// The colours of the SVG pictures are the scale's.
func TestColourAt(t *testing.T) {
	t.Parallel()
	for _, f := range []float64{0, 0.3, 1} {
		c := Lichen(f)
		if got, want := colourAt(f), hexColour(float64(c.R), float64(c.G), float64(c.B)); got != want {
			t.Errorf("colourAt(%g) = %s, want %s", f, got, want)
		}
	}
}
