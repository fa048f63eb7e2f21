package main

import (
	"fmt"
	"math"

	"warmfit/cluster"
	"warmfit/cmd/warmfit/internal/plot"
)

// figSweep draws energy and heat capacity per site of the fitted model
// against beta at the fit's order and the two below: where they part,
// the series has stopped converging. The trusted range is shaded, the
// operating beta and the sufficient-condition bound marked.
func (d *demoRun) figSweep() (*plot.Document, error) {
	t := d.temp
	r := t.Sweep
	var orders []int // the fit's first
	for o := r.Order; o >= max(1, r.Order-2); o-- {
		orders = append(orders, o)
	}
	top := r.Betas[len(r.Betas)-1]
	edge := top // where the shaded, trusted range ends
	switch {
	case t.Edge > 0 && t.LastGood > 0:
		edge = (t.LastGood + t.Edge) / 2
	case t.Edge > 0:
		edge = 0
	}
	quantities := []sweepQuantity{{"energy per site", "E / N", r.Energy}, {"heat capacity per site", "C / N", r.HeatCapacity}}
	rows := make([]plot.Row, len(quantities))
	for qi, q := range quantities {
		rows[qi] = q.row(r, orders, edge)
	}
	doc := plot.New(860, 700, "thermodynamics of the fitted model")
	head := doc.Heading(fmt.Sprintf("Thermodynamics of the fitted model (order-%d expansion)", r.Order),
		"the series are trusted where successive orders agree; beyond, the expansion needs larger clusters")
	panels := doc.Stack(plot.Rect{X: 24, Y: head, W: 812, H: 700 - head - 40}, plot.Axis{Label: "inverse temperature β", Min: 0, Max: top}, rows...)
	styles := []plot.Stroke{
		plot.CurveStroke(plot.Category(0)),
		{Color: plot.Category(3), Width: 1.4, Dash: []float64{7, 4}},
		{Color: plot.Category(1), Width: 1.4, Dash: []float64{2, 3}},
	}
	trusted := plot.TrustedFill()
	operating := plot.CurveStroke(plot.Category(7))
	for qi, p := range panels {
		if edge > 0 {
			p.ShadeX(0, edge, trusted)
		}
		// The fit's order last, on top: where the orders agree, it is
		// the one seen.
		for j := len(orders) - 1; j >= 0; j-- {
			p.Line(r.Betas, quantities[qi].perSite(r, orders[j]), styles[j])
		}
		p.VLine(d.sc.Beta, operating, fmt.Sprintf("operating β = %s", fmtFloat(d.sc.Beta)))
		if b := t.Bound.Beta; b > 0 && b < top {
			p.VLine(b, plot.ReferenceStroke(true), "sufficient bound")
		}
	}
	var entries []plot.LegendEntry
	for j, o := range orders {
		entries = append(entries, plot.LegendEntry{Label: fmt.Sprintf("order %d", o), Line: styles[j]})
	}
	panels[0].Legend(append(entries, plot.LegendEntry{Label: fmt.Sprintf("converged (tol %g per site)", d.sc.SweepTol), Fill: &trusted},
		plot.LegendEntry{Label: "operating point", Line: operating})...)
	note := fmt.Sprintf("energy and heat capacity converge over the whole sweep; the sufficient-condition bound is β < %.2g", t.Bound.Beta)
	if t.Edge > 0 {
		note = fmt.Sprintf("energy and heat capacity converge up to β = %s (first failure at %s); the sufficient-condition bound is β < %.2g",
			fmtFloat(t.LastGood), fmtFloat(t.Edge), t.Bound.Beta)
	}
	doc.Note(24, 700-18, 812, note)
	return doc, nil
}

// sweepQuantity is one panel of the sweep figure: a series per
// temperature and order of the sweep's result.
type sweepQuantity struct {
	title, label string
	data         [][]float64 // [temperature][order-1], whole lattice
}

// perSite returns the quantity per site at order o.
func (q sweepQuantity) perSite(r *cluster.ThermoResult, o int) []float64 {
	out := make([]float64, len(r.Betas))
	for i := range r.Betas {
		out[i] = q.data[i][o-1] / float64(r.NumSites)
	}
	return out
}

// row is the panel's y axis: the range of the fit's order everywhere and
// of the lower orders up to a little beyond the trusted edge, so that a
// diverging low order does not flatten the plot.
func (q sweepQuantity) row(r *cluster.ThermoResult, orders []int, edge float64) plot.Row {
	lo, hi := 0.0, 0.0
	for _, o := range orders {
		for i, v := range q.perSite(r, o) {
			if o == r.Order || r.Betas[i] <= 1.3*edge {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
	}
	return plot.Row{Title: q.title, Y: plot.Axis{Label: q.label, Min: lo, Max: hi}}
}
