package plot

import (
	"cmp"
	"fmt"
	"maps"
	"math"
	"slices"
	"strconv"
	"strings"

	"warmfit/lattice"
)

// MaxDrawnSites bounds the sites of a lattice drawing: beyond it a
// figure is neither readable nor of a size a viewer opens.
const MaxDrawnSites = 100_000

// Drawing measures of a stand-alone lattice figure, in pixels.
const (
	latticeSpacing = 56 // between the closest two sites
	latticeMargin  = 24
	latticeCaption = 22 // height of the caption line
)

// LatticeLayers colours a lattice drawing by values: sites by SiteMap,
// bonds by BondMap. A site or bond without a value is drawn faint; nil
// maps draw the plain lattice (sites filled by their position in the
// unit cell, NN bonds solid, NNN bonds dashed).
type LatticeLayers struct {
	SiteValues map[int]float64
	SiteMap    ColorMap
	// BondValues are keyed by the bond as it appears in the geometry
	// (I < J for lattices from the lattice package). Bonds of either
	// shell with a value are drawn; NNN bonds without one are left out.
	BondValues map[lattice.Bond]float64
	BondMap    ColorMap
	// WidenBonds makes a bond's width grow with |value|, as a second cue
	// besides its colour.
	WidenBonds bool
	// Numbers writes each site's index in its circle when the circles
	// are large enough to hold it.
	Numbers bool
}

// LatticeView is a lattice drawn on a document: it tells where each
// site landed, for annotations such as the outline of a patch.
type LatticeView struct {
	d      *Document
	layout *latticeLayout
}

// latticeLayout places a geometry on the page.
type latticeLayout struct {
	g      Geometry
	pts    [][2]float64
	segs   []segment
	drawn  []segment  // the segments drawn (drawLattice)
	lo, hi [2]float64 // bounding box of sites and stubs, lattice units
	scale  float64    // pixels per lattice unit
	ox, oy float64    // pixel of the box's upper left corner (lo[0], hi[1])
	radius float64    // of a site circle
	font   float64    // of a site number; 0 for none
	bond   float64    // width of an NN bond in the plain style
}

func newLatticeLayout(g Geometry) (*latticeLayout, error) {
	if err := g.check(); err != nil {
		return nil, err
	}
	if len(g.Coords) > MaxDrawnSites {
		return nil, fmt.Errorf("%d sites: more than the %d a drawing holds", len(g.Coords), MaxDrawnSites)
	}
	l := &latticeLayout{g: g}
	l.pts = make([][2]float64, len(g.Coords))
	for i, c := range g.Coords {
		l.pts[i] = project(c)
	}
	l.segs = g.segments(l.pts)
	l.lo = [2]float64{math.Inf(1), math.Inf(1)}
	l.hi = [2]float64{math.Inf(-1), math.Inf(-1)}
	grow := func(p [2]float64) {
		for k := range p {
			l.lo[k], l.hi[k] = min(l.lo[k], p[k]), max(l.hi[k], p[k])
		}
	}
	for _, p := range l.pts {
		grow(p)
	}
	for _, s := range l.segs {
		grow(s.b)
	}
	if len(l.pts) == 0 {
		l.lo, l.hi = [2]float64{}, [2]float64{}
	}
	return l, nil
}

// at maps a projected point to pixels; lattice y points up, SVG y down.
func (l *latticeLayout) at(p [2]float64) (float64, float64) {
	return l.ox + (p[0]-l.lo[0])*l.scale, l.oy + (l.hi[1]-p[1])*l.scale
}

// standaloneLabelSize returns the circle radius and font size for site
// numbers up to n-1, wide enough for the longest index.
func standaloneLabelSize(n int) (radius, font float64) {
	switch digits := len(strconv.Itoa(max(n-1, 0))); {
	case digits <= 2:
		return 14, sizeSiteNumber
	case digits == 3:
		return 15, 10.5
	default:
		return 17, 9
	}
}

// LatticeFigure draws the geometry as a figure of its own, sized to it:
// sites as numbered circles filled by their position in the unit cell,
// NN bonds solid, NNN bonds dashed (darker when they interact), bonds
// that wrap around a periodic boundary as two half-length stubs pointing
// across it, and a caption naming what is shown. 3-D coordinates are
// drawn in oblique projection (z up and to the right at 30 degrees,
// halved), far sites first. The closest two sites are drawn 56 pixels
// apart, so that numbers never overlap and a few hundred sites stay
// readable. A malformed geometry, or one of more than MaxDrawnSites
// sites, gives a document whose Err reports it.
func LatticeFigure(g Geometry) *Document {
	l, err := newLatticeLayout(g)
	if err != nil {
		d := New(1, 1, g.Name)
		d.failf("lattice %q: %w", g.Name, err)
		return d
	}
	l.scale = latticeSpacing / closestSeparation(l.pts, g.NN)
	l.radius, l.font = standaloneLabelSize(len(g.Coords))
	l.bond = 2.5
	pad := latticeMargin + l.radius
	caption := g.caption()
	keys := sublatticeKeys(g)
	content := (l.hi[0]-l.lo[0])*l.scale + 2*pad
	width := math.Max(content, textWidth(caption, sizeNote, false)+latticeMargin)
	height := (l.hi[1]-l.lo[1])*l.scale + 2*pad + latticeCaption
	if len(keys) > 0 {
		width = math.Max(width, sublatticeLegendWidth(keys)+latticeMargin)
		height += latticeCaption
	}
	l.ox, l.oy = pad+(width-content)/2, pad
	d := New(math.Ceil(width), math.Ceil(height), g.Name)
	d.drawLattice(l, LatticeLayers{Numbers: true})
	if len(keys) > 0 {
		d.sublatticeLegend(latticeMargin/2, height-latticeCaption*1.5, keys)
	}
	d.Text(latticeMargin/2, height-latticeCaption/2, caption, TextStyle{Size: sizeNote, Color: mutedColor})
	return d
}

// sublatticeKeys are the legend texts of the site fills of the plain
// style, one per position in the unit cell ("A: sites 0, 3, 6, …"), or
// none for one site per cell or more positions than fills.
func sublatticeKeys(g Geometry) []string {
	cell := g.CellSites
	if cell < 2 || cell > len(cellFills) {
		return nil
	}
	keys := make([]string, cell)
	for k := range keys {
		var sites []string
		for i := k; i < len(g.Coords) && len(sites) < 3; i += cell {
			sites = append(sites, fmt.Sprint(i))
		}
		keys[k] = fmt.Sprintf("%c: sites %s, …", 'A'+k, strings.Join(sites, ", "))
	}
	return keys
}

const (
	sublatticeSwatch = 7.0  // radius of a legend circle
	sublatticeGap    = 18.0 // between legend entries
	sublatticeTitle  = "sublattice (position in the unit cell):"
)

func sublatticeLegendWidth(keys []string) float64 {
	w := textWidth(sublatticeTitle, sizeNote, false)
	for _, k := range keys {
		w += sublatticeGap + 2*sublatticeSwatch + 4 + textWidth(k, sizeNote, false)
	}
	return w
}

// sublatticeLegend explains the site fills of the plain style on one line
// whose text baseline is at y.
func (d *Document) sublatticeLegend(x, y float64, keys []string) {
	st := TextStyle{Size: sizeNote, Color: mutedColor}
	d.Text(x, y, sublatticeTitle, st)
	x += textWidth(sublatticeTitle, sizeNote, false)
	for k, key := range keys {
		x += sublatticeGap
		d.Circle(x+sublatticeSwatch, y-sizeNote/3, sublatticeSwatch, &Fill{Color: cellFills[k]}, Stroke{Color: inkColor, Width: 1})
		x += 2*sublatticeSwatch + 4
		d.Text(x, y, key, st)
		x += textWidth(key, sizeNote, false)
	}
}

// Lattice draws the geometry scaled to fit box, coloured by the layers,
// and returns where its sites landed. A malformed geometry or layer is
// an error of the document; the returned view then places nothing.
func (d *Document) Lattice(box Rect, g Geometry, layers LatticeLayers) *LatticeView {
	l, err := newLatticeLayout(g)
	if err == nil {
		err = layers.check(g)
	}
	if err != nil {
		d.failf("lattice %q: %w", g.Name, err)
		return &LatticeView{d: d}
	}
	spacing := closestSeparation(l.pts, g.NN)
	// The circles take part of the margin; fit twice, since their size
	// follows the scale.
	margin := 14.0
	for range 2 {
		w := math.Max(l.hi[0]-l.lo[0], 1e-9)
		h := math.Max(l.hi[1]-l.lo[1], 1e-9)
		l.scale = math.Min((box.W-2*margin)/w, (box.H-2*margin)/h)
		if len(l.pts) < 2 {
			l.scale = 1
		}
		l.radius = math.Min(11, 0.24*spacing*l.scale)
		margin = l.radius + 4
	}
	l.bond = math.Max(1, math.Min(2.5, 0.05*spacing*l.scale))
	if layers.Numbers {
		l.font = numberFont(l.radius, len(g.Coords))
	}
	// Centre the drawing in the box.
	l.ox = box.X + (box.W-(l.hi[0]-l.lo[0])*l.scale)/2
	l.oy = box.Y + (box.H-(l.hi[1]-l.lo[1])*l.scale)/2
	d.drawLattice(l, layers)
	return &LatticeView{d: d, layout: l}
}

// numberFont returns the font size that fits the longest site number in
// a circle of radius r, or 0 when it would be too small to read.
func numberFont(r float64, n int) float64 {
	digits := float64(len(strconv.Itoa(max(n-1, 0))))
	f := math.Min(sizeSiteNumber, 1.7*r/(0.64*digits+0.2))
	if f < 6.5 {
		return 0
	}
	return f
}

// check reports the first bad value, in the order of the sites and of
// the geometry's bonds, so that the message does not depend on the
// order of a map.
func (ls LatticeLayers) check(g Geometry) error {
	sites := slices.Sorted(maps.Keys(ls.SiteValues))
	for _, i := range sites {
		if i < 0 || i >= len(g.Coords) {
			return fmt.Errorf("value for site %d, beyond the %d sites", i, len(g.Coords))
		}
		if v := ls.SiteValues[i]; !finite(v) {
			return fmt.Errorf("site %d: value %v: %w", i, v, errNonFinite)
		}
	}
	if ls.SiteValues != nil && !(ls.SiteMap.Max > ls.SiteMap.Min) {
		return fmt.Errorf("site values without a colour map")
	}
	known := 0
	for _, b := range slices.Concat(g.NN, g.NNN) {
		if v, ok := ls.BondValues[b]; ok {
			known++
			if !finite(v) {
				return fmt.Errorf("bond %d-%d: value %v: %w", b.I, b.J, v, errNonFinite)
			}
		}
	}
	if known != len(ls.BondValues) {
		bonds := slices.SortedFunc(maps.Keys(ls.BondValues), func(a, b lattice.Bond) int {
			return cmp.Or(cmp.Compare(a.I, b.I), cmp.Compare(a.J, b.J))
		})
		for _, b := range bonds {
			if !slices.Contains(g.NN, b) && !slices.Contains(g.NNN, b) {
				return fmt.Errorf("value for bond %d-%d, which is not a bond of the lattice", b.I, b.J)
			}
		}
	}
	if ls.BondValues != nil && !(ls.BondMap.Max > ls.BondMap.Min) {
		return fmt.Errorf("bond values without a colour map")
	}
	return nil
}

// Site returns the pixel position of site i; ok is false when the view
// holds no drawing (its geometry was malformed) or i is not a site.
func (v *LatticeView) Site(i int) (x, y float64, ok bool) {
	if v.layout == nil || i < 0 || i >= len(v.layout.pts) {
		return 0, 0, false
	}
	x, y = v.layout.at(v.layout.pts[i])
	return x, y, true
}

// Outline draws a dashed frame around the given sites, with an optional
// label beside it where it touches no bond or site (freeLabelSpot): the
// patch checked against exact methods, say.
func (v *LatticeView) Outline(sites []int, label string) {
	if v.layout == nil || len(sites) == 0 {
		return
	}
	x0, y0 := math.Inf(1), math.Inf(1)
	x1, y1 := math.Inf(-1), math.Inf(-1)
	for _, i := range sites {
		x, y, ok := v.Site(i)
		if !ok {
			v.d.failf("lattice %q: outline: site %d of %d", v.layout.g.Name, i, len(v.layout.pts))
			return
		}
		x0, y0, x1, y1 = math.Min(x0, x), math.Min(y0, y), math.Max(x1, x), math.Max(y1, y)
	}
	pad := v.layout.radius + 5
	r := Rect{x0 - pad, y0 - pad, x1 - x0 + 2*pad, y1 - y0 + 2*pad}
	v.d.Rect(r, nil, Stroke{Color: inkColor, Width: 1.2, Dash: []float64{5, 3}})
	if label != "" {
		x, y := v.layout.freeLabelSpot(r, textWidth(label, sizeLegend, false), sizeLegend)
		v.d.Text(x, y, label, TextStyle{Size: sizeLegend, Color: mutedColor, Halo: true})
	}
}

// freeLabelSpot finds the baseline of a label of width w and font size
// size next to the frame r where it touches no drawn bond and no site:
// along the outside of the top edge first, then of the bottom edge, left
// to right. Without a free spot it falls back on the top left corner.
func (l *latticeLayout) freeLabelSpot(r Rect, w, size float64) (x, baseline float64) {
	const clear = 5.0 // pixels between the label and any bond or site
	free := func(box Rect) bool {
		box = Rect{box.X - clear, box.Y - clear, box.W + 2*clear, box.H + 2*clear}
		inside := func(px, py, grow float64) bool {
			return px >= box.X-grow && px <= box.Right()+grow && py >= box.Y-grow && py <= box.Bottom()+grow
		}
		for _, s := range l.drawn {
			ax, ay := l.at(s.a)
			bx, by := l.at(s.b)
			for k := 0; k <= 32; k++ {
				t := float64(k) / 32
				if inside(ax+t*(bx-ax), ay+t*(by-ay), l.bond) {
					return false
				}
			}
		}
		for _, p := range l.pts {
			if px, py := l.at(p); inside(px, py, l.radius) {
				return false
			}
		}
		return true
	}
	for _, base := range []float64{r.Y - 4, r.Bottom() + size + 2} {
		for x := r.X + 2; x+w <= r.Right()-2; x += 4 {
			if free(Rect{x, base - size, w, size * 1.2}) {
				return x, base
			}
		}
	}
	return r.X + 2, r.Y - 4
}

// drawLattice paints the bonds, then the sites, far ones first.
func (d *Document) drawLattice(l *latticeLayout, ls LatticeLayers) {
	d.group(func(e elem) { e.str("stroke-linecap", "round") })
	l.drawn = l.drawn[:0]
	for _, s := range l.segs {
		d.drawSegment(l, ls, s)
		// Bonds without a value are left out, except nearest neighbours
		// (drawn faint); labels keep clear of what is drawn.
		if _, ok := ls.BondValues[s.bond]; ls.BondValues == nil || ok || !s.nnn {
			l.drawn = append(l.drawn, s)
		}
	}
	d.endGroup()
	order := make([]int, len(l.pts))
	for i := range order {
		order[i] = i
	}
	if len(l.g.Coords) > 0 && len(l.g.Coords[0]) == 3 {
		slices.SortStableFunc(order, func(a, b int) int {
			za, zb := l.g.Coords[a][2], l.g.Coords[b][2]
			switch {
			case za > zb:
				return -1
			case za < zb:
				return 1
			}
			return 0
		})
	}
	for _, i := range order {
		d.drawSite(l, ls, i)
	}
}

// Bond inks of the plain style.
var (
	nnBondColor     = hexColor("#3d3933")
	nnnBondColor    = hexColor("#a8a195")
	nnnBondInteract = hexColor("#5a6a8c")
	faintBondColor  = hexColor("#d9d4ca")
)

func (d *Document) drawSegment(l *latticeLayout, ls LatticeLayers, s segment) {
	x1, y1 := l.at(s.a)
	x2, y2 := l.at(s.b)
	alpha := 0.0
	if s.stub {
		alpha = 0.55
	}
	if ls.BondValues == nil {
		st := Stroke{Color: nnBondColor, Width: l.bond, Alpha: alpha}
		if s.nnn {
			c := nnnBondColor
			if l.g.NNNInteract {
				c = nnnBondInteract
			}
			st = Stroke{Color: c, Width: 0.6 * l.bond, Dash: []float64{6, 4}, Alpha: alpha}
		}
		d.Line(x1, y1, x2, y2, st)
		return
	}
	v, ok := ls.BondValues[s.bond]
	if !ok {
		if !s.nnn {
			d.Line(x1, y1, x2, y2, Stroke{Color: faintBondColor, Width: 1, Alpha: alpha})
		}
		return
	}
	w := l.bond
	if ls.WidenBonds {
		top := math.Max(math.Abs(ls.BondMap.Min), math.Abs(ls.BondMap.Max))
		w = 1.5 + 5*math.Min(1, math.Abs(v)/top)*l.bond/2.5
	}
	var dash []float64
	if s.nnn {
		dash = []float64{2 * w, 1.5 * w}
	}
	// A thin dark casing keeps pale colours visible on the paper.
	d.Line(x1, y1, x2, y2, Stroke{Color: inkColor, Width: w + 1.4, Dash: dash, Alpha: 0.3 * (1 - alpha/2)})
	d.Line(x1, y1, x2, y2, Stroke{Color: ls.BondMap.At(v), Width: w, Dash: dash, Alpha: alpha})
}

// Site fills of the plain style, by position in the unit cell: paper,
// then pale tints of two categorical hues.
var cellFills = []Color{hexColor("#ffffff"), tint(Category(3)), tint(Category(1))}

// tint returns a pale version of c: its hue at lightness 0.93.
func tint(c Color) Color {
	p := c.oklab().lch()
	p.L, p.C = 0.93, math.Min(p.C, 0.045)
	out, _ := p.lab().color()
	return out
}

func (d *Document) drawSite(l *latticeLayout, ls LatticeLayers, i int) {
	x, y := l.at(l.pts[i])
	r := l.radius
	var fill Color
	switch v, ok := ls.SiteValues[i]; {
	case ls.SiteValues == nil:
		cell := max(l.g.CellSites, 1)
		fill = cellFills[(i%cell)%len(cellFills)]
		d.Circle(x, y, r, &Fill{Color: fill}, Stroke{Color: inkColor, Width: math.Min(1.5, 0.1*r+0.3)})
	case ok:
		fill = ls.SiteMap.At(v)
		d.Circle(x, y, r, &Fill{Color: fill}, Stroke{Color: fill.shade(-0.3), Width: 0.8})
	default:
		fill = paperColor
		d.Circle(x, y, 0.55*r, &Fill{Color: fill}, Stroke{Color: frameColor, Width: 0.8})
		return
	}
	if l.font > 0 {
		color := inkColor
		if fill.oklab().L < 0.6 {
			color = paperColor
		}
		// dy would centre the digits, but not every renderer honours
		// dominant-baseline; shift the baseline by hand.
		d.Text(x, y+0.35*l.font, strconv.Itoa(i), TextStyle{Size: l.font, Anchor: Middle, Color: color})
	}
}
