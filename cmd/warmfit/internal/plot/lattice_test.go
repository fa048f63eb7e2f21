package plot

import (
	"bytes"
	"encoding/xml"
	"io"
	"math"
	"strconv"
	"testing"

	"warmfit/lattice"
)

func mustOpen(t *testing.T, spec string) *lattice.Lattice {
	t.Helper()
	l, err := lattice.Open(spec)
	if err != nil {
		t.Fatal(err)
	}
	return l
}

// The stand-alone drawing has one numbered circle per site and one line
// per bond, two half-length stubs for each bond that wraps around a
// periodic boundary: a bond longer than its shell distance (1 for NN,
// sqrt2 for NNN on the square and cubic lattices, sqrt3 on honeycomb,
// kagome and triangular NNN; derived from the unit cells).
func TestLatticeFigure(t *testing.T) {
	for _, tt := range []struct {
		spec       string
		nnLen, nnn float64
	}{
		{"square:4x4", 1, math.Sqrt2},
		{"square:4x4:periodic", 1, math.Sqrt2},
		{"honeycomb:3x3:periodic:shells=2", 1, math.Sqrt(3)},
		{"kagome:2x3", 1, math.Sqrt(3)},
		{"cubic:3x3x3:periodic", 1, math.Sqrt2},
		{"triangular:4x3", 1, math.Sqrt(3)},
		{"chain:12:periodic", 1, 2},
		{"ladder:6:periodic", 1, math.Sqrt2},
	} {
		l := mustOpen(t, tt.spec)
		doc := render(t, tt.spec, LatticeFigure(LatticeGeometry(l)))
		st := checkSVG(t, tt.spec, doc)
		wantLines := len(l.NN) + len(l.NNN)
		for _, shell := range []struct {
			bonds []lattice.Bond
			d     float64
		}{{l.NN, tt.nnLen}, {l.NNN, tt.nnn}} {
			for _, b := range shell.bonds {
				if dist(l.Coords[b.I], l.Coords[b.J]) > shell.d+1e-9 {
					wantLines++
				}
			}
		}
		labels := map[int]bool{}
		for _, s := range st.texts {
			if k, err := strconv.Atoi(s); err == nil {
				labels[k] = true
			}
		}
		// One circle per site, and a legend swatch per sublattice.
		wantCircles := l.NumSites() + len(sublatticeKeys(LatticeGeometry(l)))
		if st.elements["circle"] != wantCircles || len(labels) != l.NumSites() || st.elements["line"] != wantLines {
			t.Errorf("%s: %d circles, %d labels, %d lines; want %d, %d, %d",
				tt.spec, st.elements["circle"], len(labels), st.elements["line"], wantCircles, l.NumSites(), wantLines)
		}
	}
}

func dist(a, b []float64) float64 {
	s := 0.0
	for k := range a {
		s += (a[k] - b[k]) * (a[k] - b[k])
	}
	return math.Sqrt(s)
}

// The periodic translations are size times the Bravais vectors of the
// unit cells (lattice/unitcell.go): derived.
func TestLatticeGeometryTranslations(t *testing.T) {
	s3 := math.Sqrt(3)
	for _, tt := range []struct {
		spec  string
		cell  int
		trans [][]float64
	}{
		{"square:4x5:periodic", 1, [][]float64{{4, 0}, {0, 5}}},
		{"honeycomb:3x4:periodic", 2, [][]float64{{3 * s3, 0}, {4 * s3 / 2, 4 * 1.5}}},
		{"kagome:3x3:periodic", 3, [][]float64{{6, 0}, {3, 3 * s3}}},
		{"cubic:3x4x5:periodic", 1, [][]float64{{3, 0, 0}, {0, 4, 0}, {0, 0, 5}}},
		{"chain:7:periodic", 1, [][]float64{{7, 0}}},
		{"ladder:5:periodic", 2, [][]float64{{5, 0}}},
		{"square:4x4", 1, nil},
	} {
		g := LatticeGeometry(mustOpen(t, tt.spec))
		if g.CellSites != tt.cell || len(g.Translations) != len(tt.trans) {
			t.Errorf("%s: %d sites per cell, translations %v; want %d, %v", tt.spec, g.CellSites, g.Translations, tt.cell, tt.trans)
			continue
		}
		for a, want := range tt.trans {
			if dist(g.Translations[a], want) > 1e-12 {
				t.Errorf("%s: translation %d is %v, want %v", tt.spec, a, g.Translations[a], want)
			}
		}
	}
}

// The stand-alone drawing puts site i at its lattice coordinates, 56
// pixels per unit (the closest two sites of these lattices are one unit
// apart: derived from the unit cells), y pointing down.
func TestLatticeFigureSitePositions(t *testing.T) {
	for _, spec := range []string{"honeycomb:3x3:periodic:shells=2", "kagome:2x3", "triangular:4x3", "square:3x3"} {
		l := mustOpen(t, spec)
		c := circleCentres(t, render(t, spec, LatticeFigure(LatticeGeometry(l))))
		c = c[:min(len(c), l.NumSites())] // the sublattice legend's swatches follow the sites
		if len(c) != l.NumSites() {
			t.Fatalf("%s: %d circles for %d sites", spec, len(c), l.NumSites())
		}
		for i, p := range l.Coords {
			wx := latticeSpacing * (p[0] - l.Coords[0][0])
			wy := -latticeSpacing * (p[1] - l.Coords[0][1])
			if dx, dy := c[i][0]-c[0][0]-wx, c[i][1]-c[0][1]-wy; math.Hypot(dx, dy) > 0.02 {
				t.Errorf("%s: site %d drawn %.3f, %.3f px off its coordinates", spec, i, dx, dy)
			}
		}
	}
}

func circleCentres(t *testing.T, doc []byte) [][2]float64 {
	var out [][2]float64
	dec := xml.NewDecoder(bytes.NewReader(doc))
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			return out
		}
		if err != nil {
			t.Fatal(err)
		}
		if el, ok := tok.(xml.StartElement); ok && el.Name.Local == "circle" {
			var c [2]float64
			for _, at := range el.Attr {
				switch at.Name.Local {
				case "cx":
					c[0], _ = strconv.ParseFloat(at.Value, 64)
				case "cy":
					c[1], _ = strconv.ParseFloat(at.Value, 64)
				}
			}
			out = append(out, c)
		}
	}
}

func TestLatticeOddGraphs(t *testing.T) {
	for name, g := range map[string]Geometry{
		"one site":         {Coords: [][]float64{{0, 0}}},
		"no sites":         {},
		"coincident":       {Coords: [][]float64{{0, 0}, {0, 0}, {1, 0}}, NN: []lattice.Bond{{I: 0, J: 1}, {I: 1, J: 2}}},
		"far apart":        {Coords: [][]float64{{0, 0}, {1e6, 0}}},
		"three dimensions": {Coords: [][]float64{{0, 0, 0}, {0, 0, 1}}, NN: []lattice.Bond{{I: 0, J: 1}}},
	} {
		checkSVG(t, name, render(t, name, LatticeFigure(g)))
		d := New(300, 300, name)
		d.Lattice(Rect{10, 10, 280, 280}, g, LatticeLayers{Numbers: true})
		checkSVG(t, name+" in a box", render(t, name, d))
	}
	if err := LatticeFigure(Geometry{Coords: make([][]float64, MaxDrawnSites+1)}).Err(); err == nil {
		t.Error("a geometry beyond MaxDrawnSites was drawn")
	}
	if err := LatticeFigure(Geometry{Coords: [][]float64{{0, 0}, {1, 0, 0}}}).Err(); err == nil {
		t.Error("mixed 2-D and 3-D coordinates were drawn")
	}
}

// A coloured drawing paints every valued site and bond in its map's
// colour, and fits inside its box.
func TestLatticeLayers(t *testing.T) {
	l := mustOpen(t, "square:3x3:periodic")
	g := LatticeGeometry(l)
	sites := map[int]float64{0: -1, 4: 1}
	bonds := map[lattice.Bond]float64{l.NN[0]: 0.5}
	m := ColorMap{Scale: Diverging, Min: -1, Max: 1}
	d := New(400, 400, "layers")
	box := Rect{50, 50, 300, 300}
	v := d.Lattice(box, g, LatticeLayers{SiteValues: sites, SiteMap: m, BondValues: bonds, BondMap: m, WidenBonds: true, Numbers: true})
	v.Outline([]int{0, 1, 3, 4}, "patch")
	doc := render(t, "layers", d)
	checkSVG(t, "layers", doc)
	for _, c := range []Color{m.At(-1), m.At(1), m.At(0.5)} {
		if !bytes.Contains(doc, []byte(`"`+c.Hex()+`"`)) {
			t.Errorf("colour %s of a value is not drawn", c)
		}
	}
	for i := range l.NumSites() {
		x, y, ok := v.Site(i)
		if !ok || x < box.X || x > box.Right() || y < box.Y || y > box.Bottom() {
			t.Errorf("site %d at (%v, %v), outside %+v", i, x, y, box)
		}
	}
	if _, _, ok := v.Site(9); ok {
		t.Error("site 9 of 9 was placed")
	}
}

// An outline's label keeps clear of the drawn bonds and sites (review
// finding 9: the demo's "patch" label sat on a bond; common practice for
// labels). Here a vertical bond runs through the frame's top left corner,
// where the label used to go, so the label moves right along the edge.
func TestOutlineLabelAvoidsBonds(t *testing.T) {
	l := &latticeLayout{scale: 1, hi: [2]float64{0, 200}, radius: 10, bond: 2.5,
		pts: [][2]float64{{30, 100}, {30, 180}, {130, 100}}}
	l.drawn = []segment{{a: l.pts[0], b: l.pts[1]}, {a: l.pts[0], b: l.pts[2]}}
	frame := Rect{X: 15, Y: 85, W: 130, H: 40} // around sites 0 and 2 (pixel y 100)
	w := textWidth("patch", sizeLegend, false)
	x, base := l.freeLabelSpot(frame, w, sizeLegend)
	if base != frame.Y-4 {
		t.Fatalf("label baseline %v, want above the frame at %v", base, frame.Y-4)
	}
	if bondX := 30.0; x <= bondX+l.bond && x+w >= bondX-l.bond {
		t.Errorf("label [%v, %v] crosses the vertical bond at x = %v", x, x+w, bondX)
	}
}
