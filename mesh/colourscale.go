package mesh

import (
	"image/color"
	"math"
)

// Lichen returns the colour at t of Lichen, this package's colour scale
// for fields: from a dark rust red (t = 0) through brown and olive to a
// pale mint (t = 1). t is clamped to [0, 1]; NaN gives the colour at 0.
//
// The scale is built from a rule in the OKLab colour space, whose
// lightness L is close to perceived lightness: L rises linearly, the hue
// angle h turns at a constant rate, and the chroma C follows a half sine,
// cut back where the colour would leave the sRGB gamut:
//
//	L(t) = 0.28 + 0.67 t
//	h(t) = 20° + 180° t                   (angle of (a, b) in OKLab)
//	C(t) = min(0.13 sin(π (0.15 + 0.7 t)), C_max(L(t), h(t)))
//	(a, b) = C (cos h, sin h)
//
// where C_max is the largest chroma in the sRGB gamut at that lightness and
// hue (found by bisection). The OKLab colour is converted to linear sRGB,
// then encoded with the sRGB transfer function and rounded to 8 bits.
// Because L rises linearly and the gamut cut changes chroma only, the
// scale reads as an even ramp from dark to light when printed in grey.
//
// References:
//   - B. Ottosson, A perceptual color space for image processing, 2020,
//     https://bottosson.github.io/posts/oklab/ (OKLab and its matrices).
//   - IEC 61966-2-1:1999, Default RGB colour space — sRGB (the transfer
//     function).
func Lichen(t float64) color.NRGBA {
	if !(t > 0) {
		t = 0
	}
	t = min(t, 1)
	L := 0.28 + 0.67*t
	h := (20 + 180*t) * math.Pi / 180
	c := 0.13 * math.Sin(math.Pi*(0.15+0.7*t))
	sn, cs := math.Sincos(h)
	r, g, b := oklabToLinear(L, c*cs, c*sn)
	if !inGamut(r, g, b) {
		lo, hi := 0.0, c
		for range 50 {
			mid := (lo + hi) / 2
			if r, g, b := oklabToLinear(L, mid*cs, mid*sn); inGamut(r, g, b) {
				lo = mid
			} else {
				hi = mid
			}
		}
		r, g, b = oklabToLinear(L, lo*cs, lo*sn)
	}
	return color.NRGBA{R: encode8(r), G: encode8(g), B: encode8(b), A: 0xff}
}

// oklabToLinear converts an OKLab colour to linear sRGB (Ottosson 2020).
func oklabToLinear(L, a, b float64) (r, g, bl float64) {
	l := L + 0.3963377774*a + 0.2158037573*b
	m := L - 0.1055613458*a - 0.0638541728*b
	s := L - 0.0894841775*a - 1.2914855480*b
	l, m, s = l*l*l, m*m*m, s*s*s
	return 4.0767416621*l - 3.3077115913*m + 0.2309699292*s,
		-1.2684380046*l + 2.6097574011*m - 0.3413193965*s,
		-0.0041960863*l - 0.7034186147*m + 1.7076147010*s
}

// linearToOKLab converts a linear sRGB colour to OKLab (Ottosson 2020).
func linearToOKLab(r, g, b float64) (L, a, bb float64) {
	l := math.Cbrt(0.4122214708*r + 0.5363325363*g + 0.0514459929*b)
	m := math.Cbrt(0.2119034982*r + 0.6806995451*g + 0.1073969566*b)
	s := math.Cbrt(0.0883024619*r + 0.2817188376*g + 0.6299787005*b)
	return 0.2104542553*l + 0.7936177850*m - 0.0040720468*s,
		1.9779984951*l - 2.4285922050*m + 0.4505937099*s,
		0.0259040371*l + 0.7827717662*m - 0.8086757660*s
}

// inGamut reports whether a linear sRGB colour lies in [0, 1]³, up to
// rounding.
func inGamut(r, g, b float64) bool {
	const eps = 1e-12
	return r >= -eps && r <= 1+eps && g >= -eps && g <= 1+eps && b >= -eps && b <= 1+eps
}

// encode8 applies the sRGB transfer function (IEC 61966-2-1) to a linear
// component in [0, 1] (clamped) and rounds it to 8 bits.
func encode8(c float64) uint8 {
	c = min(max(c, 0), 1)
	if c <= 0.0031308 {
		c *= 12.92
	} else {
		c = 1.055*math.Pow(c, 1/2.4) - 0.055
	}
	return uint8(math.Round(255 * c))
}

// decode8 inverts encode8 up to rounding: the linear value of an 8-bit
// sRGB component.
func decode8(v uint8) float64 {
	c := float64(v) / 255
	if c <= 0.04045 {
		return c / 12.92
	}
	return math.Pow((c+0.055)/1.055, 2.4)
}
