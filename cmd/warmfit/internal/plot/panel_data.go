package plot

import (
	"fmt"
	"math"
)

// The data methods of a panel. Every value must be finite, and positive
// on a log axis; a value that is not is an error of the document (see
// Document.Err) naming the panel, the method and the index, and the
// method draws nothing. Slices of different lengths are a programming
// error and panic.

// place maps the points (xs[i], ys[i]) to pixels, checking every value.
func (p *Panel) place(what string, xs, ys []float64) (px, py []float64, ok bool) {
	if len(xs) != len(ys) {
		panic(fmt.Sprintf("plot: %s: %d x values and %d y values", what, len(xs), len(ys)))
	}
	if p.dead {
		return nil, nil, false
	}
	px, py = make([]float64, len(xs)), make([]float64, len(ys))
	for i := range xs {
		if !p.check(what, "x", i, xs[i], p.x) || !p.check(what, "y", i, ys[i], p.y) {
			return nil, nil, false
		}
		px[i], py[i] = p.x.pixel(xs[i]), p.y.pixel(ys[i])
	}
	return px, py, true
}

// check reports whether v can be placed on the axis, recording an error
// if not.
func (p *Panel) check(what, axis string, i int, v float64, m *axisMap) bool {
	switch {
	case !finite(v):
		p.d.fail(fmt.Errorf("plot: panel %q: %s: %s[%d] = %v: %w", p.title, what, axis, i, v, errNonFinite))
		return false
	case m.spec.Log && !(v > 0):
		p.d.failf("panel %q: %s: %s[%d] = %v is not positive, on a log axis", p.title, what, axis, i, v)
		return false
	}
	return true
}

// Line draws a curve through the points in order.
func (p *Panel) Line(xs, ys []float64, s Stroke) {
	px, py, ok := p.place("line", xs, ys)
	if !ok {
		return
	}
	p.d.clipped(p.clipArea, func() { p.d.Polyline(px, py, s) })
	p.addPath(px, py, weightOfData)
}

// Points draws a marker at each point.
func (p *Panel) Points(xs, ys []float64, m MarkerStyle) {
	px, py, ok := p.place("points", xs, ys)
	if !ok {
		return
	}
	p.d.clipped(p.clipMarks, func() {
		for i := range px {
			p.d.Marker(px[i], py[i], m)
		}
	})
	r := m.radius()
	for i := range px {
		p.rects = append(p.rects, Rect{px[i] - r, py[i] - r, 2 * r, 2 * r})
	}
}

// ErrorBars draws a vertical bar from ys[i]-errs[i] to ys[i]+errs[i] at
// each xs[i], without caps. Draw them before the markers, so that the
// markers sit on top. A negative error is an error of the document.
func (p *Panel) ErrorBars(xs, ys, errs []float64, s Stroke) {
	if len(errs) != len(ys) {
		panic(fmt.Sprintf("plot: error bars: %d y values and %d errors", len(ys), len(errs)))
	}
	lo, hi := make([]float64, len(ys)), make([]float64, len(ys))
	for i, e := range errs {
		if !(e >= 0) && finite(e) {
			p.d.failf("panel %q: error bars: err[%d] = %v is negative", p.title, i, e)
			return
		}
		lo[i], hi[i] = ys[i]-e, ys[i]+e
	}
	if !p.dead && p.y.spec.Log {
		// On a log axis a bar reaching zero or below goes to the bottom.
		for i := range lo {
			if finite(lo[i]) && lo[i] <= 0 {
				lo[i] = p.y.lo / 10
			}
		}
	}
	_, plo, ok1 := p.place("error bars", xs, lo)
	px, phi, ok2 := p.place("error bars", xs, hi)
	if !ok1 || !ok2 {
		return
	}
	p.d.clipped(p.clipArea, func() {
		for i := range px {
			p.d.Line(px[i], plo[i], px[i], phi[i], s)
		}
	})
	for i := range px {
		p.addPath([]float64{px[i], px[i]}, []float64{plo[i], phi[i]}, weightOfData)
	}
}

// Band fills the region between the curves lo(x) and hi(x): an
// uncertainty band, or a tolerance about a fit.
func (p *Panel) Band(xs, lo, hi []float64, f Fill) {
	_, plo, ok1 := p.place("band", xs, lo)
	px, phi, ok2 := p.place("band", xs, hi)
	if !ok1 || !ok2 || len(px) < 2 {
		return
	}
	var polyX, polyY []float64
	for i := range px {
		polyX, polyY = append(polyX, px[i]), append(polyY, phi[i])
	}
	for i := len(px) - 1; i >= 0; i-- {
		polyX, polyY = append(polyX, px[i]), append(polyY, plo[i])
	}
	p.d.clipped(p.clipArea, func() { p.d.Polygon(polyX, polyY, &f, Stroke{}) })
	p.addPath(px, phi, weightOfData)
	p.addPath(px, plo, weightOfData)
}

// ShadeX shades the full height of the plot area between x0 and x1 (in
// either order), behind what is drawn after it: a trusted range, or the
// region a method covers. Ends beyond the axis are cut at its edges.
func (p *Panel) ShadeX(x0, x1 float64, f Fill) {
	if p.dead || !p.check("shade", "x", 0, x0, p.x) || !p.check("shade", "x", 1, x1, p.x) {
		return
	}
	a0, a1 := p.x.pixel(x0), p.x.pixel(x1)
	r := Rect{math.Min(a0, a1), p.area.Y, math.Abs(a1 - a0), p.area.H}
	p.d.clipped(p.clipArea, func() { p.d.Rect(r, &f, Stroke{}) })
}

// ShadeY shades the full width of the plot area between y0 and y1: a
// band of one standard error about zero in a residual panel, say.
func (p *Panel) ShadeY(y0, y1 float64, f Fill) {
	if p.dead || !p.check("shade", "y", 0, y0, p.y) || !p.check("shade", "y", 1, y1, p.y) {
		return
	}
	b0, b1 := p.y.pixel(y0), p.y.pixel(y1)
	r := Rect{p.area.X, math.Min(b0, b1), p.area.W, math.Abs(b1 - b0)}
	p.d.clipped(p.clipArea, func() { p.d.Rect(r, &f, Stroke{}) })
}

// HLine draws a horizontal reference line across the plot area at y,
// with an optional label at its right end in the line's colour.
func (p *Panel) HLine(y float64, s Stroke, label string) {
	if p.dead || !p.check("reference line", "y", 0, y, p.y) {
		return
	}
	py := p.y.pixel(y)
	p.d.clipped(p.clipArea, func() { p.d.Line(p.area.X, py, p.area.Right(), py, s) })
	p.addPath([]float64{p.area.X, p.area.Right()}, []float64{py, py}, weightOfReference)
	if label == "" || py < p.area.Y || py > p.area.Bottom() {
		return
	}
	// Above the line, or below it when the line runs along the top.
	base := py - 4
	if base-sizeLegend < p.area.Y {
		base = py + sizeLegend + 2
	}
	p.label(p.area.Right()-4, base, label, End, s.Color)
}

// VLine draws a vertical reference line across the plot area at x, with
// an optional label near its top in the line's colour, on the side with
// room.
func (p *Panel) VLine(x float64, s Stroke, label string) {
	if p.dead || !p.check("reference line", "x", 0, x, p.x) {
		return
	}
	px := p.x.pixel(x)
	p.d.clipped(p.clipArea, func() { p.d.Line(px, p.area.Y, px, p.area.Bottom(), s) })
	p.addPath([]float64{px, px}, []float64{p.area.Y, p.area.Bottom()}, weightOfReference)
	if label == "" || px < p.area.X || px > p.area.Right() {
		return
	}
	base := p.area.Y + sizeLegend + 3
	if px+5+textWidth(label, sizeLegend, false) <= p.area.Right()-2 {
		p.label(px+5, base, label, Start, s.Color)
	} else {
		p.label(px-5, base, label, End, s.Color)
	}
}

// label writes a reference line's label and records it, so that a
// legend keeps clear of it.
func (p *Panel) label(x, base float64, s string, a Anchor, c Color) {
	t := TextStyle{Size: sizeLegend, Anchor: a, Color: c, Halo: true}
	p.d.Text(x, base, s, t)
	p.rects = append(p.rects, textBox(x, base, s, t))
}

// Bars draws a histogram: bar i spans [edges[i], edges[i+1]] and rises
// from zero (from the bottom of a log axis) to heights[i]. Bars panics
// unless there is one more edge than heights.
func (p *Panel) Bars(edges, heights []float64, f Fill, s Stroke) {
	if len(edges) != len(heights)+1 {
		panic(fmt.Sprintf("plot: bars: %d edges for %d heights", len(edges), len(heights)))
	}
	if p.dead {
		return
	}
	for i, e := range edges {
		if !p.check("bars", "edge", i, e, p.x) {
			return
		}
	}
	for i, h := range heights {
		if !finite(h) {
			p.check("bars", "height", i, h, p.y)
			return
		}
	}
	base := 0.0
	if p.y.spec.Log {
		base = p.y.lo
	}
	var bars []Rect
	for i, h := range heights {
		if p.y.spec.Log && !(h > 0) {
			continue // an empty bin has no bar on a log axis
		}
		x0, x1 := p.x.pixel(edges[i]), p.x.pixel(edges[i+1])
		y0, y1 := p.y.pixel(base), p.y.pixel(h)
		bars = append(bars, Rect{math.Min(x0, x1), math.Min(y0, y1), math.Abs(x1 - x0), math.Abs(y1 - y0)})
	}
	p.d.clipped(p.clipArea, func() {
		for _, r := range bars {
			p.d.Rect(r, &f, s)
		}
	})
	p.rects = append(p.rects, bars...)
}

// Annotate writes s at the data point (x, y) moved by (dx, dy) pixels.
// The text is not clipped: keep it inside the panel.
func (p *Panel) Annotate(x, y, dx, dy float64, s string, t TextStyle) {
	if p.dead || !p.check("annotation", "x", 0, x, p.x) || !p.check("annotation", "y", 0, y, p.y) {
		return
	}
	px, py := p.x.pixel(x)+dx, p.y.pixel(y)+dy
	p.d.Text(px, py, s, t)
	if t.Rotate == 0 {
		p.rects = append(p.rects, textBox(px, py, s, t))
	}
}

// textBox returns the box a line of text covers.
func textBox(x, base float64, s string, t TextStyle) Rect {
	size := t.Size
	if size == 0 {
		size = sizeNote
	}
	w := textWidth(s, size, t.Bold)
	switch t.Anchor {
	case Middle:
		x -= w / 2
	case End:
		x -= w
	}
	return Rect{x, base - size, w, size * 1.25}
}
