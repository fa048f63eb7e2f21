package plot_test

import (
	"bytes"
	"fmt"
	"math"
	"strings"

	"warmfit/cmd/warmfit/internal/plot"
	"warmfit/lattice"
)

// A figure with one panel: a decaying signal on a log axis, its
// uncertainty band, the trusted range shaded and a legend placed where
// the data leave room.
func Example() {
	var ts, ys, lo, hi []float64
	for t := 0.0; t <= 5; t += 0.1 {
		y := math.Exp(-1.3 * t)
		ts, ys = append(ts, t), append(ys, y)
		lo, hi = append(lo, 0.8*y), append(hi, 1.25*y)
	}
	d := plot.New(520, 340, "decay")
	top := d.Heading("Decay of the invented signal", "")
	p := d.Panel(plot.Rect{X: 16, Y: top, W: 488, H: 340 - top - 8}, "signal against time",
		plot.Axis{Label: "time", Min: 0, Max: 5},
		plot.Axis{Label: "signal", Min: 1e-3, Max: 1, Log: true})
	p.ShadeX(0, 3, plot.Fill{Color: plot.Diverging.At(0.42), Alpha: 0.5})
	p.Band(ts, lo, hi, plot.Fill{Color: plot.Category(0), Alpha: 0.25})
	line := plot.Stroke{Color: plot.Category(0), Width: 1.7}
	p.Line(ts, ys, line)
	p.Legend(plot.LegendEntry{Label: "model", Line: line})

	var out bytes.Buffer
	if _, err := d.WriteTo(&out); err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(strings.HasPrefix(out.String(), "<svg"), strings.Count(out.String(), "<polyline"))
	// Output: true 1
}

// A non-finite value anywhere makes the document fail instead of
// writing a figure that lies.
func ExampleDocument_Err() {
	d := plot.New(300, 200, "broken")
	p := d.Panel(plot.Rect{W: 300, H: 200}, "energy", plot.Axis{Max: 1}, plot.Axis{Max: 1})
	p.Points([]float64{0.1, 0.2}, []float64{0.5, math.NaN()}, plot.MarkerStyle{})
	_, err := d.WriteTo(&bytes.Buffer{})
	fmt.Println(err)
	// Output: plot: panel "energy": points: y[1] = NaN: non-finite value
}

// Colour maps widen the data's range to nice numbers; a diverging map is
// symmetric about zero, which gets the scale's neutral centre.
func ExampleNewColorMap() {
	m, err := plot.NewColorMap(plot.Diverging, "pull", []float64{-1.7, 0.4, 2.3})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(m.Min, m.Max, m.At(m.Min), m.At(0), m.At(m.Max))
	s, _ := plot.NewColorMap(plot.Sequential, "coupling", []float64{0.83, 1.21})
	fmt.Println(s.Min, s.Max, s.At(s.Min), s.At(s.Max))
	// Output:
	// -2.5 2.5 #174c6d #f2f2f2 #69391f
	// 0.8 1.25 #e1f2f9 #42170c
}

// Every kind of Pauli term keeps one colour and shape in every figure.
func ExampleKindMarker() {
	for _, k := range []string{"XX", "YY", "ZZ", "X", "Y", "Z"} {
		m := plot.KindMarker(k)
		fmt.Println(k, m.Color, m.Shape)
	}
	// Output:
	// XX #5354d3 circle
	// YY #bd7706 square
	// ZZ #7e2408 diamond
	// X #2fa6bb triangle-up
	// Y #acc181 triangle-down
	// Z #815579 hexagon
}

// The stand-alone drawing of a lattice, as `warmfit lattice --svg`
// writes it.
func ExampleLatticeFigure() {
	l, err := lattice.Open("kagome:2x2:periodic")
	if err != nil {
		fmt.Println(err)
		return
	}
	var out bytes.Buffer
	if _, err := plot.LatticeFigure(plot.LatticeGeometry(l)).WriteTo(&out); err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(strings.Count(out.String(), "<circle"), "circles: 12 sites and a legend swatch for each of the 3 sublattices")
	// Output: 15 circles: 12 sites and a legend swatch for each of the 3 sublattices
}
