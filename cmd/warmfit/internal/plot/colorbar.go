package plot

import (
	"math"
	"strconv"
)

// Room a colour bar needs around its bar, in pixels: a horizontal bar
// has its label above and its tick labels below; a vertical bar has its
// label above and its tick labels to the right.
const (
	ColorBarAbove = sizeLegend + 6
	ColorBarBelow = tickLength + tickGap + sizeTick + 2
)

// gradientStops is the number of colour stops of a bar's gradient;
// between stops a viewer interpolates in sRGB, which over 1/32 of a
// scale stays within a fraction of an 8-bit step of the OKLab path.
const gradientStops = 33

// ColorBar draws the map's scale filling the bar r, horizontal (low
// values on the left) when r is wider than tall, vertical (low values at
// the bottom) otherwise, with ticks at nice values and the map's label.
// The labels lie outside r: see ColorBarAbove and ColorBarBelow.
func (d *Document) ColorBar(r Rect, m ColorMap) {
	if !(m.Max > m.Min) || !finite(m.Max-m.Min) {
		d.failf("colour bar %q: range [%v, %v]", m.Label, m.Min, m.Max)
		return
	}
	horizontal := r.W >= r.H
	id := d.newID("grad")
	e := d.open("linearGradient").str("id", id)
	if horizontal {
		e.str("x1", "0").str("y1", "0").str("x2", "1").str("y2", "0")
	} else {
		e.str("x1", "0").str("y1", "1").str("x2", "0").str("y2", "0")
	}
	d.body.WriteString(">\n")
	for k := range gradientStops {
		t := float64(k) / (gradientStops - 1)
		d.open("stop").str("offset", strconv.FormatFloat(t, 'f', 4, 64)).str("stop-color", m.Scale.At(t).Hex()).close()
	}
	d.body.WriteString("</linearGradient>\n")
	d.open("rect").num("x", r.X).num("y", r.Y).num("width", r.W).num("height", r.H).
		str("fill", "url(#"+id+")").stroke(Stroke{Color: frameColor, Width: weightFrame}).close()

	length := r.H
	if horizontal {
		length = r.W
	}
	ticks, labels := barTicks(m, length, horizontal)
	tick := Stroke{Color: frameColor, Width: weightAxis}
	for i, v := range ticks {
		f := (v - m.Min) / (m.Max - m.Min)
		if horizontal {
			x := r.X + f*r.W
			d.Line(x, r.Bottom(), x, r.Bottom()+tickLength, tick)
			d.richText(x, r.Bottom()+tickLength+tickGap+sizeTick*0.85, labels[i], TextStyle{Size: sizeTick, Anchor: Middle})
		} else {
			y := r.Bottom() - f*r.H
			d.Line(r.Right(), y, r.Right()+tickLength, y, tick)
			d.richText(r.Right()+tickLength+tickGap, y+sizeTick*0.35, labels[i], TextStyle{Size: sizeTick})
		}
	}
	d.Text(r.X, r.Y-6, m.Label, TextStyle{Size: sizeLegend})
}

// barTicks chooses about one tick per 45 pixels of a bar, fewer when
// the labels of a horizontal bar would touch, more when that leaves
// fewer than three ticks and their labels still fit.
func barTicks(m ColorMap, length float64, horizontal bool) ([]float64, []richText) {
	try := func(target int) ([]float64, []richText, bool) {
		step := niceStep(m.Max-m.Min, target, false)
		ticks := linearTicks(m.Min, m.Max, step)
		labels := tickLabels(ticks, step)
		widest := 0.0
		for _, l := range labels {
			widest = math.Max(widest, l.width(sizeTick))
		}
		return ticks, labels, !horizontal || step/(m.Max-m.Min)*length >= widest+8
	}
	target := max(2, int(length/45))
	for t := target + 1; t <= target+6; t++ {
		if ticks, _, _ := try(t - 1); len(ticks) >= 3 {
			break
		}
		if _, _, fits := try(t); !fits {
			break
		}
		target = t
	}
	for ; ; target-- {
		if ticks, labels, fits := try(target); fits || target <= 2 {
			return ticks, labels
		}
	}
}
