package plot

import (
	"bytes"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
)

// Document is one SVG figure under construction: a canvas of a fixed
// size in pixels, x to the right and y down, painted in the order of the
// calls. Create one with New, draw on it directly or through panels,
// colour bars and lattice views, then write it with WriteTo.
//
// A Document records the first error met while drawing (a non-finite
// number, data outside a log axis, a malformed lattice); later calls
// still return but add nothing that WriteTo would write, since WriteTo
// then writes nothing and returns that error. Methods are not safe for
// concurrent use.
type Document struct {
	width, height float64
	title         string
	body          bytes.Buffer
	err           error
	ids           int // counter for clip-path and gradient ids
	depth         int // open groups
}

// New starts a document of width x height pixels on the house paper,
// with a title that viewers show as its name (it is not drawn; see
// Heading). New panics if a size is not positive and finite.
func New(width, height float64, title string) *Document {
	if !(width > 0 && height > 0) || math.IsInf(width, 0) || math.IsInf(height, 0) {
		panic(fmt.Sprintf("plot: document size %v x %v", width, height))
	}
	d := &Document{width: width, height: height, title: title}
	d.Rect(Rect{0, 0, width, height}, &Fill{Color: paperColor}, Stroke{})
	return d
}

// Width and Height return the document's size in pixels.
func (d *Document) Width() float64  { return d.width }
func (d *Document) Height() float64 { return d.height }

// Err returns the first error met while drawing, or nil.
func (d *Document) Err() error { return d.err }

// fail records the first error.
func (d *Document) fail(err error) {
	if d.err == nil {
		d.err = err
	}
}

func (d *Document) failf(format string, args ...any) {
	d.fail(fmt.Errorf("plot: "+format, args...))
}

// WriteTo writes the finished document to w. If drawing met an error it
// writes nothing and returns that error. The output is a function of the
// calls alone: the same calls give the same bytes.
func (d *Document) WriteTo(w io.Writer) (int64, error) {
	if d.depth != 0 {
		panic("plot: WriteTo inside an open group")
	}
	if d.err != nil {
		return 0, d.err
	}
	var head bytes.Buffer
	e := elem{d: d, b: &head, name: "svg"}
	head.WriteString("<svg")
	e.str("xmlns", "http://www.w3.org/2000/svg").num("width", d.width).num("height", d.height).
		str("viewBox", "0 0 "+mustNumber(d.width)+" "+mustNumber(d.height)).
		str("font-family", fontFamily)
	head.WriteString(">\n<title>")
	escapeText(&head, d.title)
	head.WriteString("</title>\n")
	n, err := w.Write(head.Bytes())
	total := int64(n)
	if err != nil {
		return total, err
	}
	n, err = w.Write(d.body.Bytes())
	total += int64(n)
	if err != nil {
		return total, err
	}
	n, err = io.WriteString(w, "</svg>\n")
	return total + int64(n), err
}

func mustNumber(v float64) string {
	s, _ := formatNumber(v)
	return s
}

// escapeText writes s escaped for XML character data and attribute
// values; characters XML 1.0 cannot carry become U+FFFD.
func escapeText(b *bytes.Buffer, s string) {
	if err := xml.EscapeText(b, []byte(s)); err != nil {
		panic(err) // a bytes.Buffer does not fail
	}
}

// Rect is a rectangle in pixels: top-left corner (X, Y), width W and
// height H.
type Rect struct{ X, Y, W, H float64 }

// Inset returns r shrunk by m on every side.
func (r Rect) Inset(m float64) Rect { return Rect{r.X + m, r.Y + m, r.W - 2*m, r.H - 2*m} }

// Grid divides r into rows x cols cells with gaps between them, listed
// row by row from the upper left. It panics unless rows and cols are
// positive.
func (r Rect) Grid(rows, cols int, gapX, gapY float64) []Rect {
	if rows <= 0 || cols <= 0 {
		panic(fmt.Sprintf("plot: grid of %d x %d cells", rows, cols))
	}
	w := (r.W - float64(cols-1)*gapX) / float64(cols)
	h := (r.H - float64(rows-1)*gapY) / float64(rows)
	out := make([]Rect, 0, rows*cols)
	for i := range rows {
		for j := range cols {
			out = append(out, Rect{r.X + float64(j)*(w+gapX), r.Y + float64(i)*(h+gapY), w, h})
		}
	}
	return out
}

// Right and Bottom return the far edges.
func (r Rect) Right() float64  { return r.X + r.W }
func (r Rect) Bottom() float64 { return r.Y + r.H }

// Stroke is how a line or an outline is drawn. A Stroke of Width 0 (the
// zero value) draws nothing. The zero Color stands for the house ink.
type Stroke struct {
	Color Color
	Width float64   // in pixels
	Dash  []float64 // on-off lengths in pixels; nil draws a solid line
	Alpha float64   // opacity in (0, 1]; 0, the zero value, means opaque
}

// Fill is how the inside of a shape is painted; a nil *Fill leaves it
// empty. The zero Color stands for the house ink.
type Fill struct {
	Color Color
	Alpha float64 // opacity in (0, 1]; 0, the zero value, means opaque
}

// ink resolves the zero colour to the house ink.
func ink(c Color) Color {
	if c == (Color{}) {
		return inkColor
	}
	return c
}

// elem writes one element's attributes, checking every number.
type elem struct {
	d    *Document
	b    *bytes.Buffer
	name string
}

// open starts an element in the document's body.
func (d *Document) open(name string) elem {
	d.body.WriteString("<" + name)
	return elem{d: d, b: &d.body, name: name}
}

func (e elem) num(attr string, v float64) elem { return e.nums(attr, []float64{v}, "") }

// nums writes a list of numbers separated by sep (points, dash arrays).
func (e elem) nums(attr string, vs []float64, sep string) elem {
	e.b.WriteString(" " + attr + `="`)
	e.list(attr, vs, sep)
	e.b.WriteString(`"`)
	return e
}

// transform writes transform="fn(v0 v1 ...)".
func (e elem) transform(fn string, vs ...float64) elem {
	e.b.WriteString(` transform="` + fn + "(")
	e.list("transform", vs, " ")
	e.b.WriteString(`)"`)
	return e
}

func (e elem) list(attr string, vs []float64, sep string) {
	for i, v := range vs {
		s, ok := formatNumber(v)
		if !ok {
			e.d.failf("%s attribute %s: non-finite value %v", e.name, attr, v)
			s = "0"
		}
		if i > 0 {
			e.b.WriteString(sep)
		}
		e.b.WriteString(s)
	}
}

func (e elem) str(attr, v string) elem {
	e.b.WriteString(" " + attr + `="`)
	escapeText(e.b, v)
	e.b.WriteString(`"`)
	return e
}

func (e elem) alpha(attr string, a float64) elem {
	if a > 0 && a < 1 {
		e.b.WriteString(" " + attr + `="` + strconv.FormatFloat(a, 'f', 3, 64) + `"`)
	} else if math.IsNaN(a) || a < 0 || a > 1 {
		e.d.failf("%s attribute %s: opacity %v outside [0, 1]", e.name, attr, a)
	}
	return e
}

func (e elem) stroke(s Stroke) elem {
	if !(s.Width > 0) {
		if s.Width != 0 {
			e.d.failf("%s: stroke width %v", e.name, s.Width)
		}
		return e.str("stroke", "none")
	}
	e.str("stroke", ink(s.Color).Hex()).num("stroke-width", s.Width)
	if len(s.Dash) > 0 {
		e.nums("stroke-dasharray", s.Dash, " ")
	}
	return e.alpha("stroke-opacity", s.Alpha)
}

func (e elem) fill(f *Fill) elem {
	if f == nil {
		return e.str("fill", "none")
	}
	return e.str("fill", ink(f.Color).Hex()).alpha("fill-opacity", f.Alpha)
}

// close ends an empty element.
func (e elem) close() { e.b.WriteString("/>\n") }

// text ends the element with escaped character data.
func (e elem) text(s string) {
	e.b.WriteString(">")
	escapeText(e.b, s)
	e.b.WriteString("</" + e.name + ">\n")
}

// group opens a <g> with the attributes written by attrs; endGroup
// closes it.
func (d *Document) group(attrs func(e elem)) {
	e := d.open("g")
	if attrs != nil {
		attrs(e)
	}
	d.body.WriteString(">\n")
	d.depth++
}

func (d *Document) endGroup() {
	if d.depth == 0 {
		panic("plot: endGroup without group")
	}
	d.depth--
	d.body.WriteString("</g>\n")
}

// newID returns a document-unique id for a clip path or gradient.
func (d *Document) newID(kind string) string {
	d.ids++
	return "wf-" + kind + strconv.Itoa(d.ids)
}

// clipPath defines a rectangular clip path and returns its id.
func (d *Document) clipPath(r Rect) string {
	id := d.newID("clip")
	d.body.WriteString(`<clipPath id="` + id + `">`)
	d.open("rect").num("x", r.X).num("y", r.Y).num("width", math.Max(r.W, 0)).num("height", math.Max(r.H, 0)).close()
	d.body.WriteString("</clipPath>\n")
	return id
}

// Clip runs draw with everything it paints confined to r.
func (d *Document) Clip(r Rect, draw func()) {
	d.clipped(d.clipPath(r), draw)
}

func (d *Document) clipped(id string, draw func()) {
	d.group(func(e elem) { e.str("clip-path", "url(#"+id+")") })
	draw()
	d.endGroup()
}

// Line draws a straight segment.
func (d *Document) Line(x1, y1, x2, y2 float64, s Stroke) {
	if s.Width == 0 {
		return
	}
	d.open("line").num("x1", x1).num("y1", y1).num("x2", x2).num("y2", y2).stroke(s).str("stroke-linecap", "round").close()
}

// Polyline draws connected segments through the points (xs[i], ys[i]).
// It panics if the slices differ in length.
func (d *Document) Polyline(xs, ys []float64, s Stroke) {
	if len(xs) != len(ys) {
		panic("plot: Polyline: slices of different length")
	}
	if s.Width == 0 || len(xs) < 2 {
		return
	}
	d.open("polyline").nums("points", interleave(xs, ys), " ").fill(nil).stroke(s).
		str("stroke-linejoin", "round").str("stroke-linecap", "round").close()
}

// Polygon draws a closed shape through the points.
func (d *Document) Polygon(xs, ys []float64, f *Fill, s Stroke) {
	if len(xs) != len(ys) {
		panic("plot: Polygon: slices of different length")
	}
	if len(xs) < 3 {
		return
	}
	d.open("polygon").nums("points", interleave(xs, ys), " ").fill(f).stroke(s).str("stroke-linejoin", "round").close()
}

// interleave returns x0, y0, x1, y1, ... for a points attribute.
func interleave(xs, ys []float64) []float64 {
	out := make([]float64, 0, 2*len(xs))
	for i := range xs {
		out = append(out, xs[i], ys[i])
	}
	return out
}

// Rect draws a rectangle; negative sizes are drawn as empty.
func (d *Document) Rect(r Rect, f *Fill, s Stroke) {
	d.open("rect").num("x", r.X).num("y", r.Y).num("width", math.Max(r.W, 0)).num("height", math.Max(r.H, 0)).fill(f).stroke(s).close()
}

// Circle draws a circle of radius r about (x, y).
func (d *Document) Circle(x, y, r float64, f *Fill, s Stroke) {
	d.open("circle").num("cx", x).num("cy", y).num("r", math.Max(r, 0)).fill(f).stroke(s).close()
}

// errNonFinite is wrapped by the errors about non-finite input data.
var errNonFinite = errors.New("non-finite value")
