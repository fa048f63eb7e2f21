package plot

import (
	"math"
)

// Panel is one set of axes on a document: a plot area with a frame, a
// grid at the ticks, tick labels, axis labels and a title, and methods
// that draw data in data coordinates. Make panels with Document.Panel,
// or Document.Stack for panels sharing one x axis.
//
// Data drawn on a panel is clipped to its plot area. Call Legend last:
// it is placed where the data already drawn leaves the most room.
type Panel struct {
	d     *Document
	title string
	area  Rect
	x, y  *axisMap
	// Clip paths for lines and areas (the plot area) and for markers
	// (the area grown by a marker's size, so that points on the edge
	// show whole).
	clipArea, clipMarks string
	dead                bool // the axes were invalid; the panel draws nothing
	occupancy
}

// Row is one panel of a Stack.
type Row struct {
	Title  string
	Y      Axis
	Weight float64 // share of the stack's height; 0 means 1
}

// Panel lays out one panel in outer: the plot area is what remains
// after room for the title, tick labels and axis labels.
func (d *Document) Panel(outer Rect, title string, x, y Axis) *Panel {
	return d.Stack(outer, x, Row{Title: title, Y: y})[0]
}

// Stack lays out panels one above the other in outer, sharing the x
// axis: their plot areas have the same left and right edges, and only
// the lowest carries the x tick labels and the x label. It is the layout
// of a quantity with its residuals below, or of several quantities
// against one variable. Stack panics if rows is empty.
func (d *Document) Stack(outer Rect, x Axis, rows ...Row) []*Panel {
	if len(rows) == 0 {
		panic("plot: Stack without rows")
	}
	tops, heights := stackHeights(outer, x, rows)
	panels := make([]*Panel, len(rows))
	ys := make([]*axisMap, len(rows))
	left := 0.0
	for i, r := range rows {
		panels[i] = &Panel{d: d, title: r.Title}
		m, err := newAxisMap(r.Y, heights[i], 48)
		if err != nil {
			d.failf("panel %q: y axis: %w", r.Title, err)
			panels[i].dead = true
			continue
		}
		ys[i] = m
		left = math.Max(left, leftMargin(m))
	}
	xm, right, err := fitXAxis(x, outer.W-left)
	if err != nil {
		d.failf("panel %q: x axis: %w", rows[len(rows)-1].Title, err)
	}
	y := outer.Y
	for i, p := range panels {
		y += tops[i]
		p.area = Rect{outer.X + left, y, outer.W - left - right, heights[i]}
		y += heights[i]
		if p.dead || err != nil {
			p.dead = true
			continue
		}
		// Each panel gets its own copy of the x map, with the tick
		// labels only on the lowest.
		xc := *xm
		if i < len(panels)-1 {
			xc.spec.NoTickLabels = true
			xc.spec.Label = ""
		}
		p.x, p.y = &xc, ys[i]
		p.x.p0, p.x.p1 = p.area.X, p.area.Right()
		p.y.p0, p.y.p1 = p.area.Bottom(), p.area.Y
		p.drawFrame()
	}
	return panels
}

// Room above a plot area, and below the lowest one.
const (
	topWithTitle    = sizePanelTitle + titleGap + 4
	topWithoutTitle = 8
	rowGap          = 10 // more between a panel and the title of the next
	xTickBlock      = tickLength + tickGap + sizeTick + 3
	xLabelBlock     = labelGap + sizeAxisLabel + 2
)

// stackHeights returns the room above each plot area and the plot
// areas' heights.
func stackHeights(outer Rect, x Axis, rows []Row) (tops, heights []float64) {
	bottom := xTickBlock
	if x.Label != "" {
		bottom += xLabelBlock
	}
	free := outer.H - bottom
	weights := 0.0
	for i, r := range rows {
		top := float64(topWithoutTitle)
		switch {
		case r.Title != "" && i > 0:
			top = topWithTitle + rowGap
		case r.Title != "":
			top = topWithTitle
		case i == 0:
			top = 4
		}
		tops = append(tops, top)
		free -= top
		weights += rowWeight(r)
	}
	free = math.Max(free, float64(10*len(rows)))
	for _, r := range rows {
		heights = append(heights, free*rowWeight(r)/weights)
	}
	return tops, heights
}

func rowWeight(r Row) float64 {
	if r.Weight > 0 {
		return r.Weight
	}
	return 1
}

// leftMargin is the room a y axis needs for its tick labels and label.
func leftMargin(y *axisMap) float64 {
	m := tickLength + tickGap + y.widestLabel() + 4
	if y.spec.Label != "" {
		m += labelGap + sizeAxisLabel
	}
	return m
}

// fitXAxis fits the x axis to the width left of the y labels, and
// returns the room to keep on the right for the last tick label's
// overhang.
func fitXAxis(x Axis, width float64) (*axisMap, float64, error) {
	right := 10.0
	for range 2 {
		m, err := newAxisMap(x, width-right, 85)
		if err != nil {
			return nil, 0, err
		}
		need := 10.0
		if n := len(m.ticks); n > 0 && !x.NoTickLabels {
			// The last label is centred on its tick: half of it may stick
			// out beyond the plot area.
			m.p0, m.p1 = 0, width-right
			over := m.pixel(m.ticks[n-1]) + m.labels[n-1].width(sizeTick)/2 - (width - right)
			need = math.Max(need, over+4)
		}
		if need <= right {
			return m, right, nil
		}
		right = need
	}
	m, err := newAxisMap(x, width-right, 85)
	return m, right, err
}

// Area returns the plot area in pixels.
func (p *Panel) Area() Rect { return p.area }

// Pixel maps a data point to pixels; ok is false when the point cannot
// be placed (non-finite, or not positive on a log axis, or the panel's
// axes were invalid).
func (p *Panel) Pixel(x, y float64) (px, py float64, ok bool) {
	if p.dead || !p.x.valid(x) || !p.y.valid(y) {
		return 0, 0, false
	}
	return p.x.pixel(x), p.y.pixel(y), true
}

// drawFrame paints the plot area, the grid, the spines with their ticks
// and labels, and the title, and defines the clip paths.
func (p *Panel) drawFrame() {
	d, a := p.d, p.area
	d.Rect(a, &Fill{Color: plotColor}, Stroke{})
	grid := Stroke{Color: gridColor, Width: weightGrid, Dash: gridDash}
	for i, t := range p.x.ticks {
		if !p.x.bare[i] && p.x.inside(t) {
			d.Line(p.x.pixel(t), a.Y, p.x.pixel(t), a.Bottom(), grid)
		}
	}
	for i, t := range p.y.ticks {
		if !p.y.bare[i] && p.y.inside(t) {
			d.Line(a.X, p.y.pixel(t), a.Right(), p.y.pixel(t), grid)
		}
	}
	spine := Stroke{Color: frameColor, Width: weightAxis}
	d.Line(a.X, a.Bottom(), a.Right(), a.Bottom(), spine)
	d.Line(a.X, a.Y, a.X, a.Bottom(), spine)
	p.drawXTicks(spine)
	p.drawYTicks(spine)
	if p.title != "" {
		d.Subheading(a.X, a.Y-titleGap-2, p.title)
	}
	p.clipArea = d.clipPath(a)
	p.clipMarks = d.clipPath(a.Inset(-(markerRadius + 2)))
}

func (p *Panel) drawXTicks(spine Stroke) {
	d, a, x := p.d, p.area, p.x
	base := a.Bottom()
	for _, t := range x.minor {
		if x.inside(t) {
			d.Line(x.pixel(t), base, x.pixel(t), base+tickLength*0.6, spine)
		}
	}
	for i, t := range x.ticks {
		if !x.inside(t) {
			continue
		}
		px := x.pixel(t)
		if !x.bare[i] {
			d.Line(px, base, px, base+tickLength, spine)
		}
		if !x.spec.NoTickLabels {
			d.richText(px, base+tickLength+tickGap+sizeTick*0.85, x.labels[i],
				TextStyle{Size: sizeTick, Anchor: Middle, Color: x.colors[i], Bold: x.bare[i]})
		}
	}
	if x.spec.Label != "" {
		d.Text(a.X+a.W/2, base+xTickBlock+labelGap+sizeAxisLabel*0.8, x.spec.Label,
			TextStyle{Size: sizeAxisLabel, Anchor: Middle})
	}
}

func (p *Panel) drawYTicks(spine Stroke) {
	d, a, y := p.d, p.area, p.y
	for _, t := range y.minor {
		if y.inside(t) {
			d.Line(a.X-tickLength*0.6, y.pixel(t), a.X, y.pixel(t), spine)
		}
	}
	for i, t := range y.ticks {
		if !y.inside(t) {
			continue
		}
		py := y.pixel(t)
		if !y.bare[i] {
			d.Line(a.X-tickLength, py, a.X, py, spine)
		}
		if !y.spec.NoTickLabels {
			d.richText(a.X-tickLength-tickGap, py+sizeTick*0.35, y.labels[i],
				TextStyle{Size: sizeTick, Anchor: End, Color: y.colors[i], Bold: y.bare[i]})
		}
	}
	if y.spec.Label != "" {
		x := a.X - tickLength - tickGap - y.widestLabel() - labelGap - 2
		d.Text(x, a.Y+a.H/2, y.spec.Label, TextStyle{Size: sizeAxisLabel, Anchor: Middle, Rotate: -90})
	}
}
