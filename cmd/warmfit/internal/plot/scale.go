package plot

import (
	"fmt"
	"math"
	"sync"
)

// Scale is a continuous colour scale of the house style, a path through
// OKLCh designed for this package (see the package documentation for
// its numbers). Map data onto it with a ColorMap.
type Scale int

const (
	// Sequential runs from pale frost (low values) through periwinkle,
	// mauve and wine to deep umber (high values), its lightness falling
	// evenly.
	Sequential Scale = iota
	// Diverging runs from deep cerulean (t = 0) through a neutral light
	// grey (t = 1/2) to deep copper (t = 1), each half falling evenly in
	// lightness from the centre, the two halves mirror images in
	// lightness and chroma.
	Diverging
)

// String returns "sequential" or "diverging".
func (s Scale) String() string {
	switch s {
	case Sequential:
		return "sequential"
	case Diverging:
		return "diverging"
	}
	return fmt.Sprintf("Scale(%d)", int(s))
}

// At returns the colour at position t of the scale, t clamped to
// [0, 1]. At panics if t is NaN or s is not one of the scales above.
func (s Scale) At(t float64) Color {
	c, _ := s.lab(t).color()
	return c
}

// lab returns the OKLab point at t, interpolated linearly in OKLab
// between the scale's precomputed samples.
func (s Scale) lab(t float64) oklab {
	if math.IsNaN(t) {
		panic("plot: colour scale position is NaN")
	}
	table := scaleTables()[s.index()]
	t = math.Max(0, math.Min(1, t))
	f := t * (scaleSamples - 1)
	i := min(int(f), scaleSamples-2)
	u := f - float64(i)
	a, b := table[i], table[i+1]
	return oklab{a.L + u*(b.L-a.L), a.a + u*(b.a-a.a), a.b + u*(b.b-a.b)}
}

func (s Scale) index() int {
	if s != Sequential && s != Diverging {
		panic(fmt.Sprintf("plot: unknown colour scale %d", int(s)))
	}
	return int(s)
}

// scaleSamples is the number of points at which each path is evaluated;
// between them the scale is linear in OKLab, well below one 8-bit step.
const scaleSamples = 513

// gamutShare is the largest fraction of the sRGB gamut's chroma at a
// given lightness and hue that a scale uses: the margin keeps the colours
// inside the gamut after interpolation and 8-bit rounding.
const gamutShare = 0.85

var scaleTables = sync.OnceValue(func() [2][scaleSamples]oklab {
	var out [2][scaleSamples]oklab
	for k, path := range []func(float64) oklch{sequentialPath, divergingPath} {
		for i := range out[k] {
			out[k][i] = path(float64(i) / (scaleSamples - 1)).lab()
		}
	}
	return out
})

// The sequential path: lightness falls linearly from 0.95 to 0.27; hue
// turns linearly from 225 degrees (frost) through 310 (mauve) to 395 =
// 35 degrees (umber); chroma follows a smooth arch from 0.02 up to about
// 0.145 past the middle and down to 0.07, held within gamutShare of the
// gamut.
func sequentialPath(t float64) oklch {
	L := 0.95 - 0.68*t
	h := 225 + 170*t
	arch := 0.02 + 0.05*t + 0.10*4*t*(1-t)
	return oklch{L, math.Min(arch, gamutShare*maxChroma(L, h)), math.Mod(h, 360)}
}

// The diverging path, in terms of the distance s = |2t - 1| from the
// centre: lightness falls linearly from 0.96 to 0.40 on both sides;
// the cool side turns from hue 262 to 240 degrees, the warm side from 78
// to 48 degrees; chroma rises as 0.13 s^0.8, held within gamutShare of
// the gamut on both sides at once so that the halves stay mirror images.
func divergingPath(t float64) oklch {
	s := math.Abs(2*t - 1)
	L := 0.96 - 0.56*s
	cool, warm := 262-22*s, 78-30*s
	C := math.Min(0.13*math.Pow(s, 0.8), gamutShare*math.Min(maxChroma(L, cool), maxChroma(L, warm)))
	if t < 0.5 {
		return oklch{L, C, cool}
	}
	return oklch{L, C, warm}
}

// maxChroma returns the largest chroma at lightness L and hue h that lies
// inside the sRGB gamut, by bisection.
func maxChroma(L, h float64) float64 {
	lo, hi := 0.0, 0.5
	for range 40 {
		mid := (lo + hi) / 2
		if _, ok := (oklch{L, mid, h}).lab().color(); ok {
			lo = mid
		} else {
			hi = mid
		}
	}
	return lo
}
