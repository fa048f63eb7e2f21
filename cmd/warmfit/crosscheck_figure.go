package main

import (
	"fmt"
	"math"
	"strings"

	"warmfit/cmd/warmfit/internal/plot"
	"warmfit/validate"
)

// crosscheckFloor is where differences at rounding level are drawn on
// the log axis (an exact zero has no place there).
const crosscheckFloor = 1e-16

// crosscheckFigure draws the largest and the rms |expansion - exact|
// against the order on a log axis, with the tolerance, the references'
// statistical resolution, the orders that cover whole patches (exact by
// construction) shaded and the order from which the expansion agrees.
func crosscheckFigure(r *validate.CrosscheckResult, how string) *plot.Document {
	const width, height = 760.0, 480.0
	doc := plot.New(width, height, "expansion against exact results")
	head := doc.Heading("The linked-cluster expansion against exact results",
		fmt.Sprintf("%s at β = %s: largest and rms |expansion − exact| over every term", how, fmtFloat(r.Beta)))
	top := len(r.Orders)
	orders := make([]float64, top)
	maxDiff := make([]float64, top)
	rmsDiff := make([]float64, top)
	// The axis runs at least a factor 3 past the tolerance and the
	// references' 2 sigma both ways, so their lines sit inside the panel,
	// and a factor 3 below the floor, so markers drawn on it are whole.
	lo, hi := r.Tol/3, r.Tol*3
	clamped := false
	for i, oc := range r.Orders {
		orders[i] = float64(oc.Order)
		maxDiff[i], rmsDiff[i] = math.Max(oc.MaxDiff, crosscheckFloor), math.Max(oc.RMSDiff, crosscheckFloor)
		clamped = clamped || oc.RMSDiff < crosscheckFloor
		lo, hi = math.Min(lo, rmsDiff[i]/3), math.Max(hi, maxDiff[i]*1.5)
	}
	noise := 0.0
	firstWhole := 0
	for _, oc := range r.Orders {
		noise = math.Max(noise, oc.Noise)
		if oc.Exact && firstWhole == 0 {
			firstWhole = oc.Order
		}
	}
	if noise > 0 {
		lo, hi = math.Min(lo, 2*noise/3), math.Max(hi, 2*noise*3)
	}
	var ticks []plot.Tick // every order, every other one past a dozen
	for o := 1; o <= top; o++ {
		if top <= 12 || o%2 == 1 {
			ticks = append(ticks, plot.Tick{Value: float64(o), Label: fmt.Sprint(o)})
		}
	}
	area := plot.Rect{X: 24, Y: head, W: width - 48, H: height - head - 44}
	p := doc.Panel(area, "",
		plot.Axis{Label: "expansion order L (largest cluster)", Min: 0.5, Max: float64(top) + 0.5, Tight: true, Ticks: ticks},
		plot.Axis{Label: "|expansion − exact|", Min: lo, Max: hi, Log: true})
	wholeFill := plot.Fill{Color: plot.Sequential.At(0.12), Alpha: 0.6}
	if firstWhole > 0 {
		p.ShadeX(float64(firstWhole)-0.5, float64(top)+0.5, wholeFill)
	}
	tolStroke := plot.ReferenceStroke(true)
	p.HLine(r.Tol, tolStroke, fmt.Sprintf("tolerance %s", fmtG3(r.Tol)))
	noiseStroke := plot.Stroke{Color: plot.Category(4), Width: 1.5, Dash: []float64{2, 3}}
	if noise > 0 {
		p.HLine(2*noise, noiseStroke, "2σ of the references")
	}
	floorStroke := plot.Stroke{Color: plot.Category(5), Width: 1, Dash: []float64{1, 4}}
	if clamped {
		p.HLine(crosscheckFloor, floorStroke, "") // the legend names it
	}
	agreeStroke := plot.CurveStroke(plot.Category(7))
	if r.AgreeOrder > 0 {
		p.VLine(float64(r.AgreeOrder), agreeStroke, fmt.Sprintf("agrees from L = %d", r.AgreeOrder))
	}
	maxMarker, rmsMarker := plot.CategoryMarker(0), plot.CategoryMarker(3)
	maxLine, rmsLine := plot.CurveStroke(maxMarker.Color), plot.CurveStroke(rmsMarker.Color)
	p.Line(orders, rmsDiff, rmsLine)
	p.Points(orders, rmsDiff, rmsMarker)
	p.Line(orders, maxDiff, maxLine)
	p.Points(orders, maxDiff, maxMarker)
	entries := []plot.LegendEntry{
		{Label: "largest |expansion − exact| over all values", Marker: &maxMarker, Line: maxLine},
		{Label: "rms |expansion − exact| over all values", Marker: &rmsMarker, Line: rmsLine},
		{Label: fmt.Sprintf("tolerance (--tol %s)", fmtG3(r.Tol)), Line: tolStroke},
	}
	if noise > 0 {
		entries = append(entries, plot.LegendEntry{Label: "2 standard errors of the noisiest typicality reference", Line: noiseStroke})
	}
	if r.AgreeOrder > 0 {
		entries = append(entries, plot.LegendEntry{Label: "lowest order from which every order agrees", Line: agreeStroke})
	}
	if clamped {
		entries = append(entries, plot.LegendEntry{Label: fmt.Sprintf("floor: differences below %g (rounding)", crosscheckFloor), Line: floorStroke})
	}
	if firstWhole > 0 {
		entries = append(entries, plot.LegendEntry{Label: "order covers whole patches (exact by construction)", Fill: &wholeFill})
	}
	p.Legend(entries...)
	note := crosscheckFigureNote(r)
	if clamped {
		note += fmt.Sprintf(" (differences below %g are drawn at %g)", crosscheckFloor, crosscheckFloor)
	}
	doc.Note(24, height-30, width-48, note)
	return doc
}

// crosscheckFigureNote is the verdict in a line or two: the full verdict
// (in the output files) is too long for the figure.
func crosscheckFigureNote(r *validate.CrosscheckResult) string {
	if r.NoisyOrder == 0 {
		// The verdict is written for text files; the figure's title
		// says β, and so does its note.
		return strings.Replace(r.Verdict[0], "beta = ", "β = ", 1)
	}
	note := fmt.Sprintf("inconclusive at β = %s: from order %d on the differences are within the references' noise, which exceeds the tolerance %s",
		fmtFloat(r.Beta), r.NoisyOrder, fmtG3(r.Tol))
	if r.VectorsNeeded > 0 {
		note += fmt.Sprintf("; about %d vectors (--vectors %d) would resolve it", r.VectorsNeeded, r.VectorsNeeded)
	}
	return note
}
