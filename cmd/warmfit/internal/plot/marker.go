package plot

import (
	"fmt"
	"math"
)

// Shape is the outline of a point marker.
type Shape int

const (
	Circle Shape = iota // the zero value
	Square
	Diamond
	TriangleUp
	TriangleDown
	Hexagon
)

// String returns the shape's name: "circle", "square", ...
func (s Shape) String() string {
	switch s {
	case Circle:
		return "circle"
	case Square:
		return "square"
	case Diamond:
		return "diamond"
	case TriangleUp:
		return "triangle-up"
	case TriangleDown:
		return "triangle-down"
	case Hexagon:
		return "hexagon"
	}
	return fmt.Sprintf("Shape(%d)", int(s))
}

// MarkerStyle is how a data point is drawn: a filled shape outlined in a
// darker shade of its fill, so that markers stay visible on light
// grounds and where they overlap.
type MarkerStyle struct {
	Shape Shape
	Color Color   // the zero Color stands for the house ink
	Size  float64 // radius in pixels; 0 means the house marker size
}

func (m MarkerStyle) radius() float64 {
	if m.Size == 0 {
		return markerRadius
	}
	return m.Size
}

// Marker draws one point marker centred on (x, y).
func (d *Document) Marker(x, y float64, m MarkerStyle) {
	r := m.radius()
	fill := ink(m.Color)
	f := &Fill{Color: fill}
	edge := Stroke{Color: fill.shade(outlineShade), Width: markerOutline}
	// Polygons are scaled to the circle's area, so that no shape looks
	// heavier than another at the same size.
	switch m.Shape {
	case Circle:
		d.Circle(x, y, r, f, edge)
	case Square:
		d.regular(x, y, r*math.Sqrt(math.Pi/2), 4, 45, f, edge)
	case Diamond:
		d.regular(x, y, r*1.25, 4, 0, f, edge)
	case TriangleUp:
		d.regular(x, y, r*1.56, 3, 0, f, edge)
	case TriangleDown:
		d.regular(x, y, r*1.56, 3, 180, f, edge)
	case Hexagon:
		d.regular(x, y, r*1.10, 6, 0, f, edge)
	default:
		panic(fmt.Sprintf("plot: unknown marker shape %d", int(m.Shape)))
	}
}

// regular draws a regular polygon of n corners on a circle of radius r,
// the first corner rot degrees clockwise from straight up.
func (d *Document) regular(x, y, r float64, n int, rot float64, f *Fill, s Stroke) {
	xs, ys := make([]float64, n), make([]float64, n)
	for k := range n {
		a := (rot + 360*float64(k)/float64(n)) * math.Pi / 180
		xs[k], ys[k] = x+r*math.Sin(a), y-r*math.Cos(a)
	}
	d.Polygon(xs, ys, f, s)
}
