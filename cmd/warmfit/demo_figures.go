package main

import (
	"fmt"
	"io"

	"warmfit/cmd/warmfit/internal/plot"
)

// The demo's figures, drawn with the one figure kit (internal/plot):
// which figures there are, and writing them. Each figure has a file of
// its own (demo_figure_*.go).

// demoFigure names one figure file and what it shows.
type demoFigure struct {
	File    string
	Caption string
	draw    func(d *demoRun) (*plot.Document, error)
}

var demoFigureList = []demoFigure{
	{"fig-coefficients.svg", "fitted against true coefficients with 1-sigma error bars and the line fitted = true; right, the errors fitted - true term by term", (*demoRun).figCoefficients},
	{"fig-pulls.svg", "histograms of the pulls (fitted - true)/stderr for the array and the patch, with the standard normal curve they should follow", (*demoRun).figPulls},
	{"fig-lattice.svg", "the array with bonds coloured and widened by the fitted couplings and sites coloured by the fitted fields; last panel, the signed pulls per bond and site (the checked patch is outlined)", (*demoRun).figLattice},
	{"fig-sweep.svg", "energy and heat capacity per site of the fitted model against beta at the fit's order and the two below, the range where the series converge shaded, the operating beta marked", (*demoRun).figSweep},
}

// writeFigures draws every figure into the output directory; a figure
// that cannot be drawn (a non-finite value, say) is an error and no file.
func (d *demoRun) writeFigures() error {
	for _, f := range demoFigureList {
		doc, err := f.draw(d)
		if err != nil {
			return fmt.Errorf("%s: %w", f.File, err)
		}
		if err := d.write(f.File, func(w io.Writer) error { _, err := doc.WriteTo(w); return err }); err != nil {
			return fmt.Errorf("%s: %w", f.File, err)
		}
		fmt.Fprintf(d.env.Stderr, "      figure %s\n", f.File)
	}
	return nil
}
