package plot

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"warmfit/lattice"
)

// Sample figures of every kind the commands draw, on invented data with
// fixed seeds: the test checks them as documents and renders them.

// Every sample figure is a well-formed SVG without a non-finite number,
// the same bytes when drawn twice, and, where rsvg-convert is installed,
// renders to a PNG. The files go to the test's temporary directory.
func TestSampleFigures(t *testing.T) {
	first, err := sampleFigures()
	if err != nil {
		t.Fatal(err)
	}
	second, err := sampleFigures()
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	converter, _ := exec.LookPath("rsvg-convert")
	for i, s := range first {
		doc := render(t, s.name, s.doc)
		checkSVG(t, s.name, doc)
		if again := render(t, s.name, second[i].doc); !bytes.Equal(doc, again) {
			t.Errorf("%s: two drawings differ", s.name)
		}
		path := filepath.Join(dir, s.name+".svg")
		if err := os.WriteFile(path, doc, 0o644); err != nil {
			t.Fatal(err)
		}
		if converter == "" || testing.Short() {
			continue
		}
		png := filepath.Join(dir, s.name+".png")
		if out, err := exec.Command(converter, "-o", png, path).CombinedOutput(); err != nil {
			t.Errorf("%s: rsvg-convert: %v\n%s", s.name, err, out)
			continue
		}
		if fi, err := os.Stat(png); err != nil || fi.Size() < 1000 {
			t.Errorf("%s: no PNG image: %v", s.name, err)
		}
	}
}

type sample struct {
	name string
	doc  *Document
}

func sampleFigures() ([]sample, error) {
	var out []sample
	add := func(name string, d *Document) { out = append(out, sample{name, d}) }
	add("coefficients", sampleCoefficients())
	add("pulls", samplePulls())
	add("thermo", sampleThermo())
	add("materials", sampleMaterials())
	add("crosscheck", sampleCrosscheck())
	add("scales", sampleScales())
	m, err := sampleLatticeMaps()
	if err != nil {
		return nil, err
	}
	add("lattice-maps", m)
	for _, spec := range []string{"square:4x4:periodic", "honeycomb:3x3:periodic:shells=2", "kagome:2x3", "cubic:3x3x3:periodic", "triangular:5x4", "chain:12:periodic", "ladder:8"} {
		l, err := lattice.Open(spec)
		if err != nil {
			return nil, err
		}
		add("lattice-"+strings.ReplaceAll(spec, ":", "-"), LatticeFigure(LatticeGeometry(l)))
	}
	return out, nil
}

// sampleTerms invents the terms of a 6x6 array: kind, true value,
// fitted value, error bar.
func sampleTerms() (kinds []string, truth, fitted, stderr []float64) {
	rng := rand.New(rand.NewPCG(7, 11))
	for _, k := range []struct {
		kind   string
		n      int
		centre float64
	}{{"XX", 60, 1}, {"YY", 60, 0.8}, {"ZZ", 60, 0.45}, {"X", 36, -0.3}, {"Z", 36, 0.15}} {
		for range k.n {
			t := k.centre + 0.1*rng.NormFloat64()
			s := 0.01 + 0.01*rng.Float64()
			kinds = append(kinds, k.kind)
			truth = append(truth, t)
			stderr = append(stderr, s)
			fitted = append(fitted, t+s*rng.NormFloat64())
		}
	}
	return
}

func sampleCoefficients() *Document {
	kinds, truth, fitted, stderr := sampleTerms()
	d := New(1060, 540, "fitted against true coefficients")
	top := d.Heading("Fitted against true coefficients: 6x6 array, 252 terms, 2000 shots per basis",
		"bars are one standard error; the dashed line is fitted = true")
	lo, hi := math.Inf(1), math.Inf(-1)
	for i := range truth {
		lo = math.Min(lo, math.Min(truth[i], fitted[i]))
		hi = math.Max(hi, math.Max(truth[i], fitted[i]))
	}
	left := d.Panel(Rect{24, top, 470, 460}, "fitted vs true",
		Axis{Label: "true coefficient", Min: lo, Max: hi, Step: NiceStep(hi-lo, 6)}, Axis{Label: "fitted coefficient", Min: lo, Max: hi, Step: NiceStep(hi-lo, 6)})
	ref := ReferenceStroke(true)
	left.Line([]float64{lo - 1, hi + 1}, []float64{lo - 1, hi + 1}, ref)
	var legend []LegendEntry
	byKind := map[string][]int{}
	var order []string
	for i, k := range kinds {
		if byKind[k] == nil {
			order = append(order, k)
		}
		byKind[k] = append(byKind[k], i)
	}
	for _, k := range order {
		var x, y, e []float64
		for _, i := range byKind[k] {
			x, y, e = append(x, truth[i]), append(y, fitted[i]), append(e, stderr[i])
		}
		m := KindMarker(k)
		left.ErrorBars(x, y, e, ErrorBarStroke(m.Color))
		left.Points(x, y, m)
		legend = append(legend, LegendEntry{Label: k, Marker: &m})
	}
	legend = append(legend, LegendEntry{Label: "fitted = true", Line: ref})
	left.Legend(legend...)

	// Errors term by term, grouped by kind, group names under the axis.
	var ticks []Tick
	var xs, es, bars []float64
	var cols []MarkerStyle
	pos := 0
	for gi, k := range order {
		if gi > 0 {
			ticks = append(ticks, Tick{Value: float64(pos) - 0.5})
		}
		n := len(byKind[k])
		ticks = append(ticks, Tick{Value: float64(pos) + float64(n-1)/2, Label: k, Color: KindMarker(k).Color, LabelOnly: true})
		for _, i := range byKind[k] {
			xs = append(xs, float64(pos))
			es = append(es, fitted[i]-truth[i])
			bars = append(bars, stderr[i])
			cols = append(cols, KindMarker(k))
			pos++
		}
	}
	elim := 0.0
	for i := range es {
		elim = math.Max(elim, math.Abs(es[i])+bars[i])
	}
	right := d.Panel(Rect{530, top, 510, 460}, "error fitted − true, term by term",
		Axis{Label: "terms, grouped by kind", Min: -3, Max: float64(pos) + 2, Tight: true, Ticks: ticks},
		Axis{Label: "fitted − true", Min: -elim, Max: elim})
	right.HLine(0, ref, "")
	for i := range xs {
		right.ErrorBars(xs[i:i+1], es[i:i+1], bars[i:i+1], ErrorBarStroke(cols[i].Color))
		m := cols[i]
		m.Size = 2.6
		right.Points(xs[i:i+1], es[i:i+1], m)
	}
	return d
}

func samplePulls() *Document {
	d := New(1000, 450, "pulls")
	top := d.Heading("Pulls (fitted − true) / stderr: honest error bars give a standard normal", "")
	for i, set := range []struct {
		title string
		seed  uint64
		n     int
		scale float64
	}{{"array 6x6, binomial data", 3, 252, 1}, {"patch 3x3, exact snapshots", 5, 33, 1.3}} {
		rng := rand.New(rand.NewPCG(set.seed, 1))
		pulls := make([]float64, set.n)
		for k := range pulls {
			pulls[k] = set.scale * rng.NormFloat64()
		}
		const lim = 4.0
		width := NiceStep(2*lim, 16)
		edges := make([]float64, 0, 17)
		for e := -lim; e <= lim+1e-9; e += width {
			edges = append(edges, e)
		}
		counts := make([]float64, len(edges)-1)
		for _, z := range pulls {
			b := max(0, min(len(counts)-1, int(math.Floor((z+lim)/width))))
			counts[b]++
		}
		peak := float64(set.n) * width / math.Sqrt(2*math.Pi)
		top2 := peak
		for _, c := range counts {
			top2 = math.Max(top2, c)
		}
		p := d.Panel(Rect{24 + float64(i)*490, top, 460, 360}, set.title,
			Axis{Label: "pull", Min: -lim, Max: lim, Tight: true}, Axis{Label: "terms per bin", Min: 0, Max: top2 * 1.15})
		bars, outline := HistogramStyle()
		p.Bars(edges, counts, bars, outline)
		var xs, ys []float64
		for k := 0; k <= 160; k++ {
			z := -lim + 2*lim*float64(k)/160
			xs = append(xs, z)
			ys = append(ys, peak*math.Exp(-z*z/2))
		}
		normal := ReferenceStroke(false)
		p.Line(xs, ys, normal)
		mean, rms := 0.0, 0.0
		for _, z := range pulls {
			mean += z
			rms += z * z
		}
		mean /= float64(set.n)
		rms = math.Sqrt(rms / float64(set.n))
		p.Legend(
			LegendEntry{Label: fmt.Sprintf("%d pulls", set.n), Fill: &bars},
			LegendEntry{Label: "standard normal", Line: normal},
			LegendEntry{Label: fmt.Sprintf("mean %+.3f", mean)},
			LegendEntry{Label: fmt.Sprintf("rms %.3f", rms)},
		)
	}
	return d
}

func sampleThermo() *Document {
	d := New(860, 700, "thermodynamics")
	top := d.Heading("Thermodynamics of the fitted model (order-6 expansion)",
		"the series are trusted where successive orders agree; beyond, the expansion needs larger clusters")
	var betas []float64
	for b := 0.0; b <= 1.2+1e-9; b += 0.02 {
		betas = append(betas, b)
	}
	orders := []int{6, 5, 4}
	energy := func(b float64, o int) float64 { return -math.Tanh(b) - 0.05*math.Pow(1.6*b, float64(o)) }
	heat := func(b float64, o int) float64 {
		return b * b / math.Pow(math.Cosh(b), 2) * (1 + 0.08*math.Pow(1.5*b, float64(o)))
	}
	panels := d.Stack(Rect{24, top, 812, 700 - top - 60}, Axis{Label: "inverse temperature β", Min: 0, Max: 1.2},
		Row{Title: "energy per site", Y: Axis{Label: "E / N", Min: -1.6, Max: 0}},
		Row{Title: "heat capacity per site", Y: Axis{Label: "C / N", Min: 0, Max: 0.6}})
	styles := []Stroke{
		{Color: Category(0), Width: weightData},
		{Color: Category(3), Width: 1.4, Dash: []float64{7, 4}},
		{Color: Category(1), Width: 1.4, Dash: []float64{2, 3}},
	}
	for qi, p := range panels {
		p.ShadeX(0, 0.74, TrustedFill())
		for oi, o := range orders {
			ys := make([]float64, len(betas))
			for i, b := range betas {
				if qi == 0 {
					ys[i] = energy(b, o)
				} else {
					ys[i] = heat(b, o)
				}
			}
			p.Line(betas, ys, styles[oi])
		}
		op := Stroke{Color: Category(7), Width: weightData}
		p.VLine(0.45, op, "operating β = 0.45")
		if qi == 0 {
			var entries []LegendEntry
			for oi, o := range orders {
				entries = append(entries, LegendEntry{Label: fmt.Sprintf("order %d", o), Line: styles[oi]})
			}
			trusted := TrustedFill()
			entries = append(entries, LegendEntry{Label: "converged (tol 1e-3 per site)", Fill: &trusted},
				LegendEntry{Label: "operating point", Line: op})
			p.Legend(entries...)
		}
	}
	d.Note(24, 700-30, 812, "energy and heat capacity converge up to β = 0.74 (first failure at 0.76); the sufficient-condition bound is β < 0.31")
	return d
}

func sampleMaterials() *Document {
	d := New(900, 560, "bulk fit")
	top := d.Heading("Susceptibility of the invented compound: data and the fitted Heisenberg chain", "the shaded temperatures are those the expansion is trusted at; residuals below in units of the data's error")
	rng := rand.New(rand.NewPCG(21, 4))
	chi := func(T float64) float64 { return 0.25 / (T + 0.6) * (1 - 0.3*math.Exp(-T)) }
	var Ts, data, errs, fitT, fit, res, ones []float64
	for T := 0.4; T <= 6; T += 0.2 {
		e := 0.002 + 0.01*chi(T)
		Ts = append(Ts, T)
		data = append(data, chi(T)+e*rng.NormFloat64())
		errs = append(errs, e)
	}
	for T := 0.3; T <= 6.1; T += 0.05 {
		fitT = append(fitT, T)
		fit = append(fit, chi(T)*1.005)
	}
	for i, T := range Ts {
		res = append(res, (data[i]-chi(T)*1.005)/errs[i])
		ones = append(ones, 1)
	}
	ps := d.Stack(Rect{24, top, 852, 560 - top - 10}, Axis{Label: "temperature T / J", Min: 0.3, Max: 6.1, Tight: true},
		Row{Title: "χ(T)", Y: Axis{Label: "χ J / (g μB)²", Min: 0, Max: 0.2}, Weight: 3},
		Row{Y: Axis{Label: "residual / σ", Min: -3.5, Max: 3.5, Tight: true}, Weight: 1.2})
	trusted := TrustedFill()
	for _, p := range ps {
		p.ShadeX(1.2, 6.1, trusted)
	}
	m := CategoryMarker(0)
	ps[0].ErrorBars(Ts, data, errs, Stroke{Color: m.Color, Width: weightThin})
	ps[0].Points(Ts, data, m)
	curve := Stroke{Color: Category(7), Width: weightData}
	ps[0].Line(fitT, fit, curve)
	ps[0].Legend(LegendEntry{Label: "measured", Marker: &m}, LegendEntry{Label: "fit, J = 1.005(8)", Line: curve},
		LegendEntry{Label: "trusted range", Fill: &trusted})
	ps[1].ShadeY(-1, 1, Fill{Color: gridColor, Alpha: 0.6})
	ps[1].HLine(0, Stroke{Color: refColor, Width: weightThin}, "")
	ps[1].ErrorBars(Ts, res, ones, Stroke{Color: m.Color, Width: weightThin})
	ps[1].Points(Ts, res, m)
	return d
}

func sampleCrosscheck() *Document {
	d := New(640, 440, "crosscheck")
	top := d.Heading("Expansion against exact diagonalisation of 3x3 patches", "")
	p := d.Panel(Rect{24, top, 592, 440 - top - 10}, "largest difference per site",
		Axis{Label: "expansion order", Min: 1, Max: 8, Integer: true}, Axis{Label: "|expansion − exact| per site", Min: 1e-9, Max: 0.3, Log: true})
	orders := []float64{2, 3, 4, 5, 6, 7, 8}
	for i, beta := range []float64{0.2, 0.4, 0.6} {
		var ys []float64
		for _, o := range orders {
			ys = append(ys, 0.5*math.Pow(beta*1.4, o+1))
		}
		m := CategoryMarker(i)
		p.Line(orders, ys, Stroke{Color: m.Color, Width: weightData})
		p.Points(orders, ys, m)
	}
	p.HLine(1e-6, Stroke{Color: refColor, Width: weightThin, Dash: []float64{6, 4}}, "tolerance 10⁻⁶")
	var entries []LegendEntry
	for i, beta := range []float64{0.2, 0.4, 0.6} {
		m := CategoryMarker(i)
		entries = append(entries, LegendEntry{Label: fmt.Sprintf("β = %.1f", beta), Marker: &m, Line: Stroke{Color: m.Color, Width: weightData}})
	}
	p.Legend(entries...)
	return d
}

func sampleScales() *Document {
	d := New(760, 330, "colour scales")
	top := d.Heading("The house colour scales", "sequential and diverging, designed in OKLab; the term-kind colours and shapes below")
	seq := ColorMap{Scale: Sequential, Min: 0, Max: 3, Label: "sequential: |pull|"}
	div := ColorMap{Scale: Diverging, Min: -2, Max: 2, Label: "diverging: coefficient − mean"}
	d.ColorBar(Rect{40, top + ColorBarAbove, 680, 18}, seq)
	d.ColorBar(Rect{40, top + 2*ColorBarAbove + ColorBarBelow + 24, 680, 18}, div)
	y := top + 3*ColorBarAbove + 2*ColorBarBelow + 80
	for i, k := range termKinds {
		x := 60 + float64(i)*75
		d.Marker(x, y, MarkerStyle{Shape: KindMarker(k).Shape, Color: KindMarker(k).Color, Size: 7})
		d.Text(x, y+24, k, TextStyle{Size: sizeLegend, Anchor: Middle})
	}
	return d
}

func sampleLatticeMaps() (*Document, error) {
	l, err := lattice.Open("square:6x6")
	if err != nil {
		return nil, err
	}
	g := LatticeGeometry(l)
	rng := rand.New(rand.NewPCG(9, 9))
	couplings := map[lattice.Bond]float64{}
	var cv []float64
	for _, b := range l.NN {
		v := 1 + 0.15*rng.NormFloat64()
		couplings[b] = v
		cv = append(cv, v)
	}
	fields := map[int]float64{}
	var fv []float64
	for i := range l.Coords {
		v := 0.3 * rng.NormFloat64()
		fields[i] = v
		fv = append(fv, v)
	}
	bondPull := map[lattice.Bond]float64{}
	sitePull := map[int]float64{}
	var pv []float64
	for _, b := range l.NN {
		bondPull[b] = rng.NormFloat64()
		pv = append(pv, bondPull[b])
	}
	for i := range l.Coords {
		sitePull[i] = rng.NormFloat64()
		pv = append(pv, sitePull[i])
	}
	bondMap, err := AutoColorMap("XX coupling", cv)
	if err != nil {
		return nil, err
	}
	siteMap, err := AutoColorMap("X field", fv)
	if err != nil {
		return nil, err
	}
	pullMap, err := NewColorMap(Diverging, "pull (fitted − true)/stderr", pv)
	if err != nil {
		return nil, err
	}
	d := New(760, 500, "lattice maps")
	top := d.Heading("The fitted 6x6 array: couplings on the bonds, fields on the sites",
		"bond width grows with |coupling|; the dashed square is the 3x3 patch checked exactly")
	patch := []int{0, 1, 2, 6, 7, 8, 12, 13, 14}
	cells := Rect{24, top, 712, 500 - top}.Grid(1, 2, 30, 0)
	for i, spec := range []struct {
		title string
		ls    LatticeLayers
		maps  []ColorMap
	}{
		{"XX couplings, X fields", LatticeLayers{BondValues: couplings, BondMap: bondMap, SiteValues: fields, SiteMap: siteMap, WidenBonds: true, Numbers: true}, []ColorMap{bondMap, siteMap}},
		{"pulls per bond and site", LatticeLayers{BondValues: bondPull, BondMap: pullMap, SiteValues: sitePull, SiteMap: pullMap}, []ColorMap{pullMap}},
	} {
		x := cells[i].X
		d.Subheading(x, top+8, spec.title)
		box := Rect{x, top + 16, cells[i].W, 300}
		v := d.Lattice(box, g, spec.ls)
		v.Outline(patch, "patch")
		for k, m := range spec.maps {
			d.ColorBar(Rect{x + 20, box.Bottom() + 14 + ColorBarAbove + float64(k)*(ColorBarAbove+ColorBarBelow+12), 300, 10}, m)
		}
	}
	return d, nil
}
