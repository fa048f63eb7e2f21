package plot

import (
	"fmt"
	"math"
)

// Axis describes one axis of a panel: the data range it shows, linear or
// logarithmic, and how it is labelled.
type Axis struct {
	Label string
	// Min and Max are the data range to show. Unless Tight is set, the
	// range is widened outward to the nearest ticks (whole decades on a
	// log axis); an empty range (Min == Max) is given a width first.
	Min, Max float64
	Log      bool // logarithmic; needs Min > 0
	Tight    bool // show exactly [Min, Max]
	Integer  bool // automatic ticks at whole numbers only
	// Step, when positive, fixes the spacing of automatic ticks on a
	// linear axis (two axes of one quantity, such as fitted against
	// true, then share their ticks).
	Step float64
	// Ticks, when set, replace the automatic ticks: category axes, or
	// ticks coloured like the data they name.
	Ticks []Tick
	// NoTickLabels draws the tick marks and grid without numbers.
	NoTickLabels bool
}

// Tick is one labelled position of an axis.
type Tick struct {
	Value float64
	Label string
	Color Color // the zero Color stands for the house ink
	// LabelOnly writes the label without a tick mark or grid line, to
	// name a group of positions between marked boundaries.
	LabelOnly bool
}

// axisMap is an Axis fitted to a length of pixels: its shown range, its
// ticks and labels, and the map from data to pixels.
type axisMap struct {
	spec   Axis
	lo, hi float64 // shown range, data units
	p0, p1 float64 // pixels of lo and hi
	ticks  []float64
	labels []richText
	colors []Color
	bare   []bool // label only: no mark, no grid line
	minor  []float64
}

// newAxisMap fits the axis to a length of pixels, choosing about one
// tick per spacing pixels.
func newAxisMap(a Axis, length, spacing float64) (*axisMap, error) {
	if !finite(a.Min) || !finite(a.Max) {
		return nil, fmt.Errorf("range [%v, %v]: %w", a.Min, a.Max, errNonFinite)
	}
	if a.Min > a.Max {
		return nil, fmt.Errorf("range [%v, %v] is reversed", a.Min, a.Max)
	}
	if a.Log && !(a.Min > 0) {
		return nil, fmt.Errorf("log axis needs a positive range, got [%v, %v]", a.Min, a.Max)
	}
	m := &axisMap{spec: a, lo: a.Min, hi: a.Max}
	if !(a.Step >= 0) || math.IsInf(a.Step, 0) {
		return nil, fmt.Errorf("tick step %v", a.Step)
	}
	if a.Step > 0 && (a.Max-a.Min)/a.Step > maxTicks {
		return nil, fmt.Errorf("tick step %v gives more than %d ticks on [%v, %v]", a.Step, maxTicks, a.Min, a.Max)
	}
	target := max(3, int(length/spacing))
	switch {
	case a.Log:
		if !a.Tight || !(m.hi > m.lo) {
			m.lo, m.hi = widenLog(m.lo, m.hi)
		}
	case a.Step > 0 && !a.Tight:
		m.lo = math.Floor(m.lo/a.Step+1e-9) * a.Step
		m.hi = math.Ceil(m.hi/a.Step-1e-9) * a.Step
		if !(m.hi > m.lo) {
			m.lo, m.hi = m.lo-a.Step, m.hi+a.Step
		}
	case !a.Tight || !(m.hi > m.lo):
		m.lo, m.hi = widen(m.lo, m.hi, target, a.Integer)
	}
	if err := m.makeTicks(target); err != nil {
		return nil, err
	}
	return m, nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func (m *axisMap) makeTicks(target int) error {
	a := m.spec
	if a.Ticks != nil {
		for _, t := range a.Ticks {
			if !finite(t.Value) {
				return fmt.Errorf("tick %q: %w", t.Label, errNonFinite)
			}
			m.ticks = append(m.ticks, t.Value)
			m.labels = append(m.labels, plain(t.Label))
			m.colors = append(m.colors, t.Color)
			m.bare = append(m.bare, t.LabelOnly)
		}
		return nil
	}
	if a.Log {
		major, minor, decades := logTicks(m.lo, m.hi)
		m.ticks, m.minor = major, minor
		if decades {
			k0, k1 := math.Log10(m.lo), math.Log10(m.hi)
			plainDecades := k0 >= -2-1e-9 && k1 <= 3+1e-9
			for _, v := range major {
				m.labels = append(m.labels, decadeLabel(int(math.Round(math.Log10(v))), plainDecades))
			}
		} else {
			m.labels = tickLabels(major, niceStep(m.hi-m.lo, 4, false))
		}
	} else {
		step := a.Step
		if step == 0 {
			step = niceStep(m.hi-m.lo, target, a.Integer)
		}
		m.ticks = linearTicks(m.lo, m.hi, step)
		m.labels = tickLabels(m.ticks, step)
	}
	m.colors = make([]Color, len(m.ticks))
	m.bare = make([]bool, len(m.ticks))
	return nil
}

// pixelLimit bounds the pixel coordinates a map returns. Data far
// outside the shown range land on it instead of overflowing; inside a
// clipped plot area the visible part of a line changes by less than
// 1/1000 pixel.
const pixelLimit = 1e6

// pixel maps a data value to pixels; v must be finite, and positive on a
// log axis.
func (m *axisMap) pixel(v float64) float64 {
	t := (m.transform(v) - m.transform(m.lo)) / (m.transform(m.hi) - m.transform(m.lo))
	p := m.p0 + t*(m.p1-m.p0)
	return math.Max(-pixelLimit, math.Min(pixelLimit, p))
}

func (m *axisMap) transform(v float64) float64 {
	if m.spec.Log {
		return math.Log10(v)
	}
	return v
}

// valid reports whether v can be placed on the axis.
func (m *axisMap) valid(v float64) bool {
	return finite(v) && (!m.spec.Log || v > 0)
}

// inside reports whether v lies within the shown range.
func (m *axisMap) inside(v float64) bool {
	return v >= math.Min(m.lo, m.hi) && v <= math.Max(m.lo, m.hi)
}

// widestLabel returns the width of the widest tick label.
func (m *axisMap) widestLabel() float64 {
	w := 0.0
	if m.spec.NoTickLabels {
		return 0
	}
	for _, l := range m.labels {
		w = math.Max(w, l.width(sizeTick))
	}
	return w
}
