package plot

import (
	"bytes"
	"errors"
	"math"
	"strings"
	"testing"

	"warmfit/lattice"
)

func TestFormatNumber(t *testing.T) {
	for _, tt := range []struct {
		v    float64
		want string
		ok   bool
	}{
		{0, "0", true},
		{math.Copysign(0, -1), "0", true},
		{-0.001, "0", true},
		{3.14159, "3.14", true},
		{-2.5, "-2.5", true},
		{1e6, "1000000", true},
		{math.NaN(), "", false},
		{math.Inf(-1), "", false},
	} {
		if got, ok := formatNumber(tt.v); got != tt.want || ok != tt.ok {
			t.Errorf("formatNumber(%v) = %q, %v; want %q, %v", tt.v, got, ok, tt.want, tt.ok)
		}
	}
}

// Every way non-finite data can reach a document is an error of the
// document, and WriteTo then writes nothing.
func TestNonFiniteInputIsAnError(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	panel := func(d *Document) *Panel {
		return d.Panel(Rect{0, 0, 300, 200}, "p", Axis{Min: 0, Max: 1}, Axis{Min: 0, Max: 1})
	}
	logPanel := func(d *Document) *Panel {
		return d.Panel(Rect{0, 0, 300, 200}, "p", Axis{Min: 0, Max: 1}, Axis{Min: 1e-3, Max: 1, Log: true})
	}
	square, err := lattice.Open("square:3x3")
	if err != nil {
		t.Fatal(err)
	}
	smap := ColorMap{Scale: Sequential, Min: 0, Max: 1}
	for _, tt := range []struct {
		name      string
		draw      func(d *Document)
		nonFinite bool // the error wraps errNonFinite
	}{
		{"line", func(d *Document) { panel(d).Line([]float64{0, 1}, []float64{0, nan}, Stroke{Width: 1}) }, true},
		{"points", func(d *Document) { panel(d).Points([]float64{inf}, []float64{0}, MarkerStyle{}) }, true},
		{"error bars", func(d *Document) { panel(d).ErrorBars([]float64{0}, []float64{0}, []float64{nan}, Stroke{Width: 1}) }, true},
		{"negative error bar", func(d *Document) { panel(d).ErrorBars([]float64{0}, []float64{0}, []float64{-1}, Stroke{Width: 1}) }, false},
		{"band", func(d *Document) { panel(d).Band([]float64{0, 1}, []float64{0, 0}, []float64{1, inf}, Fill{}) }, true},
		{"bars", func(d *Document) { panel(d).Bars([]float64{0, 1}, []float64{nan}, Fill{}, Stroke{}) }, true},
		{"shade", func(d *Document) { panel(d).ShadeX(0, nan, Fill{}) }, true},
		{"reference line", func(d *Document) { panel(d).HLine(inf, Stroke{Width: 1}, "") }, true},
		{"annotation", func(d *Document) { panel(d).Annotate(nan, 0, 0, 0, "a", TextStyle{}) }, true},
		{"axis range", func(d *Document) { d.Panel(Rect{0, 0, 300, 200}, "p", Axis{Min: 0, Max: nan}, Axis{Max: 1}) }, true},
		{"reversed axis", func(d *Document) { d.Panel(Rect{0, 0, 300, 200}, "p", Axis{Min: 1, Max: 0}, Axis{Max: 1}) }, false},
		{"log axis range", func(d *Document) { d.Panel(Rect{0, 0, 300, 200}, "p", Axis{Max: 1}, Axis{Min: 0, Max: 1, Log: true}) }, false},
		{"zero on a log axis", func(d *Document) { logPanel(d).Points([]float64{0.5}, []float64{0}, MarkerStyle{}) }, false},
		{"tick", func(d *Document) {
			d.Panel(Rect{0, 0, 300, 200}, "p", Axis{Max: 1, Ticks: []Tick{{Value: nan}}}, Axis{Max: 1})
		}, true},
		{"text", func(d *Document) { d.Text(nan, 10, "a", TextStyle{}) }, false},
		{"rotated text", func(d *Document) { d.Text(10, 10, "a", TextStyle{Rotate: inf}) }, false},
		{"marker", func(d *Document) { d.Marker(10, inf, MarkerStyle{Shape: Hexagon}) }, false},
		{"line width", func(d *Document) { d.Line(0, 0, 1, 1, Stroke{Width: nan}) }, false},
		{"opacity", func(d *Document) { d.Rect(Rect{0, 0, 1, 1}, &Fill{Alpha: nan}, Stroke{}) }, false},
		{"colour bar", func(d *Document) { d.ColorBar(Rect{0, 0, 100, 10}, ColorMap{Scale: Sequential, Min: 0, Max: inf}) }, false},
		{"lattice coordinate", func(d *Document) {
			d.Lattice(Rect{0, 0, 100, 100}, Geometry{Coords: [][]float64{{0, 0}, {nan, 0}}}, LatticeLayers{})
		}, true},
		{"site value", func(d *Document) {
			d.Lattice(Rect{0, 0, 100, 100}, LatticeGeometry(square), LatticeLayers{SiteValues: map[int]float64{2: inf}, SiteMap: smap})
		}, true},
		{"bond value", func(d *Document) {
			d.Lattice(Rect{0, 0, 100, 100}, LatticeGeometry(square), LatticeLayers{BondValues: map[lattice.Bond]float64{{I: 0, J: 1}: nan}, BondMap: smap})
		}, true},
		{"site value beyond the lattice", func(d *Document) {
			d.Lattice(Rect{0, 0, 100, 100}, LatticeGeometry(square), LatticeLayers{SiteValues: map[int]float64{9: 1}, SiteMap: smap})
		}, false},
		{"value of a bond not in the lattice", func(d *Document) {
			d.Lattice(Rect{0, 0, 100, 100}, LatticeGeometry(square), LatticeLayers{BondValues: map[lattice.Bond]float64{{I: 1, J: 0}: 1}, BondMap: smap})
		}, false},
		{"values without a map", func(d *Document) {
			d.Lattice(Rect{0, 0, 100, 100}, LatticeGeometry(square), LatticeLayers{SiteValues: map[int]float64{0: 1}})
		}, false},
		{"bond beyond the sites", func(d *Document) {
			d.Lattice(Rect{0, 0, 100, 100}, Geometry{Coords: [][]float64{{0, 0}, {1, 0}}, NN: []lattice.Bond{{I: 0, J: 2}}}, LatticeLayers{})
		}, false},
		{"outline of a missing site", func(d *Document) {
			d.Lattice(Rect{0, 0, 100, 100}, LatticeGeometry(square), LatticeLayers{}).Outline([]int{0, 12}, "")
		}, false},
	} {
		d := New(400, 300, tt.name)
		tt.draw(d)
		// Drawing goes on after the error without a panic.
		panel(d).Line([]float64{0, 1}, []float64{0, 1}, Stroke{Width: 1})
		if d.Err() == nil {
			t.Errorf("%s: no error", tt.name)
			continue
		}
		if tt.nonFinite && !errors.Is(d.Err(), errNonFinite) {
			t.Errorf("%s: error %q does not say the value was not finite", tt.name, d.Err())
		}
		if !strings.HasPrefix(d.Err().Error(), "plot: ") {
			t.Errorf("%s: error %q lacks the package prefix", tt.name, d.Err())
		}
		var b bytes.Buffer
		if n, err := d.WriteTo(&b); err == nil || n != 0 || b.Len() != 0 {
			t.Errorf("%s: WriteTo wrote %d bytes, error %v", tt.name, b.Len(), err)
		}
	}
}

func TestEscaping(t *testing.T) {
	title := `a < b & "c" > 'd'`
	d := New(200, 100, title)
	d.Text(10, 20, title+"\x01", TextStyle{})
	d.Panel(Rect{0, 0, 200, 100}, "<&>", Axis{Label: `"x"`, Max: 1}, Axis{Max: 1})
	st := checkSVG(t, "escaping", render(t, "escaping", d))
	found := false
	for _, s := range st.texts {
		if s == title+"\uFFFD" {
			found = true
		}
	}
	if !found {
		t.Errorf("text %q not found intact among %q", title, st.texts)
	}
}

func TestMisusePanics(t *testing.T) {
	for name, f := range map[string]func(){
		"zero size":     func() { New(0, 10, "") },
		"infinite size": func() { New(math.Inf(1), 10, "") },
		"empty stack":   func() { New(10, 10, "").Stack(Rect{0, 0, 10, 10}, Axis{Max: 1}) },
		"uneven line":   func() { New(10, 10, "").Polyline([]float64{1}, nil, Stroke{Width: 1}) },
		"uneven points": func() {
			New(300, 200, "").Panel(Rect{0, 0, 300, 200}, "", Axis{Max: 1}, Axis{Max: 1}).Points([]float64{1}, nil, MarkerStyle{})
		},
		"bars edges": func() {
			New(300, 200, "").Panel(Rect{0, 0, 300, 200}, "", Axis{Max: 1}, Axis{Max: 1}).Bars([]float64{0}, []float64{1}, Fill{}, Stroke{})
		},
		"unknown shape":     func() { New(10, 10, "").Marker(1, 1, MarkerStyle{Shape: Shape(99)}) },
		"negative category": func() { Category(-1) },
	} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("%s: no panic", name)
				}
			}()
			f()
		}()
	}
}

// Data far outside the axes are drawn clipped, not as overflowing
// coordinates.
func TestFarDataStaysFinite(t *testing.T) {
	d := New(300, 200, "far")
	p := d.Panel(Rect{0, 0, 300, 200}, "", Axis{Min: 0, Max: 1}, Axis{Min: 0, Max: 1})
	p.Line([]float64{0, 0.5, 1}, []float64{0, 1e300, -1e308}, Stroke{Width: 1})
	checkSVG(t, "far", render(t, "far", d))
}
