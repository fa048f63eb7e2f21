package main

import (
	"fmt"
	"math"

	"warmfit/cmd/warmfit/internal/plot"
)

// figPulls draws the histograms of the pulls of the array and the patch,
// each with the standard normal density that honest error bars give.
func (d *demoRun) figPulls() (*plot.Document, error) {
	doc := plot.New(1000, 450, "pulls")
	top := doc.Heading("Pulls (fitted − true) / stderr: honest error bars give a standard normal", "")
	cells := plot.Rect{X: 24, Y: top, W: 952, H: 450 - top - 10}.Grid(1, 2, 30, 0)
	pullHistogram(doc, cells[0], fmt.Sprintf("array %dx%d, binomial data", d.sc.Width, d.sc.Height), d.array.Recovery)
	pullHistogram(doc, cells[1], fmt.Sprintf("patch %dx%d, exact snapshots", d.sc.Patch, d.sc.Patch), d.patch.Fit.Recovery)
	return doc, nil
}

// pullHistogram draws one panel: bins of half a standard deviation on
// [-4, 4], pulls beyond held in the end bins and counted in the legend.
func pullHistogram(doc *plot.Document, cell plot.Rect, title string, r *demoRecovery) {
	const lim = 4.0
	width := plot.NiceStep(2*lim, 16)
	nb := int(math.Round(2 * lim / width))
	edges := make([]float64, nb+1)
	for i := range edges {
		edges[i] = -lim + float64(i)*width
	}
	counts := make([]float64, nb)
	beyond := 0
	for _, z := range r.Z {
		b := int(math.Floor((z + lim) / width))
		if b < 0 || b >= nb {
			beyond++
			b = max(0, min(nb-1, b))
		}
		counts[b]++
	}
	n := float64(len(r.Z))
	peak := n * width / math.Sqrt(2*math.Pi)
	high := peak
	for _, c := range counts {
		high = math.Max(high, c)
	}
	p := doc.Panel(cell, title, plot.Axis{Label: "pull", Min: -lim, Max: lim, Tight: true},
		plot.Axis{Label: "terms per bin", Min: 0, Max: 1.15 * high, Integer: true})
	bars, outline := plot.HistogramStyle()
	p.Bars(edges, counts, bars, outline)
	var xs, ys []float64
	for k := 0; k <= 160; k++ {
		z := -lim + 2*lim*float64(k)/160
		xs, ys = append(xs, z), append(ys, peak*math.Exp(-z*z/2))
	}
	normal := plot.ReferenceStroke(false)
	p.Line(xs, ys, normal)
	entries := []plot.LegendEntry{
		{Label: fmt.Sprintf("%d pulls", len(r.Z)), Fill: &bars},
		{Label: "standard normal", Line: normal},
		{Label: fmt.Sprintf("mean %+.3f", r.PullMean)},
		{Label: fmt.Sprintf("rms %.3f", r.RMSZ)},
		{Label: fmt.Sprintf("within 2σ %.1f%%", 100*r.Within2)},
	}
	if beyond > 0 {
		entries = append(entries, plot.LegendEntry{Label: fmt.Sprintf("%d beyond ±4, in the end bins", beyond)})
	}
	p.Legend(entries...)
}
