package plot

import (
	"fmt"
	"math"
)

// Color is an opaque colour in the sRGB colour space of IEC 61966-2-1,
// with gamma-encoded components R, G and B in [0, 1].
type Color struct{ R, G, B float64 }

// Hex returns the colour as #rrggbb, each component rounded to 8 bits
// after clamping to [0, 1].
func (c Color) Hex() string {
	byte8 := func(v float64) int { return int(math.Round(255 * math.Max(0, math.Min(1, v)))) }
	return fmt.Sprintf("#%02x%02x%02x", byte8(c.R), byte8(c.G), byte8(c.B))
}

// String returns Hex.
func (c Color) String() string { return c.Hex() }

// hexColor parses #rrggbb; it is used for the package's own constants
// only, so a malformed string is a programming error.
func hexColor(s string) Color {
	var r, g, b int
	if n, err := fmt.Sscanf(s, "#%02x%02x%02x", &r, &g, &b); n != 3 || err != nil || len(s) != 7 {
		panic("plot: bad colour constant " + s)
	}
	return Color{float64(r) / 255, float64(g) / 255, float64(b) / 255}
}

// srgbToLinear is the sRGB decoding function of IEC 61966-2-1: a linear
// segment below 0.04045, a 2.4 power law with offset above.
func srgbToLinear(v float64) float64 {
	if v <= 0.04045 {
		return v / 12.92
	}
	return math.Pow((v+0.055)/1.055, 2.4)
}

// linearToSRGB is the inverse of srgbToLinear (IEC 61966-2-1, threshold
// 0.0031308).
func linearToSRGB(v float64) float64 {
	if v <= 0.0031308 {
		return 12.92 * v
	}
	return 1.055*math.Pow(v, 1/2.4) - 0.055
}

// shade returns the colour with its OKLab lightness moved by dL, hue and
// chroma kept, clipped into the gamut: the outline of a marker is its
// fill, darkened.
func (c Color) shade(dL float64) Color {
	p := c.oklab()
	p.L = math.Max(0, math.Min(1, p.L+dL))
	out, _ := p.color()
	return out
}
