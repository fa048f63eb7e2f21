package main

import (
	"fmt"
	"math"

	"warmfit/cmd/warmfit/internal/plot"
)

// figCoefficients draws the array's fitted coefficients against the true
// ones with their error bars and the line fitted = true, and beside it
// every term's error fitted - true, grouped by kind, so that each bar can
// be seen to cross zero or not.
func (d *demoRun) figCoefficients() (*plot.Document, error) {
	r := d.array.Recovery
	doc := plot.New(1060, 560, "fitted against true coefficients")
	top := doc.Heading(fmt.Sprintf("Fitted against true coefficients: %dx%d array, %d terms, %d shots per basis", d.sc.Width, d.sc.Height, len(r.Terms), d.sc.Shots),
		fmt.Sprintf("bars are one standard error; L2 error %s, Linf %s, median stderr %s; %.1f%% of the errors lie within 2 sigma of zero",
			fmtG3(r.L2), fmtG3(r.Linf), fmtG3(r.MedStderr), 100*r.Within2))
	cells := plot.Rect{X: 24, Y: top, W: 1012, H: 560 - top - 10}.Grid(1, 2, 40, 0)
	kinds := termKinds(r.Terms)
	coefficientScatter(doc, cells[0], r, kinds)
	coefficientErrors(doc, cells[1], r, kinds)
	return doc, nil
}

// coefficientScatter is the left panel: both axes share range and ticks,
// so that fitted = true is the diagonal.
func coefficientScatter(doc *plot.Document, cell plot.Rect, r *demoRecovery, kinds []string) {
	lo, hi := math.Inf(1), math.Inf(-1)
	for k, t := range r.Terms {
		// The range holds the error bars too, so that none is clipped.
		lo = math.Min(lo, math.Min(r.Truth[k], t.Coeff-t.Stderr))
		hi = math.Max(hi, math.Max(r.Truth[k], t.Coeff+t.Stderr))
	}
	step := plot.NiceStep(hi-lo, 8)
	p := doc.Panel(cell, "fitted vs true",
		plot.Axis{Label: "true coefficient", Min: lo, Max: hi, Step: step},
		plot.Axis{Label: "fitted coefficient", Min: lo, Max: hi, Step: step})
	ref := plot.ReferenceStroke(true)
	p.Line([]float64{lo - step, hi + step}, []float64{lo - step, hi + step}, ref)
	var legend []plot.LegendEntry
	for _, kind := range kinds {
		var x, y, e []float64
		for k, t := range r.Terms {
			if t.Pauli == kind {
				x, y, e = append(x, r.Truth[k]), append(y, t.Coeff), append(e, t.Stderr)
			}
		}
		m := plot.KindMarker(kind)
		p.ErrorBars(x, y, e, plot.ErrorBarStroke(m.Color))
		p.Points(x, y, m)
		legend = append(legend, plot.LegendEntry{Label: kind, Marker: &m})
	}
	p.Legend(append(legend, plot.LegendEntry{Label: "fitted = true", Line: ref})...)
}

// coefficientErrors is the right panel: the errors term by term, the
// kinds named under the axis between boundary ticks.
func coefficientErrors(doc *plot.Document, cell plot.Rect, r *demoRecovery, kinds []string) {
	type group struct{ xs, errs, bars []float64 }
	groups := make([]group, len(kinds))
	var ticks []plot.Tick
	n, limit := 0, 0.0
	for gi, kind := range kinds {
		first := n
		if gi > 0 {
			ticks = append(ticks, plot.Tick{Value: float64(first) - 0.5})
		}
		g := &groups[gi]
		for k, t := range r.Terms {
			if t.Pauli != kind {
				continue
			}
			e := t.Coeff - r.Truth[k]
			g.xs, g.errs, g.bars = append(g.xs, float64(n)), append(g.errs, e), append(g.bars, t.Stderr)
			limit = math.Max(limit, math.Abs(e)+t.Stderr)
			n++
		}
		ticks = append(ticks, plot.Tick{Value: float64(first+n-1) / 2, Label: kind, Color: plot.KindMarker(kind).Color, LabelOnly: true})
	}
	p := doc.Panel(cell, "error fitted − true, term by term",
		plot.Axis{Label: "terms, grouped by kind", Min: -2, Max: float64(n) + 1, Tight: true, Ticks: ticks},
		plot.Axis{Label: "fitted − true", Min: -limit, Max: limit})
	p.HLine(0, plot.ReferenceStroke(true), "")
	for gi, g := range groups {
		m := plot.KindMarker(kinds[gi])
		m.Size = 2.6
		p.ErrorBars(g.xs, g.errs, g.bars, plot.ErrorBarStroke(m.Color))
		p.Points(g.xs, g.errs, m)
	}
}
