package main

import (
	"fmt"
	"io"
	"math"

	"warmfit/lattice"
)

// demoFigure names one figure file and what it shows.
type demoFigure struct {
	File    string
	Caption string
	draw    func(d *demoRun) (*svgCanvas, error)
}

var demoFigureList = []demoFigure{
	{"fig-coefficients.svg", "fitted against true coefficients with 1-sigma error bars and the line fitted = true; right, the errors fitted - true", (*demoRun).figCoefficients},
	{"fig-pulls.svg", "histograms of the pulls (fitted - true)/stderr for the array and the patch, with the standard normal curve they should follow", (*demoRun).figPulls},
	{"fig-lattice.svg", "the array with bonds coloured and thickened by the fitted couplings and sites coloured by the fitted fields; last panel, the pulls per bond and site (the checked patch is outlined)", (*demoRun).figLattice},
	{"fig-thermo.svg", "energy and heat capacity per site of the fitted model against beta at the fit's order and the two below, the range where the series converge shaded, the operating beta marked", (*demoRun).figThermo},
}

// writeFigures draws every figure into the output directory.
func (d *demoRun) writeFigures() error {
	for _, f := range demoFigureList {
		c, err := f.draw(d)
		if err != nil {
			return fmt.Errorf("%s: %w", f.File, err)
		}
		if err := d.write(f.File, func(w io.Writer) error { _, err := c.WriteTo(w); return err }); err != nil {
			return err
		}
	}
	fmt.Fprintf(d.env.Stderr, "      figures: ")
	for i, f := range demoFigureList {
		if i > 0 {
			fmt.Fprint(d.env.Stderr, ", ")
		}
		fmt.Fprint(d.env.Stderr, f.File)
	}
	fmt.Fprintln(d.env.Stderr)
	return nil
}

// termStyle gives each kind of term a colour and marker shape.
var termStyle = map[string]struct{ color, shape string }{
	"XX": {"#2c6fbb", "circle"},
	"YY": {"#2e8b57", "square"},
	"ZZ": {"#d2691e", "diamond"},
	"X":  {"#7b4fc4", "triangle"},
	"Y":  {"#777777", "triangle"},
	"Z":  {"#c2185b", "circle"},
}

func styleOf(pauli string) (string, string) {
	if s, ok := termStyle[pauli]; ok {
		return s.color, s.shape
	}
	return "#555555", "circle"
}

// kindsInOrder lists the term kinds present, in the model's order.
func kindsInOrder(terms []lattice.Term) []string {
	seen := map[string]bool{}
	var out []string
	for _, t := range terms {
		if !seen[t.Pauli] {
			seen[t.Pauli] = true
			out = append(out, t.Pauli)
		}
	}
	return out
}

func finiteAll(v ...float64) bool {
	for _, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}

// figCoefficients: fitted vs true with error bars and y = x; errors vs
// true on the right.
func (d *demoRun) figCoefficients() (*svgCanvas, error) {
	truth, fitted := d.device.Terms, d.fitted.Terms
	if len(truth) != len(fitted) {
		return nil, fmt.Errorf("%d true and %d fitted terms", len(truth), len(fitted))
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	elo, ehi := 0.0, 0.0
	for k, t := range fitted {
		tv := truth[k].Coeff
		if !finiteAll(t.Coeff, t.Stderr, tv) {
			return nil, fmt.Errorf("term %s: non-finite value", t.Key())
		}
		lo = math.Min(lo, math.Min(tv, t.Coeff))
		hi = math.Max(hi, math.Max(tv, t.Coeff))
		e := t.Coeff - tv
		elo = math.Min(elo, e-t.Stderr)
		ehi = math.Max(ehi, e+t.Stderr)
	}
	c := newSVGCanvas(1080, 560)
	c.text(30, 30, fmt.Sprintf("Fitted against true coefficients: %dx%d array, %d terms, %d shots per basis",
		d.sc.Width, d.sc.Height, len(fitted), d.sc.Shots), textOpt{Size: 16, Bold: true})

	pad := 0.04 * (hi - lo)
	left := newPanel(c, 95, 80, 400, 390, lo-pad, hi+pad, lo-pad, hi+pad)
	// The same range and ticks on both axes, so that y = x is the
	// diagonal.
	left.ymin, left.ymax, left.yticks, left.ystep = left.xmin, left.xmax, left.xticks, left.xstep
	left.title("fitted vs true")
	left.frame("true coefficient", "fitted coefficient")
	left.clip()
	c.line(left.X(left.xmin), left.Y(left.xmin), left.X(left.xmax), left.Y(left.xmax), svgStyle{Stroke: "#888", Width: 1.2, Dash: "6,4"})
	for k, t := range fitted {
		x, y := truth[k].Coeff, t.Coeff
		col, shape := styleOf(t.Pauli)
		c.line(left.X(x), left.Y(y-t.Stderr), left.X(x), left.Y(y+t.Stderr), svgStyle{Stroke: col, Width: 1, Opacity: 0.7})
		c.marker(left.X(x), left.Y(y), 3.2, shape, col)
	}
	c.endGroup()
	var legend []legendEntry
	for _, kind := range kindsInOrder(fitted) {
		col, shape := styleOf(kind)
		legend = append(legend, legendEntry{Label: kind, Color: col, Shape: shape})
	}
	legend = append(legend, legendEntry{Label: "fitted = true", Line: svgStyle{Stroke: "#888", Width: 1.2, Dash: "6,4"}})
	left.legend("tl", legend)

	// Right: every term's error with its bar, grouped by kind, so that
	// each bar can be seen to cross zero or not.
	kinds := kindsInOrder(fitted)
	var order []int
	for _, kind := range kinds {
		for k, t := range fitted {
			if t.Pauli == kind {
				order = append(order, k)
			}
		}
	}
	elim := math.Max(-elo, ehi)
	right := newPanel(c, 620, 80, 420, 390, 0, float64(len(order)), -elim, elim)
	right.setX(-2, float64(len(order))+1, false)
	right.noXLabels = true
	right.xticks = nil
	start := 0
	var bounds []float64
	for _, kind := range kinds {
		n := 0
		for _, t := range fitted {
			if t.Pauli == kind {
				n++
			}
		}
		bounds = append(bounds, float64(start)-0.5)
		start += n
	}
	right.xticks = bounds[1:]
	right.title("error fitted - true, term by term")
	right.frame("", "fitted - true")
	start = 0
	for _, kind := range kinds {
		n := 0
		for _, t := range fitted {
			if t.Pauli == kind {
				n++
			}
		}
		col, _ := styleOf(kind)
		c.text(right.X(float64(start)+float64(n-1)/2), right.y+right.h+18, kind, textOpt{Size: 12, Anchor: "middle", Color: col, Bold: true})
		start += n
	}
	c.text(right.x+right.w/2, right.y+right.h+38, "terms, grouped by kind", textOpt{Size: 13, Anchor: "middle"})
	right.clip()
	c.line(right.x, right.Y(0), right.x+right.w, right.Y(0), svgStyle{Stroke: "#888", Width: 1.2, Dash: "6,4"})
	for i, k := range order {
		t := fitted[k]
		e := t.Coeff - truth[k].Coeff
		col, shape := styleOf(t.Pauli)
		c.line(right.X(float64(i)), right.Y(e-t.Stderr), right.X(float64(i)), right.Y(e+t.Stderr), svgStyle{Stroke: col, Width: 1, Opacity: 0.7})
		c.marker(right.X(float64(i)), right.Y(e), 2.6, shape, col)
	}
	c.endGroup()
	cmp := d.array
	c.text(95, 540, fmt.Sprintf("bars are 1 sigma; L2 error %s, Linf %s, median stderr %s; %.1f%% of the errors lie within 2 sigma of zero",
		fmtG3(cmp.L2), fmtG3(cmp.Linf), fmtG3(cmp.MedStderr), 100*cmp.Within2), textOpt{Size: 12, Color: "#444"})
	return c, nil
}

// figPulls: pull histograms with the standard normal density.
func (d *demoRun) figPulls() (*svgCanvas, error) {
	c := newSVGCanvas(1000, 470)
	c.text(30, 30, "Pulls (fitted - true) / stderr: honest error bars give a standard normal", textOpt{Size: 16, Bold: true})
	sets := []struct {
		title string
		cmp   *demoComparison
	}{
		{fmt.Sprintf("array %dx%d, binomial data", d.sc.Width, d.sc.Height), d.array},
		{fmt.Sprintf("patch %dx%d, exact snapshots", d.sc.Patch, d.sc.Patch), d.patch},
	}
	for i, s := range sets {
		if s.cmp == nil {
			continue
		}
		if err := drawPullPanel(c, 80+float64(i)*490, 80, 400, 300, s.title, s.cmp); err != nil {
			return nil, err
		}
	}
	return c, nil
}

func drawPullPanel(c *svgCanvas, x, y, w, h float64, title string, cmp *demoComparison) error {
	const lim, width = 4.0, 0.5
	nb := int(2 * lim / width)
	counts := make([]float64, nb)
	clamped := 0
	for _, z := range cmp.Pulls {
		if !finiteAll(z) {
			return fmt.Errorf("non-finite pull")
		}
		b := int(math.Floor((z + lim) / width))
		if b < 0 || b >= nb {
			clamped++
			b = max(0, min(nb-1, b))
		}
		counts[b]++
	}
	n := float64(len(cmp.Pulls))
	peak := n * width / math.Sqrt(2*math.Pi)
	top := peak
	for _, v := range counts {
		top = math.Max(top, v)
	}
	p := newPanel(c, x, y, w, h, -lim, lim, 0, top*1.22)
	p.setX(-lim, lim, false)
	p.title(title)
	p.frame("pull", "terms per bin")
	p.clip()
	for b, v := range counts {
		x0 := -lim + float64(b)*width
		p.c.rect(p.X(x0)+0.5, p.Y(v), p.X(x0+width)-p.X(x0)-1, p.Y(0)-p.Y(v), svgStyle{Fill: "#9ecae1", Stroke: "#3182bd", Width: 0.8})
	}
	var xs, ys []float64
	for i := 0; i <= 160; i++ {
		z := -lim + 2*lim*float64(i)/160
		xs = append(xs, z)
		ys = append(ys, n*width*math.Exp(-z*z/2)/math.Sqrt(2*math.Pi))
	}
	p.curve(xs, ys, svgStyle{Stroke: "#c0392b", Width: 2})
	c.endGroup()
	p.legend("tl", []legendEntry{
		{Label: fmt.Sprintf("%d pulls", len(cmp.Pulls)), Swatch: "#9ecae1"},
		{Label: "standard normal", Line: svgStyle{Stroke: "#c0392b", Width: 2}},
	})
	stats := []string{
		fmt.Sprintf("mean %+.3f", cmp.PullMean),
		fmt.Sprintf("rms %.3f", cmp.PullRMS),
		fmt.Sprintf("within 2σ %.1f%%", 100*cmp.Within2),
	}
	if clamped > 0 {
		stats = append(stats, fmt.Sprintf("%d beyond ±4 in end bins", clamped))
	}
	for i, s := range stats {
		c.text(x+w-10, y+22+16*float64(i), s, textOpt{Size: 12, Anchor: "end"})
	}
	return nil
}

// colourScale maps values to colours: a diverging blue-white-red scale
// symmetric about 0 when the values have both signs, otherwise the
// sequential palette over the values' range (where the disorder shows).
type colourScale struct {
	lo, hi    float64
	diverging bool
}

func newColourScale(vals []float64) colourScale {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range vals {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	if len(vals) == 0 {
		return colourScale{lo: 0, hi: 1}
	}
	if lo < 0 && hi > 0 {
		m := niceCeil(math.Max(-lo, hi))
		return colourScale{lo: -m, hi: m, diverging: true}
	}
	lo, hi = niceRange(lo, hi, 4)
	return colourScale{lo: lo, hi: hi}
}

func (s colourScale) color(v float64) string {
	t := (v - s.lo) / (s.hi - s.lo)
	if s.diverging {
		return divergingColor(2*t - 1)
	}
	return paletteColor(t)
}

func (s colourScale) bar(c *svgCanvas, x, y, w float64, label string) {
	c.colorBarH(x, y, w, 11, s.lo, s.hi, func(t float64) string { return s.color(s.lo + t*(s.hi-s.lo)) }, label)
}

// figLattice: the array coloured by the fitted coefficients and by the
// pulls.
func (d *demoRun) figLattice() (*svgCanvas, error) {
	l := d.fitted.Lattice
	n := l.NumSites()
	truth := map[string]float64{}
	for _, t := range d.device.Terms {
		truth[t.Key()] = t.Coeff
	}
	type bondVals map[[2]int]float64
	bonds := map[string]bondVals{}
	fields := map[string]map[int]float64{}
	bondPull := map[[2]int]float64{}
	sitePull := make([]float64, n)
	for _, t := range d.fitted.Terms {
		if !finiteAll(t.Coeff, t.Stderr) || !(t.Stderr > 0) {
			return nil, fmt.Errorf("term %s: no finite value with an error bar", t.Key())
		}
		z := math.Abs(t.Coeff-truth[t.Key()]) / t.Stderr
		switch len(t.Sites) {
		case 2:
			key := [2]int{t.Sites[0], t.Sites[1]}
			if bonds[t.Pauli] == nil {
				bonds[t.Pauli] = bondVals{}
			}
			bonds[t.Pauli][key] = t.Coeff
			bondPull[key] = math.Max(bondPull[key], z)
		case 1:
			if fields[t.Pauli] == nil {
				fields[t.Pauli] = map[int]float64{}
			}
			fields[t.Pauli][t.Sites[0]] = t.Coeff
			sitePull[t.Sites[0]] = math.Max(sitePull[t.Sites[0]], z)
		}
	}
	const pullMax = 3.0

	const panelW, barSpace = 330.0, 95.0
	c := newSVGCanvas(2*panelW+90, 2*(panelW+barSpace)+95)
	c.text(30, 30, fmt.Sprintf("The fitted %dx%d array: couplings on the bonds, fields on the sites", d.sc.Width, d.sc.Height), textOpt{Size: 16, Bold: true})
	c.text(30, 50, fmt.Sprintf("bond width grows with |coupling|; the dashed square is the %dx%d patch of step 4", d.sc.Patch, d.sc.Patch), textOpt{Size: 12, Color: "#444"})

	// Site positions scaled into a panel, y growing upwards.
	minX, maxX, minY, maxY := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for _, p := range l.Coords {
		minX, maxX = math.Min(minX, p[0]), math.Max(maxX, p[0])
		minY, maxY = math.Min(minY, p[1]), math.Max(maxY, p[1])
	}
	span := math.Max(math.Max(maxX-minX, maxY-minY), 1)
	const margin = 28.0
	scale := (panelW - 2*margin) / span
	pos := func(ox, oy float64, i int) (float64, float64) {
		p := l.Coords[i]
		return ox + margin + (p[0]-minX)*scale, oy + panelW - margin - (p[1]-minY)*scale
	}
	siteR := math.Min(11, 0.22*scale)

	type layer struct {
		label string
		scale colourScale
		value func(key [2]int, site int) (float64, bool)
	}
	bondLayer := func(letters string) *layer {
		m := bonds[letters]
		if m == nil {
			return nil
		}
		var vals []float64
		for _, v := range m {
			vals = append(vals, v)
		}
		return &layer{letters + " coupling", newColourScale(vals), func(k [2]int, _ int) (float64, bool) { v, ok := m[k]; return v, ok }}
	}
	siteLayer := func(letter string) *layer {
		m := fields[letter]
		if m == nil {
			return nil
		}
		var vals []float64
		for _, v := range m {
			vals = append(vals, v)
		}
		return &layer{letter + " field", newColourScale(vals), func(_ [2]int, i int) (float64, bool) { v, ok := m[i]; return v, ok }}
	}
	type panelSpec struct {
		title      string
		bond, site *layer
		pulls      bool
	}
	panels := []panelSpec{
		{title: "XX couplings, X fields", bond: bondLayer("XX"), site: siteLayer("X")},
		{title: "YY couplings (no Y field)", bond: bondLayer("YY"), site: siteLayer("Y")},
		{title: "ZZ couplings, Z fields", bond: bondLayer("ZZ"), site: siteLayer("Z")},
		{title: "pulls: largest |fit - true|/stderr", pulls: true},
	}
	for pi, ps := range panels {
		ox := 30 + float64(pi%2)*(panelW+30)
		oy := 85 + float64(pi/2)*(panelW+barSpace+10)
		c.text(ox, oy-8, ps.title, textOpt{Size: 13, Bold: true})
		c.rect(ox, oy, panelW, panelW, svgStyle{Stroke: "#bbb", Width: 0.8})
		bmax := 0.0
		if ps.bond != nil {
			bmax = math.Max(math.Abs(ps.bond.scale.lo), math.Abs(ps.bond.scale.hi))
		}
		for _, b := range l.NN {
			x1, y1 := pos(ox, oy, b.I)
			x2, y2 := pos(ox, oy, b.J)
			key := [2]int{b.I, b.J}
			switch {
			case ps.pulls:
				c.line(x1, y1, x2, y2, svgStyle{Stroke: pullColor(bondPull[key] / pullMax), Width: 5})
			case ps.bond != nil:
				if v, ok := ps.bond.value(key, 0); ok {
					c.line(x1, y1, x2, y2, svgStyle{Stroke: ps.bond.scale.color(v), Width: 1.5 + 6*math.Abs(v)/bmax})
					continue
				}
				fallthrough
			default:
				c.line(x1, y1, x2, y2, svgStyle{Stroke: "#ddd", Width: 1})
			}
		}
		for i := 0; i < n; i++ {
			x, y := pos(ox, oy, i)
			switch {
			case ps.pulls:
				c.circle(x, y, siteR, svgStyle{Fill: pullColor(sitePull[i] / pullMax), Stroke: "#555", Width: 0.8})
			case ps.site != nil:
				if v, ok := ps.site.value([2]int{}, i); ok {
					c.circle(x, y, siteR, svgStyle{Fill: ps.site.scale.color(v), Stroke: "#555", Width: 0.8})
					continue
				}
				fallthrough
			default:
				c.circle(x, y, siteR*0.55, svgStyle{Fill: "#f4f4f4", Stroke: "#999", Width: 0.8})
			}
		}
		// Outline the patch checked against exact methods.
		ps0 := d.sc.patchSites()
		xa, ya := pos(ox, oy, ps0[0])
		xb, yb := pos(ox, oy, ps0[len(ps0)-1])
		pad := siteR + 5
		c.rect(math.Min(xa, xb)-pad, math.Min(ya, yb)-pad, math.Abs(xb-xa)+2*pad, math.Abs(yb-ya)+2*pad,
			svgStyle{Stroke: "#333", Width: 1.2, Dash: "5,3"})

		by := oy + panelW + 14
		bx := ox + 120
		bw := panelW - 130
		switch {
		case ps.pulls:
			c.colorBarH(bx, by, bw, 11, 0, pullMax, pullColor, "|pull| (clamped at 3)")
		default:
			if ps.bond != nil {
				ps.bond.scale.bar(c, bx, by, bw, "bond: "+ps.bond.label)
			}
			if ps.site != nil {
				ps.site.scale.bar(c, bx, by+34, bw, "site: "+ps.site.label)
			}
		}
	}
	return c, nil
}

// pullColor maps |pull|/3 to a light-to-dark red scale.
func pullColor(t float64) string { return sequentialColor(t) }

// niceCeil rounds v up to 1, 2, 2.5 or 5 times a power of ten.
func niceCeil(v float64) float64 {
	if !(v > 0) {
		return 1
	}
	mag := math.Pow(10, math.Floor(math.Log10(v)))
	for _, m := range []float64{1, 1.5, 2, 2.5, 3, 4, 5, 6, 8, 10} {
		if v <= m*mag*(1+1e-9) {
			return m * mag
		}
	}
	return 10 * mag
}

// figThermo: energy and heat capacity per site against beta, with the
// trusted range and the operating point.
func (d *demoRun) figThermo() (*svgCanvas, error) {
	t := d.temp
	if t == nil || t.Scan == nil {
		return nil, fmt.Errorf("no thermodynamic scan")
	}
	r := t.Scan
	L := r.Order
	nsite := float64(r.NumSites)
	betas := r.Betas
	// The fit's order and up to two below: where they part, the series
	// has stopped converging.
	var orders []int
	for o := L; o >= max(1, L-2); o-- {
		orders = append(orders, o)
	}
	series := func(q [][]float64, o int) []float64 {
		out := make([]float64, len(betas))
		for i := range betas {
			out[i] = q[i][o-1] / nsite
		}
		return out
	}
	c := newSVGCanvas(860, 720)
	c.text(30, 30, fmt.Sprintf("Thermodynamics of the fitted model (order-%d expansion)", L), textOpt{Size: 16, Bold: true})
	c.text(30, 50, "the series are trusted where successive orders agree; beyond, the expansion needs larger clusters",
		textOpt{Size: 12, Color: "#444"})
	quantities := []struct {
		label string
		data  [][]float64
	}{{"energy per site", r.Energy}, {"heat capacity per site", r.HeatCapacity}}
	edge := betas[len(betas)-1]
	if t.Edge > 0 {
		edge = (t.LastGood + t.Edge) / 2
		if t.LastGood == 0 {
			edge = betas[0]
		}
	}
	xmax := betas[len(betas)-1]
	for qi, q := range quantities {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, o := range orders {
			for i, v := range series(q.data, o) {
				if !finiteAll(v) {
					return nil, fmt.Errorf("%s at beta %g: non-finite", q.label, betas[i])
				}
				// The range follows the trusted part and a little beyond,
				// so that a diverging low order does not flatten the plot.
				if betas[i] <= math.Min(xmax, 1.3*edge) || o == L {
					lo, hi = math.Min(lo, v), math.Max(hi, v)
				}
			}
		}
		lo, hi = math.Min(lo, 0), math.Max(hi, 0)
		p := newPanel(c, 100, 90+float64(qi)*310, 700, 240, 0, xmax, lo, hi)
		p.setX(0, xmax, true)
		p.clip()
		c.rect(p.X(0), p.y, p.X(math.Min(edge, p.xmax))-p.X(0), p.h, svgStyle{Fill: "#e3f2e1"})
		c.endGroup()
		p.frame(map[int]string{0: "", 1: "inverse temperature beta"}[qi], q.label)
		p.clip()
		styles := []svgStyle{{Stroke: "#1f4e8c", Width: 2.2}, {Stroke: "#3f7fc0", Width: 1.5, Dash: "7,5"}, {Stroke: "#7fa9d6", Width: 1.5, Dash: "2,3"}}
		var allX, allY []float64
		for j, o := range orders {
			ys := series(q.data, o)
			p.curve(betas, ys, styles[j])
			allX = append(allX, betas...)
			allY = append(allY, ys...)
		}
		xo := p.X(d.sc.Beta)
		c.line(xo, p.y, xo, p.y+p.h, svgStyle{Stroke: "#c0392b", Width: 2})
		if b := t.Bound.Beta; b > p.xmin && b < p.xmax {
			c.line(p.X(b), p.y, p.X(b), p.y+p.h, svgStyle{Stroke: "#777", Width: 1.2, Dash: "2,3"})
		}
		c.endGroup()
		if b := t.Bound.Beta; b > p.xmin && b < p.xmax {
			c.text(p.X(b)+4, p.y+p.h-8, "sufficient bound", textOpt{Size: 10.5, Color: "#666", Rotate: -90})
		}
		c.text(xo+5, p.y+16, fmt.Sprintf("operating beta = %s", fmtFloat(d.sc.Beta)), textOpt{Size: 12, Color: "#c0392b"})
		if qi == 0 {
			var entries []legendEntry
			for j, o := range orders {
				entries = append(entries, legendEntry{Label: fmt.Sprintf("order %d", o), Line: styles[j]})
			}
			entries = append(entries,
				legendEntry{Label: fmt.Sprintf("converged (tol %g per site)", d.sc.ThermoTol), Swatch: "#e3f2e1"},
				legendEntry{Label: "operating point", Line: svgStyle{Stroke: "#c0392b", Width: 2}})
			p.legendAvoiding(allX, allY, entries)
		}
	}
	note := fmt.Sprintf("energy and heat capacity converge up to beta = %s (first failure at %s); the sufficient-condition bound is beta < %.2g",
		fmtFloat(t.LastGood), fmtFloat(t.Edge), t.Bound.Beta)
	if t.Edge == 0 {
		note = fmt.Sprintf("energy and heat capacity converge over the whole scan; the sufficient-condition bound is beta < %.2g", t.Bound.Beta)
	}
	c.text(100, 700, note, textOpt{Size: 12, Color: "#444"})
	return c, nil
}
