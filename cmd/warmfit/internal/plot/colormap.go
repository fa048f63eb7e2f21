package plot

import (
	"fmt"
	"math"
)

// ColorMap maps data values onto a colour scale: Min to the scale's
// start, Max to its end, linearly, values beyond clamped. Label names
// the quantity on its colour bar.
type ColorMap struct {
	Scale    Scale
	Min, Max float64
	Label    string
}

// NewColorMap returns a map of the values onto the scale, over a range
// widened to nice numbers: for Sequential the values' range, for
// Diverging a range symmetric about zero that holds every value, so that
// zero falls on the scale's neutral centre. It returns an error if there
// are no values or one is not finite.
func NewColorMap(s Scale, label string, values []float64) (ColorMap, error) {
	s.index() // panics on an unknown scale
	lo, hi := math.Inf(1), math.Inf(-1)
	for i, v := range values {
		if !finite(v) {
			return ColorMap{}, fmt.Errorf("plot: colour map %q: value %d is %v: %w", label, i, v, errNonFinite)
		}
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	if len(values) == 0 {
		return ColorMap{}, fmt.Errorf("plot: colour map %q: no values", label)
	}
	// The range ends on a multiple of a nice step of about 1/8 of it
	// (of its half, for a diverging map): little of the scale is wasted.
	if s == Diverging {
		_, m := widen(0, math.Max(math.Abs(lo), math.Abs(hi)), 8, false)
		lo, hi = -m, m
	} else {
		lo, hi = widen(lo, hi, 8, false)
	}
	return ColorMap{Scale: s, Min: lo, Max: hi, Label: label}, nil
}

// AutoColorMap chooses the scale from the values: Diverging when they
// take both signs, Sequential when they keep one, where the variation
// among them shows best.
func AutoColorMap(label string, values []float64) (ColorMap, error) {
	neg, pos := false, false
	for _, v := range values {
		neg = neg || v < 0
		pos = pos || v > 0
	}
	if neg && pos {
		return NewColorMap(Diverging, label, values)
	}
	return NewColorMap(Sequential, label, values)
}

// At returns the colour of the value v. It panics if v is NaN or the
// map's range is empty or not finite; NewColorMap never makes such maps.
func (m ColorMap) At(v float64) Color {
	if !(m.Max > m.Min) || !finite(m.Max-m.Min) {
		panic(fmt.Sprintf("plot: colour map %q with range [%v, %v]", m.Label, m.Min, m.Max))
	}
	return m.Scale.At((v - m.Min) / (m.Max - m.Min))
}
