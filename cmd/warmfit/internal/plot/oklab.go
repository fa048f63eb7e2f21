package plot

import "math"

// OKLab is the perceptual colour space of B. Ottosson, "A perceptual
// color space for image processing" (2020,
// https://bottosson.github.io/posts/oklab/): L is perceived lightness
// (0 black, 1 white) and a, b are opponent axes (green-red,
// blue-yellow). Euclidean distance in it approximates perceived
// difference. OKLCh is its polar form: chroma C = hypot(a, b) and hue h,
// in degrees, = atan2(b, a).
type oklab struct{ L, a, b float64 }

type oklch struct{ L, C, h float64 }

// The matrices of Ottosson (2020): linear sRGB to cone-like LMS, and
// cube-rooted LMS to Lab; with their inverses as published there.
var (
	linearToLMS = [3][3]float64{
		{0.4122214708, 0.5363325363, 0.0514459929},
		{0.2119034982, 0.6806995451, 0.1073969566},
		{0.0883024619, 0.2817188376, 0.6299787005},
	}
	lmsToLab = [3][3]float64{
		{0.2104542553, 0.7936177850, -0.0040720468},
		{1.9779984951, -2.4285922050, 0.4505937099},
		{0.0259040371, 0.7827717662, -0.8086757660},
	}
	labToLMS = [3][3]float64{
		{1, 0.3963377774, 0.2158037573},
		{1, -0.1055613458, -0.0638541728},
		{1, -0.0894841775, -1.2914855480},
	}
	lmsToLinear = [3][3]float64{
		{4.0767416621, -3.3077115913, 0.2309699292},
		{-1.2684380046, 2.6097574011, -0.3413193965},
		{-0.0041960863, -0.7034186147, 1.7076147010},
	}
)

func mul3(m [3][3]float64, v [3]float64) [3]float64 {
	var out [3]float64
	for i := range out {
		out[i] = m[i][0]*v[0] + m[i][1]*v[1] + m[i][2]*v[2]
	}
	return out
}

// linearToOKLab converts linear sRGB components to OKLab.
func linearToOKLab(rgb [3]float64) oklab { return lmsToOKLab(mul3(linearToLMS, rgb)) }

// lmsToOKLab applies the cube root and the second matrix of Ottosson
// (2020) to cone-like LMS responses.
func lmsToOKLab(lms [3]float64) oklab {
	for i := range lms {
		lms[i] = math.Cbrt(lms[i])
	}
	lab := mul3(lmsToLab, lms)
	return oklab{lab[0], lab[1], lab[2]}
}

// linear converts to linear sRGB components, which lie outside [0, 1]
// for colours beyond the sRGB gamut.
func (p oklab) linear() [3]float64 {
	lms := mul3(labToLMS, [3]float64{p.L, p.a, p.b})
	for i := range lms {
		lms[i] = lms[i] * lms[i] * lms[i]
	}
	return mul3(lmsToLinear, lms)
}

func (c Color) oklab() oklab {
	return linearToOKLab([3]float64{srgbToLinear(c.R), srgbToLinear(c.G), srgbToLinear(c.B)})
}

// gamutSlack is how far outside [0, 1] a linear component may fall and
// still count as inside the gamut: the rounding of the published
// matrices, far below one step of an 8-bit channel.
const gamutSlack = 1e-6

// color converts to sRGB, clamping each linear component into [0, 1];
// ok reports whether the colour was inside the gamut, so that no clamp
// was needed.
func (p oklab) color() (c Color, ok bool) {
	rgb := p.linear()
	ok = true
	for i, v := range rgb {
		if v < -gamutSlack || v > 1+gamutSlack {
			ok = false
		}
		rgb[i] = linearToSRGB(math.Max(0, math.Min(1, v)))
	}
	return Color{rgb[0], rgb[1], rgb[2]}, ok
}

func (p oklch) lab() oklab {
	s, c := math.Sincos(p.h * math.Pi / 180)
	return oklab{p.L, p.C * c, p.C * s}
}

func (p oklab) lch() oklch {
	h := math.Atan2(p.b, p.a) * 180 / math.Pi
	if h < 0 {
		h += 360
	}
	return oklch{p.L, math.Hypot(p.a, p.b), h}
}
