package main

import (
	"fmt"
	"io"

	"warmfit/cluster"
	"warmfit/fit"
)

// Step 5 of the demo: is the operating temperature high enough for the
// expansion? The sufficient-condition bound, the convergence the fit
// measured, and a thermodynamic sweep of the fitted model showing where
// the series stop converging.

// demoTemperature is the verdict on the operating temperature.
type demoTemperature struct {
	Bound      cluster.ThresholdBound // at the truth
	Order      int                    // the fit's
	Untrusted  int                    // term expectations not converged at the fit (from the fit report)
	Terms      int
	Criterion  string // the fitter's convergence criterion for them
	Truncation fit.ReportTruncation
	Sweep      *cluster.ThermoResult
	// Trusted[i] for every temperature of the sweep; Edge is the first
	// untrusted beta (0 when the whole sweep is trusted), LastGood the
	// last trusted one before it (0 when there is none).
	Trusted          []bool
	Edge, LastGood   float64
	Judged           *sweepTrust
	OperatingTrusted bool // the operating beta lies below Edge
}

func (d *demoRun) stepTemperature() error {
	sc, f := &d.sc, d.array
	rep := f.Report
	t := &demoTemperature{
		Bound: cluster.SufficientBeta(d.device.Terms, modelCoeffs(d.device)),
		Order: f.Result.Order, Untrusted: rep.Series.Untrusted, Terms: rep.Series.Terms, Criterion: rep.Series.Criterion,
		Truncation: rep.Truncation,
	}
	d.temp = t
	d.say("sufficient-condition bound (term-overlap degree %d, max|coeff| %.3g): beta < %.3g; operating beta %s is %.0fx beyond it",
		t.Bound.Degree, t.Bound.MaxCoeff, t.Bound.Beta, fmtFloat(sc.Beta), sc.Beta/t.Bound.Beta)
	d.say("measured convergence at the fit (order %d): %d of %d term expectations unconverged; truncation error %s vs target %s",
		t.Order, t.Untrusted, t.Terms, fmtMaybePtr(t.Truncation.Error), fmtG3(t.Truncation.Target))

	exp, err := cluster.NewExpansion(f.Model.Lattice, f.Model.Terms)
	if err != nil {
		return err
	}
	betas := sc.sweepBetas()
	bar := newProgressBar(d.env, "sweep")
	res, err := exp.Thermodynamics(modelCoeffs(f.Model), betas, cluster.Options{Order: t.Order, Progress: bar.Update})
	bar.Done()
	if err != nil {
		return err
	}
	t.Sweep = res
	t.trust(sc.SweepTol, sc.Beta)
	lo, hi, n := sc.sweepGrid()
	d.record(5, "the thermodynamic sweep of the fitted model at the fit's order",
		"sweep", "--model", "fitted.json", "--beta-grid", fmt.Sprintf("from=%s,to=%s,points=%d", fmtFloat(lo), fmtFloat(hi), n),
		"--order", fmt.Sprint(t.Order), "--tol", fmtG3(sc.SweepTol), "-o", "sweep.csv")
	meta := &csvMeta{Command: "sweep", Contents: "one row per inverse temperature of the grid; values per site"}
	meta.set("model", "fitted.json")
	if err := d.writeCSV("sweep.csv", meta, func(w io.Writer) error {
		return writeSweep(w, &runEnv{Stderr: io.Discard}, res, sc.SweepTol, meta)
	}); err != nil {
		return err
	}
	switch {
	case t.Edge == 0:
		d.say("sweep (%d temperatures, order %d): converged on the whole grid up to beta %s", len(betas), t.Order, fmtFloat(hi))
	case t.LastGood == 0:
		d.say("WARNING: sweep (order %d): not converged anywhere on the grid", t.Order)
	default:
		d.say("sweep (%d temperatures, order %d): energy and heat capacity per site %s; the operating beta %s is %.0f%% of that edge",
			len(betas), t.Order, t.Judged.rangeText(), fmtFloat(sc.Beta), 100*sc.Beta/t.LastGood)
	}
	return nil
}

// trust marks the temperatures of the sweep as "warmfit sweep" marks its
// rows (judgeSweep) and finds the edge of the trusted range.
func (t *demoTemperature) trust(tol, operating float64) {
	t.Judged = judgeSweep(t.Sweep, tol)
	t.Trusted, t.Edge, t.LastGood = t.Judged.Trusted, t.Judged.Edge, t.Judged.LastGood
	t.OperatingTrusted = t.Edge == 0 || operating < t.Edge
}

func fmtMaybePtr(v *float64) string {
	if v == nil {
		return "unknown"
	}
	return fmtG3(*v)
}
