package plot

import "math"

// Simulated colour vision, for the tests of the scales and categories.
//
// The dichromacy matrices are those of G. M. Machado, M. M. Oliveira and
// L. A. F. Fernandes, "A physiologically-based model for simulation of
// color vision deficiency", IEEE Transactions on Visualization and
// Computer Graphics 15(6), 1291-1298 (2009), at severity 1.0, applied to
// linear sRGB components. Grey is the relative luminance of IEC
// 61966-2-1, re-encoded; greyLuma is the BT.601 luma of the encoded
// components, what simple desaturation filters and many printers use
// (common practice).

type vision int

const (
	normalVision vision = iota
	deuteranopia
	protanopia
	tritanopia
)

func (v vision) String() string {
	return [...]string{"normal vision", "deuteranopia", "protanopia", "tritanopia"}[v]
}

var allVisions = []vision{normalVision, deuteranopia, protanopia, tritanopia}

var machado2009 = map[vision][3][3]float64{
	deuteranopia: {{0.367322, 0.860646, -0.227968}, {0.280085, 0.672501, 0.047413}, {-0.011820, 0.042940, 0.968881}},
	protanopia:   {{0.152286, 1.052583, -0.204868}, {0.114503, 0.786281, 0.099216}, {-0.003882, -0.048116, 1.051998}},
	tritanopia:   {{1.255528, -0.076749, -0.178779}, {-0.078411, 0.930809, 0.147602}, {0.004733, 0.691367, 0.303900}},
}

// seen returns the colour as a viewer with the given vision sees it,
// clamped into the gamut, in OKLab.
func (v vision) seen(c Color) oklab {
	if v == normalVision {
		return c.oklab()
	}
	rgb := mul3(machado2009[v], [3]float64{srgbToLinear(c.R), srgbToLinear(c.G), srgbToLinear(c.B)})
	for i := range rgb {
		rgb[i] = math.Max(0, math.Min(1, rgb[i]))
	}
	return linearToOKLab(rgb)
}

// grey is what a careful conversion to grey keeps: the relative
// luminance Y, the D65 weights of the sRGB primaries (IEC 61966-2-1, as
// in ITU-R BT.709) on the linear components.
func grey(c Color) float64 {
	return 0.2126*srgbToLinear(c.R) + 0.7152*srgbToLinear(c.G) + 0.0722*srgbToLinear(c.B)
}

// greyLuma is what a quick one does: BT.601 weights on encoded values.
func greyLuma(c Color) float64 { return 0.299*c.R + 0.587*c.G + 0.114*c.B }
