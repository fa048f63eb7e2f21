package plot

import (
	"math"
	"testing"
)

// With data in the upper right, a legend goes to the next free place,
// the upper left; with every corner taken, it goes where least is hidden.
func TestLegendAvoidsData(t *testing.T) {
	d := New(400, 300, "legend")
	p := d.Panel(Rect{0, 0, 400, 300}, "", Axis{Min: 0, Max: 10, Tight: true}, Axis{Min: 0, Max: 10, Tight: true})
	var xs, ys []float64
	for i := range 20 {
		xs = append(xs, 7+float64(i%5)*0.6)
		ys = append(ys, 7+float64(i/5)*0.8)
	}
	p.Points(xs, ys, MarkerStyle{})
	w, h := legendSize([]LegendEntry{{Label: "data", Marker: &MarkerStyle{}}})
	box := p.legendPlace(w, h)
	a := p.Area()
	if box.X > a.X+legendInset+1 || box.Y > a.Y+legendInset+1 {
		t.Errorf("legend at %+v, want the upper left of %+v", box, a)
	}
	if c := p.cost(box); c != 0 {
		t.Errorf("legend covers data (cost %v)", c)
	}
	// A line along the whole top edge: the legend moves to the bottom.
	p.Line([]float64{0, 10}, []float64{9.5, 9.5}, Stroke{Width: 1})
	if box := p.legendPlace(w, h); box.Y < a.Y+a.H/2 {
		t.Errorf("legend at %+v, want the lower half", box)
	}
	checkSVG(t, "legend", render(t, "legend", d))
}

// Stacked panels share the x axis: the same left and right edges and
// one set of x tick labels, under the lowest panel.
func TestStackSharesX(t *testing.T) {
	d := New(600, 500, "stack")
	ps := d.Stack(Rect{10, 10, 580, 480}, Axis{Label: "T", Min: 0, Max: 5},
		Row{Title: "narrow labels", Y: Axis{Label: "a", Min: 0, Max: 1}, Weight: 3},
		Row{Title: "wide labels", Y: Axis{Label: "b", Min: -123456, Max: 654321}},
		Row{Y: Axis{Label: "residual", Min: -3, Max: 3}})
	for i, p := range ps {
		if p.Area().X != ps[0].Area().X || p.Area().Right() != ps[0].Area().Right() {
			t.Errorf("panel %d spans %+v, panel 0 %+v", i, p.Area(), ps[0].Area())
		}
		if labels := !p.x.spec.NoTickLabels; labels != (i == len(ps)-1) {
			t.Errorf("panel %d: x tick labels %v", i, labels)
		}
		if i > 0 && p.Area().Y < ps[i-1].Area().Bottom() {
			t.Errorf("panel %d overlaps the one above", i)
		}
	}
	if h0, h1 := ps[0].Area().H, ps[1].Area().H; math.Abs(h0-3*h1) > 1e-9 {
		t.Errorf("heights %v and %v, want 3:1", h0, h1)
	}
	if b := ps[2].Area().Bottom(); b > 490-xTickBlock-xLabelBlock+1e-9 {
		t.Errorf("lowest plot area ends at %v, leaving no room for the x labels", b)
	}
	checkSVG(t, "stack", render(t, "stack", d))
}

func TestAxisFitting(t *testing.T) {
	for _, tt := range []struct {
		a        Axis
		lo, hi   float64
		ticks    int
		firstTic float64
	}{
		{Axis{Min: 0.13, Max: 0.87}, 0, 1, 6, 0},
		{Axis{Min: 0.13, Max: 0.87, Tight: true}, 0.13, 0.87, 4, 0.2},
		{Axis{Min: 0, Max: 1, Step: 0.25}, 0, 1, 5, 0},
		{Axis{Min: 1, Max: 8, Integer: true}, 0, 8, 5, 0},
		{Axis{Min: 3e-4, Max: 42, Log: true}, 1e-4, 100, 7, 1e-4},
		{Axis{Min: 2, Max: 2}, 1.8, 2.2, 5, 1.8},
	} {
		m, err := newAxisMap(tt.a, 300, 60)
		if err != nil {
			t.Errorf("%+v: %v", tt.a, err)
			continue
		}
		if math.Abs(m.lo-tt.lo) > 1e-12 || math.Abs(m.hi-tt.hi) > 1e-9 || len(m.ticks) != tt.ticks || math.Abs(m.ticks[0]-tt.firstTic) > 1e-12 {
			t.Errorf("%+v: range [%v, %v], ticks %v; want [%v, %v], %d from %v", tt.a, m.lo, m.hi, m.ticks, tt.lo, tt.hi, tt.ticks, tt.firstTic)
		}
	}
	if _, err := newAxisMap(Axis{Min: 0, Max: 1, Step: 1e-9}, 300, 60); err == nil {
		t.Error("a step giving a billion ticks should be refused")
	}
}

func TestRectGrid(t *testing.T) {
	cells := Rect{10, 20, 210, 100}.Grid(2, 2, 10, 20)
	want := []Rect{{10, 20, 100, 40}, {120, 20, 100, 40}, {10, 80, 100, 40}, {120, 80, 100, 40}}
	if len(cells) != len(want) {
		t.Fatalf("%d cells", len(cells))
	}
	for i := range want {
		if cells[i] != want[i] {
			t.Errorf("cell %d: %+v, want %+v", i, cells[i], want[i])
		}
	}
}
