package plot

import (
	"math"
	"testing"
)

// The colour scales' promises, checked on the colours a viewer gets
// (8-bit, as written into the SVG) as well as on the exact path.

const scaleChecks = 4097 // points along a scale for the exact checks

// rendered returns n evenly spaced colours of the scale as written.
func rendered(s Scale, n int) []Color {
	out := make([]Color, n)
	for i := range out {
		out[i] = hexColor(s.At(float64(i) / float64(n-1)).Hex())
	}
	return out
}

func TestScalesInGamut(t *testing.T) {
	for _, s := range []Scale{Sequential, Diverging} {
		for i := range scaleChecks {
			tt := float64(i) / (scaleChecks - 1)
			if _, ok := s.lab(tt).color(); !ok {
				t.Errorf("%v at %.4f: %+v is outside the sRGB gamut", s, tt, s.lab(tt))
			}
		}
	}
}

func TestSequentialLightnessStrictlyFalls(t *testing.T) {
	prev := math.Inf(1)
	for i := range scaleChecks {
		L := Sequential.lab(float64(i) / (scaleChecks - 1)).L
		if !(L < prev) {
			t.Fatalf("lightness %.6f at step %d does not fall below %.6f", L, i, prev)
		}
		prev = L
	}
	cs := rendered(Sequential, 64)
	for i := 1; i < len(cs); i++ {
		if !(cs[i].oklab().L < cs[i-1].oklab().L) {
			t.Errorf("rendered step %d: %s is not darker than %s", i, cs[i], cs[i-1])
		}
	}
	if lo, hi := Sequential.lab(1).L, Sequential.lab(0).L; math.Abs(hi-0.95) > 1e-9 || math.Abs(lo-0.27) > 1e-9 {
		t.Errorf("lightness range %.3f..%.3f, want 0.95..0.27 as documented", hi, lo)
	}
}

// A sequential scale must stay ordered when printed in grey, whichever
// conversion the printer uses, and for dichromat viewers.
func TestSequentialOrderedInGreyAndForDichromats(t *testing.T) {
	cs := rendered(Sequential, 64)
	for i := 1; i < len(cs); i++ {
		if !(grey(cs[i]) < grey(cs[i-1])) {
			t.Errorf("step %d: luminance %.5f not below %.5f", i, grey(cs[i]), grey(cs[i-1]))
		}
		if !(greyLuma(cs[i]) < greyLuma(cs[i-1])) {
			t.Errorf("step %d: BT.601 luma %.5f not below %.5f", i, greyLuma(cs[i]), greyLuma(cs[i-1]))
		}
		for _, v := range allVisions[1:] {
			if a, b := v.seen(cs[i]).L, v.seen(cs[i-1]).L; !(a < b) {
				t.Errorf("%v, step %d: lightness %.4f not below %.4f", v, i, a, b)
			}
		}
	}
}

func TestDivergingLightness(t *testing.T) {
	const half = (scaleChecks - 1) / 2
	prev := -math.Inf(1)
	for i := 0; i <= half; i++ {
		L := Diverging.lab(float64(i) / (scaleChecks - 1)).L
		if !(L > prev) {
			t.Fatalf("cool half: lightness %.6f at step %d does not rise above %.6f", L, i, prev)
		}
		prev = L
	}
	for i := half + 1; i < scaleChecks; i++ {
		L := Diverging.lab(float64(i) / (scaleChecks - 1)).L
		if !(L < prev) {
			t.Fatalf("warm half: lightness %.6f at step %d does not fall below %.6f", L, i, prev)
		}
		prev = L
	}
	// The halves mirror exactly at the table's samples; between them the
	// straight chord across a turning hue is shorter than the arc by a
	// relative 1e-6 at most (the hues turn by different rates).
	for i := range scaleChecks {
		u := float64(i) / (scaleChecks - 1)
		a, b := Diverging.lab(u).lch(), Diverging.lab(1-u).lch()
		if math.Abs(a.L-b.L) > 1e-9 || math.Abs(a.C-b.C) > 1e-6 {
			t.Fatalf("at %.4f and %.4f: L %.6f vs %.6f, C %.6f vs %.6f; the halves should mirror", u, 1-u, a.L, b.L, a.C, b.C)
		}
	}
	if c, e := Diverging.lab(0.5).L, Diverging.lab(0).L; math.Abs(c-0.96) > 1e-9 || math.Abs(e-0.40) > 1e-9 {
		t.Errorf("lightness centre %.3f, ends %.3f; want 0.96 and 0.40 as documented", c, e)
	}
}

// The sign of a diverging value is carried by hue alone; the two sides
// must stay apart for every viewer, at the ends and halfway out.
func TestDivergingSidesApartForDichromats(t *testing.T) {
	for _, v := range allVisions {
		for _, s := range []float64{0.25, 0.5, 1} {
			cool := v.seen(Diverging.At(0.5 - s/2))
			warm := v.seen(Diverging.At(0.5 + s/2))
			if d := deltaE(cool, warm); d < 0.12*s {
				t.Errorf("%v: the sides at distance %.2f from the centre differ by ΔE %.3f only", v, s, d)
			}
		}
	}
}

// Equal steps along a scale should look about equal: the largest ΔE
// between neighbouring samples within 1.6 times the smallest.
func TestScalesEvenSteps(t *testing.T) {
	for _, s := range []Scale{Sequential, Diverging} {
		lo, hi := math.Inf(1), 0.0
		const n = 64
		for i := 1; i < n; i++ {
			if s == Diverging && (i == n/2 || i == n/2+1) {
				continue // the steps across the centre turn the hue
			}
			d := deltaE(s.lab(float64(i-1)/(n-1)), s.lab(float64(i)/(n-1)))
			lo, hi = math.Min(lo, d), math.Max(hi, d)
		}
		t.Logf("%v: ΔE per 1/63 step between %.4f and %.4f", s, lo, hi)
		if hi > 1.6*lo {
			t.Errorf("%v: uneven steps, ΔE from %.4f to %.4f", s, lo, hi)
		}
	}
}

func TestScaleAtClampsAndPanics(t *testing.T) {
	if Sequential.At(-1) != Sequential.At(0) || Sequential.At(2) != Sequential.At(1) {
		t.Error("positions outside [0, 1] are not clamped")
	}
	for _, f := range []func(){
		func() { Sequential.At(math.NaN()) },
		func() { Scale(7).At(0.5) },
		func() { ColorMap{Scale: Sequential}.At(1) },
	} {
		func() {
			defer func() {
				if recover() == nil {
					t.Error("no panic")
				}
			}()
			f()
		}()
	}
}

func TestColorMaps(t *testing.T) {
	for _, tt := range []struct {
		scale    Scale
		values   []float64
		min, max float64
	}{
		{Sequential, []float64{0.83, 1.21, 0.97}, 0.8, 1.25},
		{Diverging, []float64{-0.3, 1.7}, -1.75, 1.75},
		{Diverging, []float64{0.2, 0.43}, -0.5, 0.5},
		{Sequential, []float64{5, 5}, 4.4, 5.6}, // one value gets a width of its own
	} {
		m, err := NewColorMap(tt.scale, "v", tt.values)
		if err != nil || math.Abs(m.Min-tt.min) > 1e-12 || math.Abs(m.Max-tt.max) > 1e-12 {
			t.Errorf("%v over %v: [%v, %v] (%v), want [%v, %v]", tt.scale, tt.values, m.Min, m.Max, err, tt.min, tt.max)
		}
	}
	if m, _ := AutoColorMap("v", []float64{-1, 2}); m.Scale != Diverging {
		t.Error("values of both signs should get the diverging scale")
	}
	if m, _ := AutoColorMap("v", []float64{1, 2}); m.Scale != Sequential {
		t.Error("positive values should get the sequential scale")
	}
	m, _ := NewColorMap(Diverging, "v", []float64{-1, 1})
	if m.At(0) != Diverging.At(0.5) {
		t.Error("zero is not at the diverging scale's centre")
	}
	for _, bad := range [][]float64{nil, {1, math.NaN()}, {math.Inf(1)}} {
		if _, err := NewColorMap(Sequential, "v", bad); err == nil {
			t.Errorf("values %v: no error", bad)
		}
	}
}

// In grey, or for a dichromat, a diverging scale still shows the size of
// a value: lightness and luminance rise to the centre and fall after it.
func TestDivergingMagnitudeInGreyAndForDichromats(t *testing.T) {
	cs := rendered(Diverging, 65) // sample 32 is the centre
	for i := 1; i < len(cs); i++ {
		rising := i <= 32
		check := func(what string, a, b float64) {
			if rising && !(b > a) || !rising && !(b < a) {
				t.Errorf("%s at step %d: %.5f then %.5f", what, i, a, b)
			}
		}
		check("luminance", grey(cs[i-1]), grey(cs[i]))
		for _, v := range allVisions[1:] {
			check(v.String()+" lightness", v.seen(cs[i-1]).L, v.seen(cs[i]).L)
		}
	}
}
