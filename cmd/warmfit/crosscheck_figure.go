package main

import (
	"fmt"
	"math"

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
	lo, hi := r.Tol, r.Tol
	clamped := false
	for i, oc := range r.Orders {
		orders[i] = float64(oc.Order)
		maxDiff[i], rmsDiff[i] = math.Max(oc.MaxDiff, crosscheckFloor), math.Max(oc.RMSDiff, crosscheckFloor)
		clamped = clamped || oc.RMSDiff < crosscheckFloor
		lo, hi = math.Min(lo, rmsDiff[i]), math.Max(hi, maxDiff[i])
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
		lo, hi = math.Min(lo, 2*noise), math.Max(hi, 2*noise)
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
	noiseStroke := plot.Stroke{Color: plot.Category(4), Width: 1, Dash: []float64{2, 3}}
	if noise > 0 {
		p.HLine(2*noise, noiseStroke, "2σ of the references")
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
		{Label: "largest difference", Marker: &maxMarker, Line: maxLine},
		{Label: "rms difference", Marker: &rmsMarker, Line: rmsLine},
		{Label: "tolerance", Line: tolStroke},
	}
	if noise > 0 {
		entries = append(entries, plot.LegendEntry{Label: "2σ of the typicality references", Line: noiseStroke})
	}
	if firstWhole > 0 {
		entries = append(entries, plot.LegendEntry{Label: "order covers whole patches (exact by construction)", Fill: &wholeFill})
	}
	p.Legend(entries...)
	note := r.Verdict[0]
	if clamped {
		note += fmt.Sprintf(" (differences below %g are drawn at %g)", crosscheckFloor, crosscheckFloor)
	}
	doc.Note(24, height-30, width-48, note)
	return doc
}
