package plot

import "math"

// LegendEntry is one line of a legend: a marker, a line sample or a
// filled swatch (any of them, drawn on top of each other), then the
// label. An entry with none of the three is a line of text, for figures
// such as "mean +0.03".
type LegendEntry struct {
	Label  string
	Marker *MarkerStyle
	Line   Stroke
	Fill   *Fill
}

func (e LegendEntry) hasSymbol() bool { return e.Marker != nil || e.Line.Width > 0 || e.Fill != nil }

// occupancy remembers where a panel's data lie, in pixels, so that a
// legend can be put where it hides least.
type occupancy struct {
	spots []spot
	rects []Rect
}

// spot is a drawn point with a weight: data count fully, reference
// lines a little.
type spot struct{ x, y, w float64 }

// Weights of what a legend may cover.
const (
	weightOfData      = 1
	weightOfReference = 0.15
	sampleSpacing     = 4 // pixels between recorded points along a line
)

func (o *occupancy) addPoint(x, y, w float64) { o.spots = append(o.spots, spot{x, y, w}) }

// addPath records points every few pixels along a polyline.
func (o *occupancy) addPath(xs, ys []float64, w float64) {
	for i := range xs {
		if i == 0 {
			o.addPoint(xs[0], ys[0], w)
			continue
		}
		dx, dy := xs[i]-xs[i-1], ys[i]-ys[i-1]
		n := int(math.Min(math.Ceil(math.Hypot(dx, dy)/sampleSpacing), 2000))
		for k := 1; k <= n; k++ {
			f := float64(k) / float64(n)
			o.addPoint(xs[i-1]+f*dx, ys[i-1]+f*dy, w)
		}
	}
}

// cost is how much of the recorded data a box would hide.
func (o *occupancy) cost(b Rect) float64 {
	g := b.Inset(-3)
	c := 0.0
	for _, s := range o.spots {
		if s.x >= g.X && s.x <= g.Right() && s.y >= g.Y && s.y <= g.Bottom() {
			c += s.w
		}
	}
	for _, r := range o.rects {
		w := math.Min(g.Right(), r.Right()) - math.Max(g.X, r.X)
		h := math.Min(g.Bottom(), r.Bottom()) - math.Max(g.Y, r.Y)
		if w > 0 && h > 0 {
			c += w * h / (sampleSpacing * sampleSpacing)
		}
	}
	return c
}

// Legend draws the entries in a framed box inside the plot area, at the
// one of eight places along its edges that hides the least of the data
// drawn so far (the upper right first when several are free). Call it
// after the data.
func (p *Panel) Legend(entries ...LegendEntry) {
	if p.dead || len(entries) == 0 {
		return
	}
	p.d.drawLegend(p.legendPlace(legendSize(entries)), entries)
}

// legendPlace returns the least covering of the eight places for a box
// of w x h pixels.
func (p *Panel) legendPlace(w, h float64) Rect {
	a := p.area.Inset(legendInset)
	xs := []float64{a.Right() - w, a.X, a.X + (a.W-w)/2}
	ys := []float64{a.Y, a.Bottom() - h, a.Y + (a.H-h)/2}
	// Upper right, upper left, lower right, lower left, top centre,
	// bottom centre, middle right, middle left.
	order := [][2]int{{0, 0}, {1, 0}, {0, 1}, {1, 1}, {2, 0}, {2, 1}, {0, 2}, {1, 2}}
	best, bestCost := Rect{}, math.Inf(1)
	for _, o := range order {
		b := Rect{xs[o[0]], ys[o[1]], w, h}
		if c := p.cost(b); c < bestCost-1e-9 {
			best, bestCost = b, c
		}
	}
	return best
}

// legendSize returns the width and height of a legend box.
func legendSize(entries []LegendEntry) (w, h float64) {
	symbols := false
	for _, e := range entries {
		w = math.Max(w, textWidth(e.Label, sizeLegend, false))
		symbols = symbols || e.hasSymbol()
	}
	if symbols {
		w += legendSample + 6
	}
	return w + 2*legendPad, 2*legendPad + float64(len(entries))*sizeLegend*lineHeight - (lineHeight-1)*sizeLegend
}

func (d *Document) drawLegend(box Rect, entries []LegendEntry) {
	d.Rect(box, &Fill{Color: plotColor, Alpha: 0.9}, Stroke{Color: gridColor, Width: weightFrame})
	symbols := false
	for _, e := range entries {
		symbols = symbols || e.hasSymbol()
	}
	step := sizeLegend * lineHeight
	for i, e := range entries {
		top := box.Y + legendPad + float64(i)*step
		mid := top + sizeLegend/2
		x := box.X + legendPad
		if e.Fill != nil {
			d.Rect(Rect{x + 2, mid - 5, legendSample - 4, 10}, e.Fill, Stroke{Color: frameColor, Width: 0.5})
		}
		if e.Line.Width > 0 {
			d.Line(x, mid, x+legendSample, mid, e.Line)
		}
		if e.Marker != nil {
			d.Marker(x+legendSample/2, mid, *e.Marker)
		}
		if symbols {
			x += legendSample + 6
		}
		d.Text(x, top+sizeLegend*0.85, e.Label, TextStyle{Size: sizeLegend})
	}
}
