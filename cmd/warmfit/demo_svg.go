package main

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// A small SVG plotting kit for the demo's figures: a canvas, panels with
// linear axes and tick marks at "nice" numbers, markers, error bars,
// lines, filled bands and a legend. Coordinates on the canvas are pixels
// with y pointing down; a panel maps data coordinates into its box.

// svgCanvas accumulates the elements of one SVG document.
type svgCanvas struct {
	w, h  float64
	b     strings.Builder
	clips int
}

func newSVGCanvas(w, h float64) *svgCanvas {
	c := &svgCanvas{w: w, h: h}
	fmt.Fprintf(&c.b, `<svg xmlns="http://www.w3.org/2000/svg" width="%s" height="%s" viewBox="0 0 %s %s" font-family="Helvetica, Arial, sans-serif">`+"\n",
		svgNum(w), svgNum(h), svgNum(w), svgNum(h))
	fmt.Fprintf(&c.b, `<rect x="0" y="0" width="%s" height="%s" fill="white"/>`+"\n", svgNum(w), svgNum(h))
	return c
}

// WriteTo finishes the document and writes it.
func (c *svgCanvas) WriteTo(w io.Writer) (int64, error) {
	n, err := io.WriteString(w, c.b.String()+"</svg>\n")
	return int64(n), err
}

// svgNum formats a pixel coordinate compactly; non-finite values (which
// would make the document invalid) are a programming error upstream and
// are drawn at 0.
func svgNum(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "0"
	}
	return strconv.FormatFloat(math.Round(v*100)/100, 'f', -1, 64)
}

var svgEscaper = strings.NewReplacer("&", "&amp;", "<", "&lt;", ">", "&gt;", `"`, "&quot;")

func svgEscape(s string) string { return svgEscaper.Replace(s) }

// svgStyle is the paint of one element.
type svgStyle struct {
	Stroke  string
	Width   float64
	Fill    string // "" means none
	Dash    string // stroke-dasharray, "" for solid
	Opacity float64
}

func (s svgStyle) attrs() string {
	var b strings.Builder
	fill := s.Fill
	if fill == "" {
		fill = "none"
	}
	fmt.Fprintf(&b, ` fill="%s"`, fill)
	if s.Stroke != "" {
		fmt.Fprintf(&b, ` stroke="%s" stroke-width="%s"`, s.Stroke, svgNum(s.Width))
	}
	if s.Dash != "" {
		fmt.Fprintf(&b, ` stroke-dasharray="%s"`, s.Dash)
	}
	if s.Opacity > 0 && s.Opacity < 1 {
		fmt.Fprintf(&b, ` opacity="%s"`, strconv.FormatFloat(s.Opacity, 'f', 2, 64))
	}
	return b.String()
}

func (c *svgCanvas) line(x1, y1, x2, y2 float64, s svgStyle) {
	fmt.Fprintf(&c.b, `<line x1="%s" y1="%s" x2="%s" y2="%s"%s stroke-linecap="round"/>`+"\n",
		svgNum(x1), svgNum(y1), svgNum(x2), svgNum(y2), s.attrs())
}

func (c *svgCanvas) rect(x, y, w, h float64, s svgStyle) {
	fmt.Fprintf(&c.b, `<rect x="%s" y="%s" width="%s" height="%s"%s/>`+"\n",
		svgNum(x), svgNum(y), svgNum(math.Max(w, 0)), svgNum(math.Max(h, 0)), s.attrs())
}

func (c *svgCanvas) circle(x, y, r float64, s svgStyle) {
	fmt.Fprintf(&c.b, `<circle cx="%s" cy="%s" r="%s"%s/>`+"\n", svgNum(x), svgNum(y), svgNum(r), s.attrs())
}

// polyline draws connected points; a break in the data is marked by a
// NaN coordinate and starts a new piece.
func (c *svgCanvas) polyline(xs, ys []float64, s svgStyle) {
	var pts []string
	flush := func() {
		if len(pts) > 1 {
			fmt.Fprintf(&c.b, `<polyline points="%s"%s stroke-linejoin="round"/>`+"\n", strings.Join(pts, " "), s.attrs())
		}
		pts = pts[:0]
	}
	for i := range xs {
		if math.IsNaN(xs[i]) || math.IsNaN(ys[i]) {
			flush()
			continue
		}
		pts = append(pts, svgNum(xs[i])+","+svgNum(ys[i]))
	}
	flush()
}

// textOpt places a label.
type textOpt struct {
	Size   float64
	Anchor string // start, middle, end
	Color  string
	Bold   bool
	Rotate float64 // degrees, about the anchor point
	Italic bool
}

func (c *svgCanvas) text(x, y float64, s string, o textOpt) {
	if o.Size == 0 {
		o.Size = 12
	}
	if o.Anchor == "" {
		o.Anchor = "start"
	}
	if o.Color == "" {
		o.Color = "#222"
	}
	extra := ""
	if o.Bold {
		extra += ` font-weight="bold"`
	}
	if o.Italic {
		extra += ` font-style="italic"`
	}
	if o.Rotate != 0 {
		extra += fmt.Sprintf(` transform="rotate(%s %s %s)"`, svgNum(o.Rotate), svgNum(x), svgNum(y))
	}
	fmt.Fprintf(&c.b, `<text x="%s" y="%s" font-size="%s" text-anchor="%s" fill="%s"%s>%s</text>`+"\n",
		svgNum(x), svgNum(y), svgNum(o.Size), o.Anchor, o.Color, extra, svgEscape(s))
}

// clipTo starts a group clipped to a rectangle; endGroup closes it.
func (c *svgCanvas) clipTo(x, y, w, h float64) {
	c.clips++
	id := fmt.Sprintf("clip%d", c.clips)
	fmt.Fprintf(&c.b, `<clipPath id="%s"><rect x="%s" y="%s" width="%s" height="%s"/></clipPath>`+"\n",
		id, svgNum(x), svgNum(y), svgNum(w), svgNum(h))
	fmt.Fprintf(&c.b, `<g clip-path="url(#%s)">`+"\n", id)
}

func (c *svgCanvas) endGroup() { c.b.WriteString("</g>\n") }

// marker draws a point symbol: "circle", "square", "diamond" or
// "triangle", filled with the colour, outlined darker for contrast.
func (c *svgCanvas) marker(x, y, r float64, shape, color string) {
	s := svgStyle{Fill: color, Stroke: "#333", Width: 0.5}
	switch shape {
	case "square":
		c.rect(x-r*0.9, y-r*0.9, 1.8*r, 1.8*r, s)
	case "diamond":
		fmt.Fprintf(&c.b, `<polygon points="%s,%s %s,%s %s,%s %s,%s"%s/>`+"\n",
			svgNum(x), svgNum(y-1.25*r), svgNum(x+1.25*r), svgNum(y), svgNum(x), svgNum(y+1.25*r), svgNum(x-1.25*r), svgNum(y), s.attrs())
	case "triangle":
		fmt.Fprintf(&c.b, `<polygon points="%s,%s %s,%s %s,%s"%s/>`+"\n",
			svgNum(x), svgNum(y-1.3*r), svgNum(x+1.15*r), svgNum(y+0.75*r), svgNum(x-1.15*r), svgNum(y+0.75*r), s.attrs())
	default:
		c.circle(x, y, r, s)
	}
}

// niceStep returns a step of the form {1, 2, 2.5, 5} x 10^k close to
// span/target, the usual choice for readable tick labels.
func niceStep(span float64, target int) float64 {
	if !(span > 0) || math.IsInf(span, 0) {
		return 1
	}
	raw := span / float64(max(target, 1))
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, m := range []float64{1, 2, 2.5, 5, 10} {
		if raw <= m*mag*1.0000001 {
			return m * mag
		}
	}
	return 10 * mag
}

// niceTicks returns the multiples of a nice step inside [lo, hi].
func niceTicks(lo, hi float64, target int) (ticks []float64, step float64) {
	step = niceStep(hi-lo, target)
	first := math.Ceil(lo/step-1e-9) * step
	for v := first; v <= hi+step*1e-9; v += step {
		// Snap to the grid so that 0 prints as 0, not 1e-17.
		t := math.Round(v/step) * step
		ticks = append(ticks, t)
		if len(ticks) > 100 {
			break
		}
	}
	return ticks, step
}

// niceRange widens [lo, hi] outward to multiples of the nice step.
func niceRange(lo, hi float64, target int) (float64, float64) {
	if !(hi > lo) {
		d := math.Max(math.Abs(lo)*0.1, 1e-3)
		lo, hi = lo-d, hi+d
	}
	step := niceStep(hi-lo, target)
	return math.Floor(lo/step+1e-9) * step, math.Ceil(hi/step-1e-9) * step
}

// tickLabel prints a tick value with as many decimals as the step needs.
func tickLabel(v, step float64) string {
	if v == 0 {
		return "0"
	}
	dec := 0
	if step < 1 {
		dec = int(math.Ceil(-math.Log10(step) - 1e-9))
		// Steps like 0.25 need one digit more than their magnitude.
		if math.Abs(step*math.Pow(10, float64(dec))-math.Round(step*math.Pow(10, float64(dec)))) > 1e-6 {
			dec++
		}
	}
	s := strconv.FormatFloat(v, 'f', dec, 64)
	return strings.Replace(s, "-", "\u2212", 1)
}

// plotPanel is one set of axes in a box of the canvas.
type plotPanel struct {
	c                      *svgCanvas
	x, y, w, h             float64 // the plotting box in pixels
	xmin, xmax, ymin, ymax float64
	xticks, yticks         []float64
	xstep, ystep           float64
	// noXLabels suppresses the numbers under the x ticks (for axes whose
	// positions are categories labelled by the caller).
	noXLabels bool
}

// newPanel sets up axes on the box with the given data ranges, widened to
// nice numbers.
func newPanel(c *svgCanvas, x, y, w, h, xmin, xmax, ymin, ymax float64) *plotPanel {
	p := &plotPanel{c: c, x: x, y: y, w: w, h: h}
	p.setX(xmin, xmax, true)
	p.setY(ymin, ymax, true)
	return p
}

func (p *plotPanel) setX(lo, hi float64, widen bool) {
	n := max(3, int(p.w/90))
	if widen {
		lo, hi = niceRange(lo, hi, n)
	}
	p.xmin, p.xmax = lo, hi
	p.xticks, p.xstep = niceTicks(lo, hi, n)
}

func (p *plotPanel) setY(lo, hi float64, widen bool) {
	n := max(3, int(p.h/55))
	if widen {
		lo, hi = niceRange(lo, hi, n)
	}
	p.ymin, p.ymax = lo, hi
	p.yticks, p.ystep = niceTicks(lo, hi, n)
}

// X and Y map data coordinates to pixels.
func (p *plotPanel) X(v float64) float64 { return p.x + (v-p.xmin)/(p.xmax-p.xmin)*p.w }
func (p *plotPanel) Y(v float64) float64 { return p.y + p.h - (v-p.ymin)/(p.ymax-p.ymin)*p.h }

// frame draws the light grid, the box, the ticks with their labels and
// the axis labels.
func (p *plotPanel) frame(xlabel, ylabel string) {
	c := p.c
	grid := svgStyle{Stroke: "#e4e4e4", Width: 0.8}
	for _, t := range p.xticks {
		c.line(p.X(t), p.y, p.X(t), p.y+p.h, grid)
	}
	for _, t := range p.yticks {
		c.line(p.x, p.Y(t), p.x+p.w, p.Y(t), grid)
	}
	c.rect(p.x, p.y, p.w, p.h, svgStyle{Stroke: "#444", Width: 1})
	tick := svgStyle{Stroke: "#444", Width: 1}
	for _, t := range p.xticks {
		c.line(p.X(t), p.y+p.h, p.X(t), p.y+p.h+5, tick)
		if !p.noXLabels {
			c.text(p.X(t), p.y+p.h+18, tickLabel(t, p.xstep), textOpt{Size: 11, Anchor: "middle"})
		}
	}
	for _, t := range p.yticks {
		c.line(p.x-5, p.Y(t), p.x, p.Y(t), tick)
		c.text(p.x-8, p.Y(t)+4, tickLabel(t, p.ystep), textOpt{Size: 11, Anchor: "end"})
	}
	if xlabel != "" {
		c.text(p.x+p.w/2, p.y+p.h+38, xlabel, textOpt{Size: 13, Anchor: "middle"})
	}
	if ylabel != "" {
		c.text(p.x-p.yLabelOffset(), p.y+p.h/2, ylabel, textOpt{Size: 13, Anchor: "middle", Rotate: -90})
	}
}

// yLabelOffset keeps the rotated y label clear of the widest tick label.
func (p *plotPanel) yLabelOffset() float64 {
	widest := 0
	for _, t := range p.yticks {
		widest = max(widest, len([]rune(tickLabel(t, p.ystep))))
	}
	return 18 + 6.5*float64(widest)
}

// title writes a panel heading above the box.
func (p *plotPanel) title(s string) {
	p.c.text(p.x, p.y-10, s, textOpt{Size: 14, Bold: true})
}

// clip confines what follows to the plotting box (end with c.endGroup).
func (p *plotPanel) clip() { p.c.clipTo(p.x, p.y, p.w, p.h) }

// curve draws y(x) in data coordinates.
func (p *plotPanel) curve(xs, ys []float64, s svgStyle) {
	px := make([]float64, len(xs))
	py := make([]float64, len(ys))
	for i := range xs {
		px[i], py[i] = p.X(xs[i]), p.Y(ys[i])
	}
	p.c.polyline(px, py, s)
}

// legendEntry is one line of a legend: a marker, a line sample or a
// filled swatch.
type legendEntry struct {
	Label  string
	Color  string
	Shape  string   // marker shape, or "" for none
	Line   svgStyle // drawn when Line.Stroke is set
	Swatch string   // fill colour of a box, when set
}

// legend draws the entries in a framed box; corner is "tl", "tr", "bl" or
// "br" inside the panel.
func (p *plotPanel) legend(corner string, entries []legendEntry) {
	bx, by, bw, bh := p.legendBox(corner, entries)
	p.drawLegend(bx, by, bw, bh, entries)
}

// legendAvoiding puts the legend in the corner that covers the fewest of
// the given data points.
func (p *plotPanel) legendAvoiding(xs, ys []float64, entries []legendEntry) {
	best, bestN := "tl", math.MaxInt
	for _, corner := range []string{"tr", "tl", "br", "bl"} {
		bx, by, bw, bh := p.legendBox(corner, entries)
		n := 0
		for i := range xs {
			px, py := p.X(xs[i]), p.Y(ys[i])
			if px >= bx-4 && px <= bx+bw+4 && py >= by-4 && py <= by+bh+4 {
				n++
			}
		}
		if n < bestN {
			best, bestN = corner, n
		}
	}
	p.legend(best, entries)
}

const legendLineH, legendPad, legendSample = 17.0, 7.0, 26.0

func (p *plotPanel) legendBox(corner string, entries []legendEntry) (bx, by, bw, bh float64) {
	width := 0.0
	for _, e := range entries {
		width = math.Max(width, 6.3*float64(len([]rune(e.Label))))
	}
	bw = legendPad*2 + legendSample + 6 + width
	bh = legendPad*2 + legendLineH*float64(len(entries)) - 4
	bx, by = p.x+8, p.y+8
	if strings.Contains(corner, "r") {
		bx = p.x + p.w - bw - 8
	}
	if strings.Contains(corner, "b") {
		by = p.y + p.h - bh - 8
	}
	return bx, by, bw, bh
}

func (p *plotPanel) drawLegend(bx, by, bw, bh float64, entries []legendEntry) {
	const lineH, pad, sample = legendLineH, legendPad, legendSample
	c := p.c
	c.rect(bx, by, bw, bh, svgStyle{Fill: "white", Stroke: "#999", Width: 0.8, Opacity: 0.92})
	for i, e := range entries {
		cy := by + pad + lineH*float64(i) + 6
		sx := bx + pad
		if e.Swatch != "" {
			c.rect(sx+2, cy-6, sample-4, 12, svgStyle{Fill: e.Swatch, Stroke: "#888", Width: 0.5})
		}
		if e.Line.Stroke != "" {
			c.line(sx, cy, sx+sample, cy, e.Line)
		}
		if e.Shape != "" {
			c.marker(sx+sample/2, cy, 4, e.Shape, e.Color)
		}
		c.text(sx+sample+6, cy+4, e.Label, textOpt{Size: 11})
	}
}

// divergingColor maps v in [-1, 1] to a blue-white-red scale (negative
// blue, positive red); values beyond are clamped.
func divergingColor(v float64) string {
	v = math.Max(-1, math.Min(1, v))
	type rgb struct{ r, g, b float64 }
	neg := rgb{33, 102, 172}
	mid := rgb{247, 247, 247}
	pos := rgb{178, 24, 43}
	end := pos
	if v < 0 {
		end, v = neg, -v
	}
	mix := func(a, b float64) int { return int(math.Round(a + (b-a)*v)) }
	return fmt.Sprintf("#%02x%02x%02x", mix(mid.r, end.r), mix(mid.g, end.g), mix(mid.b, end.b))
}

// sequentialColor maps v in [0, 1] to a white-to-dark scale.
func sequentialColor(v float64) string {
	v = math.Max(0, math.Min(1, v))
	type rgb struct{ r, g, b float64 }
	lo := rgb{255, 247, 236}
	mid := rgb{252, 141, 89}
	hi := rgb{127, 0, 0}
	a, b, t := lo, mid, 2*v
	if v > 0.5 {
		a, b, t = mid, hi, 2*v-1
	}
	mix := func(x, y float64) int { return int(math.Round(x + (y-x)*t)) }
	return fmt.Sprintf("#%02x%02x%02x", mix(a.r, b.r), mix(a.g, b.g), mix(a.b, b.b))
}

// paletteColor maps t in [0, 1] to a perceptually ordered dark-blue to
// yellow scale, readable in grey print and for red-green colour
// blindness.
func paletteColor(t float64) string {
	t = math.Max(0, math.Min(1, t))
	anchors := [][3]float64{{45, 30, 110}, {40, 90, 150}, {35, 140, 140}, {90, 185, 100}, {240, 220, 60}}
	f := t * float64(len(anchors)-1)
	i := min(int(f), len(anchors)-2)
	u := f - float64(i)
	a, b := anchors[i], anchors[i+1]
	mix := func(x, y float64) int { return int(math.Round(x + (y-x)*u)) }
	return fmt.Sprintf("#%02x%02x%02x", mix(a[0], b[0]), mix(a[1], b[1]), mix(a[2], b[2]))
}

// colorBarH draws a horizontal colour scale from lo to hi at (x, y) with
// the label on its left.
func (c *svgCanvas) colorBarH(x, y, w, h, lo, hi float64, color func(t float64) string, label string) {
	const steps = 40
	for i := 0; i < steps; i++ {
		t0 := float64(i) / steps
		c.rect(x+w*t0, y, w/steps+0.6, h, svgStyle{Fill: color(t0 + 0.5/steps)})
	}
	c.rect(x, y, w, h, svgStyle{Stroke: "#444", Width: 0.8})
	ticks, step := niceTicks(lo, hi, 4)
	for _, t := range ticks {
		px := x + w*(t-lo)/(hi-lo)
		c.line(px, y+h, px, y+h+4, svgStyle{Stroke: "#444", Width: 0.8})
		c.text(px, y+h+15, tickLabel(t, step), textOpt{Size: 10.5, Anchor: "middle"})
	}
	c.text(x-8, y+h-1, label, textOpt{Size: 11.5, Anchor: "end"})
}

// colorBar draws a vertical colour scale from lo to hi at (x, y).
func (c *svgCanvas) colorBar(x, y, w, h, lo, hi float64, color func(t float64) string, label string) {
	const steps = 40
	for i := 0; i < steps; i++ {
		t0 := float64(i) / steps
		c.rect(x, y+h*(1-t0-1.0/steps), w, h/steps+0.6, svgStyle{Fill: color(t0 + 0.5/steps)})
	}
	c.rect(x, y, w, h, svgStyle{Stroke: "#444", Width: 0.8})
	ticks, step := niceTicks(lo, hi, 5)
	for _, t := range ticks {
		py := y + h*(1-(t-lo)/(hi-lo))
		c.line(x+w, py, x+w+4, py, svgStyle{Stroke: "#444", Width: 0.8})
		c.text(x+w+7, py+4, tickLabel(t, step), textOpt{Size: 10.5})
	}
	c.text(x+w/2, y-9, label, textOpt{Size: 11.5, Anchor: "middle"})
}
