package main

import (
	"fmt"
	"io"
	"math"
	"slices"

	"warmfit/cmd/warmfit/internal/plot"
	"warmfit/fit/bulk"
)

// writeBulkFigures writes one SVG per measured quantity into dir: the
// data with error bars, each fitted candidate's curve drawn only where
// its forward model trusts it, the best candidate's trusted range
// shaded, and the residuals in units of the errors below.
func writeBulkFigures(dir string, r *bulkRun) error {
	if err := ensureDir(dir); err != nil {
		return err
	}
	for _, quantity := range []bulk.Quantity{bulk.Susceptibility, bulk.HeatCapacity, bulk.Magnetization} {
		var series []int
		for s, ser := range r.job.data {
			if ser.Quantity == quantity {
				series = append(series, s)
			}
		}
		if len(series) == 0 {
			continue
		}
		doc, err := bulkFigure(r, quantity, series)
		if err != nil {
			return err
		}
		path := figurePath(dir, quantity)
		if err := writeFileAtomic(path, func(w io.Writer) error {
			if _, err := doc.WriteTo(w); err != nil {
				return fmt.Errorf("figure %s: %w", path, err)
			}
			return nil
		}); err != nil {
			return err
		}
	}
	return nil
}

var quantityTitles = map[bulk.Quantity][2]string{
	bulk.Susceptibility: {"Magnetic susceptibility", "χ (emu/mol)"},
	bulk.HeatCapacity:   {"Specific heat", "C (J/(mol K))"},
	bulk.Magnetization:  {"Magnetisation", "M (μB/f.u.)"},
}

// bulkFigure draws one quantity.
func bulkFigure(r *bulkRun, q bulk.Quantity, series []int) (*plot.Document, error) {
	cmp := r.cmp
	best := cmp.Ranking[0]
	xLabel, xOf := "temperature T (K)", func(p bulk.Point) float64 { return p.T }
	if q == bulk.Magnetization {
		xLabel, xOf = "field μ0H (T)", func(p bulk.Point) float64 { return p.H }
	}
	var xs, ys []float64
	for _, s := range series {
		for _, p := range r.job.data[s].Points {
			xs, ys = append(xs, xOf(p)), append(ys, p.Value)
		}
	}
	xlo, xhi := slices.Min(xs), slices.Max(xs)
	ylo, yhi := slices.Min(ys), slices.Max(ys)
	logX := q != bulk.Magnetization && xlo > 0 && xhi/xlo > 8
	xAxis := plot.Axis{Label: xLabel, Min: xlo, Max: xhi, Log: logX}
	if q == bulk.Magnetization {
		// Room right of the sweeps for their temperature labels.
		xAxis = plot.Axis{Label: xLabel, Min: math.Min(0, xlo), Max: xhi + 0.2*(xhi-math.Min(0, xlo)), Tight: true}
	}
	pad := 0.06 * (yhi - ylo)
	yMin := ylo - pad
	if ylo > 0 {
		// Positive data (C, and chi or M of an antiferromagnet) keep
		// the axis at or above zero.
		yMin = math.Max(0, yMin)
	}
	d := plot.New(900, 600, "warmfit bulk: "+q.String())
	bestFit := cmp.Own[best]
	global := fmt.Sprintf("best: %s, χ²/dof = %.1f/%d over all curves; the legend gives each candidate's χ² over this quantity's fitted points", cmp.Candidates[best].Name, bestFit.Chi2, bestFit.DOF)
	sub := fmt.Sprintf("%s. Curves are drawn only where the model is trusted; the shaded band is the best candidate's trusted range. Residuals are (data − model)/σ; the grey band is ±1.", global)
	if q == bulk.Magnetization {
		sub = fmt.Sprintf("%s. One curve per temperature, labelled at its right end; hollow points are at temperatures the model does not trust and were not fitted. Residuals are (data − model)/σ; the grey band is ±1.", global)
	}
	top := d.Heading(quantityTitles[q][0]+": data and fitted models", sub)
	ps := d.Stack(plot.Rect{X: 24, Y: top, W: 852, H: 600 - top - 10}, xAxis,
		plot.Row{Title: quantityTitles[q][0], Y: plot.Axis{Label: quantityTitles[q][1], Min: yMin, Max: yhi + pad}, Weight: 3},
		plot.Row{Y: plot.Axis{Label: "residual / σ", Min: -4, Max: 4, Tight: true, Step: 2}, Weight: 1.2})
	shade := plot.Fill{Color: plot.Diverging.At(0.42), Alpha: 0.45}
	var entries []plot.LegendEntry
	if q != bulk.Magnetization {
		if from := trustedFromOf(cmp.Own[best], series); from < xhi {
			// The range is open above: the band runs to the panel's edge
			// (the plot area clips it), not only to the last point.
			beyond := xhi + 10*(xhi-xlo)
			if logX {
				beyond = 1e3 * xhi
			}
			for _, p := range ps {
				p.ShadeX(math.Max(from, xlo), beyond, shade)
			}
			entries = append(entries, plot.LegendEntry{Label: fmt.Sprintf("trusted (%s): T ≥ %.3g K", cmp.Candidates[best].Name, from), Fill: &shade})
		}
	}
	ps[1].ShadeY(-1, 1, plot.Fill{Color: plot.Diverging.At(0.5), Alpha: 0.5})
	ps[1].HLine(0, plot.Stroke{Width: 1}, "")
	dataMarker := plot.MarkerStyle{Shape: plot.Circle, Color: plot.Category(0)}
	drawBulkData(ps[0], r, series, xOf, dataMarker)
	entries = append(entries, plot.LegendEntry{Label: "data", Marker: &dataMarker})
	if hollow := unfittedMarker(); anyUnfitted(r, series) {
		entries = append(entries, plot.LegendEntry{Label: "data not fitted (outside the trusted range)", Marker: &hollow})
	}
	if q == bulk.Magnetization {
		labelSweeps(ps[0], r, series)
	}
	for rank, i := range cmp.Ranking {
		e, err := drawBulkCandidate(ps, r, i, rank, q, series, xOf)
		if err != nil {
			return nil, err
		}
		entries = append(entries, e)
	}
	ps[0].Legend(entries...)
	return d, d.Err()
}

// trustedFromOf is the lowest trusted temperature of the fit over the
// series shown.
func trustedFromOf(f *bulk.FitResult, series []int) float64 {
	from := math.Inf(1)
	for _, s := range series {
		from = math.Min(from, f.Series[s].TrustedFrom)
	}
	return from
}

// unfittedMarker marks the data points the best fit did not use.
func unfittedMarker() plot.MarkerStyle {
	return plot.MarkerStyle{Shape: plot.Circle, Color: plot.Diverging.At(0.5), Size: 2.6}
}

// anyUnfitted says whether the best fit left out a point of the series.
func anyUnfitted(r *bulkRun, series []int) bool {
	best := r.cmp.Own[r.cmp.Ranking[0]]
	for _, s := range series {
		if slices.Contains(best.Series[s].UsedPoint, false) {
			return true
		}
	}
	return false
}

// drawBulkData draws the measured points with their error bars; points
// the best fit did not use are hollow.
func drawBulkData(p *plot.Panel, r *bulkRun, series []int, xOf func(bulk.Point) float64, m plot.MarkerStyle) {
	best := r.cmp.Own[r.cmp.Ranking[0]]
	hollow := unfittedMarker()
	for _, s := range series {
		sf := best.Series[s]
		var ux, uy, ue, nx, ny []float64
		for k, pt := range r.job.data[s].Points {
			sd := pt.Stderr
			if sf.Series.StderrUnknown {
				sd = sf.Sigma
			}
			if sf.UsedPoint[k] {
				ux, uy, ue = append(ux, xOf(pt)), append(uy, pt.Value), append(ue, sd)
			} else {
				nx, ny = append(nx, xOf(pt)), append(ny, pt.Value)
			}
		}
		p.ErrorBars(ux, uy, ue, plot.Stroke{Color: m.Color, Width: 1})
		p.Points(nx, ny, hollow)
		p.Points(ux, uy, m)
	}
}

// drawBulkCandidate draws one candidate's trusted curve and residuals.
func drawBulkCandidate(ps []*plot.Panel, r *bulkRun, i, rank int, q bulk.Quantity, series []int, xOf func(bulk.Point) float64) (plot.LegendEntry, error) {
	cmp := r.cmp
	f := cmp.Own[i]
	color := plot.Category(rank + 1)
	stroke := plot.Stroke{Color: color, Width: 1.7}
	if rank > 0 {
		stroke.Dash = []float64{7, 4}
	}
	curves, err := denseCurves(f, r.job.data, series, q)
	if err != nil {
		return plot.LegendEntry{}, err
	}
	for _, c := range curves {
		ps[0].Line(c.xs, c.ys, stroke)
	}
	marker := plot.CategoryMarker(rank + 1)
	marker.Size = 2.8
	for _, s := range series {
		sf := f.Series[s]
		var rx, ry []float64
		for k, pt := range r.job.data[s].Points {
			sd := pt.Stderr
			if sf.Series.StderrUnknown {
				sd = sf.Sigma
			}
			if sf.UsedPoint[k] {
				rx, ry = append(rx, xOf(pt)), append(ry, math.Max(-3.9, math.Min(3.9, (pt.Value-sf.Model[k])/sd)))
			}
		}
		ps[1].Points(rx, ry, marker)
	}
	chi2, used := 0.0, 0
	for _, s := range series {
		chi2 += f.Series[s].Chi2
		used += f.Series[s].Used
	}
	label := fmt.Sprintf("%s: χ² = %.1f over %d %s points", cmp.Candidates[i].Name, chi2, used, q)
	if cmp.Rejected[i] {
		label += " (rejected)"
	}
	return plot.LegendEntry{Label: label, Line: stroke, Marker: &marker}, nil
}

// labelSweeps writes each M(H) sweep's temperature at its
// highest-field point, saying when the best fit left it out.
func labelSweeps(p *plot.Panel, r *bulkRun, series []int) {
	best := r.cmp.Own[r.cmp.Ranking[0]]
	for _, s := range series {
		type end struct {
			h, m float64
			used bool
		}
		ends := map[float64]end{}
		var temps []float64
		for k, pt := range r.job.data[s].Points {
			e, ok := ends[pt.T]
			if !ok {
				temps = append(temps, pt.T)
			}
			if !ok || pt.H > e.h {
				e.h, e.m = pt.H, pt.Value
			}
			e.used = e.used || best.Series[s].UsedPoint[k]
			ends[pt.T] = e
		}
		for _, t := range temps {
			e := ends[t]
			label := fmt.Sprintf("T = %.3g K", t)
			if !e.used {
				label += ", not fitted"
			}
			p.Annotate(e.h, e.m, 8, 4, label, plot.TextStyle{Anchor: plot.Start, Halo: true})
		}
	}
}

type denseCurve struct{ xs, ys []float64 }

// denseCurves evaluates the fitted candidate on a fine grid spanning the
// data, keeping only trusted points: one curve for chi or C, one per
// temperature for M(H).
func denseCurves(f *bulk.FitResult, data []*bulk.Series, series []int, q bulk.Quantity) ([]denseCurve, error) {
	var grids []*bulk.Series
	if q == bulk.Magnetization {
		for _, s := range series {
			blocks := map[float64][2]float64{}
			var temps []float64
			for _, p := range data[s].Points {
				b, ok := blocks[p.T]
				if !ok {
					temps = append(temps, p.T)
					b = [2]float64{p.H, p.H}
				}
				blocks[p.T] = [2]float64{math.Min(b[0], p.H), math.Max(b[1], p.H)}
			}
			for _, t := range temps {
				g := &bulk.Series{Quantity: q}
				for k := range 80 {
					h := blocks[t][0] + (blocks[t][1]-blocks[t][0])*float64(k)/79
					g.Points = append(g.Points, bulk.Point{T: t, H: h})
				}
				grids = append(grids, g)
			}
		}
	} else {
		lo, hi := math.Inf(1), 0.0
		for _, s := range series {
			a, b := data[s].TRange()
			lo, hi = math.Min(lo, a), math.Max(hi, b)
		}
		g := &bulk.Series{Quantity: q}
		for k := range 160 {
			g.Points = append(g.Points, bulk.Point{T: lo * math.Pow(hi/lo, float64(k)/159)})
		}
		grids = append(grids, g)
	}
	vals, trusted, err := f.Fitted().Predict(grids)
	if err != nil {
		return nil, err
	}
	var out []denseCurve
	for gi, g := range grids {
		var c denseCurve
		for k, p := range g.Points {
			if !trusted[gi][k] {
				continue
			}
			x := p.T
			if q == bulk.Magnetization {
				x = p.H
			}
			c.xs, c.ys = append(c.xs, x), append(c.ys, vals[gi][k])
		}
		if len(c.xs) > 1 {
			out = append(out, c)
		}
	}
	return out, nil
}
