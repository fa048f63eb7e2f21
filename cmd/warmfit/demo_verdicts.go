package main

import (
	"fmt"
	"math"
	"strings"

	"warmfit/fit"
)

// The demo's conclusions in plain words. A verdict that is not OK is
// written as a WARNING line, in the report and on stderr.

// demoVerdict is one plain-language conclusion.
type demoVerdict struct {
	OK   bool
	Text string
	// Marginal marks an OK verdict whose evidence is weak (a pull test
	// between pullWarnLevel and pullTestLevel): no WARNING, but the
	// summary does not call the error bars honest.
	Marginal bool
}

// verdicts collects every conclusion of the run.
func (d *demoRun) verdicts() []demoVerdict {
	var v []demoVerdict
	if d.failure != nil {
		v = append(v, demoVerdict{OK: false, Text: fmt.Sprintf("the demo stopped: %v", d.failure)})
		if d.array == nil && d.device != nil {
			v = append(v, demoVerdict{OK: false, Text: fmt.Sprintf("beta x max|coefficient| is %.3g here; the fit of a square array needs the linked-cluster series to converge, which at order 5-6 takes beta x coupling below about 0.1: try a smaller --beta (the default is %s).",
				d.sc.Beta*d.maxTrueCoeff(), fmtFloat(defaultDemoScenario().Beta))})
		}
	}
	if f := d.array; f != nil {
		v = append(v, fitVerdicts(f.Report)...)
		v = append(v, pullVerdicts(fmt.Sprintf("Array (%d coefficients)", len(f.Result.Terms)), f.Recovery)...)
	}
	if p := d.patch; p != nil && p.Fit != nil {
		v = append(v, pullVerdicts(fmt.Sprintf("Patch (%d coefficients, exact snapshots)", len(p.Fit.Result.Terms)), p.Fit.Recovery)...)
	}
	v = append(v, d.exactVerdicts()...)
	return append(v, d.temperatureVerdicts()...)
}

// fitVerdicts judge the array fit's convergence and truncation.
func fitVerdicts(rep *fit.Report) []demoVerdict {
	v := []demoVerdict{{OK: rep.Converged, Text: fmt.Sprintf("Array fit: converged at expansion order %d (%s selection) after %s.", rep.Order, rep.OrderMode, newtonIterations(rep.AllIterations, rep.Iterations, rep.Order))}}
	switch tr := rep.Truncation; {
	case tr.Exact:
		v = append(v, demoVerdict{OK: true, Text: "Array fit: the order covers the whole array, so the expansion is exact."})
	case !tr.Known:
		v = append(v, demoVerdict{OK: false, Text: "Array fit: the truncation error is unknown (no lower order to compare with)."})
	case tr.OK:
		v = append(v, demoVerdict{OK: true, Text: fmt.Sprintf("Array fit: truncation under control: the largest estimated truncation error of a coefficient is %s, under the target %s (a tenth of the median statistical error %s).",
			fmtMaybePtr(tr.Error), fmtG3(tr.Target), fmtG3(tr.StatError))})
	case tr.OverStderr == 0 && tr.StatError > 0:
		v = append(v, demoVerdict{OK: true, Text: fmt.Sprintf("Array fit: the truncation error %s is above its target %s but below every coefficient's standard error: it moves no coefficient beyond its error bar.",
			fmtMaybePtr(tr.Error), fmtG3(tr.Target))})
	default:
		v = append(v, demoVerdict{OK: false, Text: fmt.Sprintf("Array fit: the truncation error %s exceeds its target %s and the standard error of %d coefficients: the temperature is too low for order %d, the coefficients carry a systematic error comparable to their error bars.",
			fmtMaybePtr(tr.Error), fmtG3(tr.Target), tr.OverStderr, rep.Order)})
	}
	return v
}

// pullTestLevel is the p-value below which the within-2-sigma count
// refutes honest error bars (common practice: 5%).
const pullTestLevel = 0.05

// pullWarnLevel is the p-value below which the count is a WARNING: the
// same 1e-3 as the largest-pull check (several tests per run make 5%
// false alarms common on honest error bars).
const pullWarnLevel = 1e-3

// pullVerdicts judges whether pulls look like standard-normal draws.
func pullVerdicts(what string, r *demoRecovery) []demoVerdict {
	n := len(r.Terms)
	bm, br := pullBands(n)
	// The within-2-sigma count is judged by an exact binomial test against
	// 95.45%: a band of 3 sd says nothing for a few terms.
	pw := binomialTwoSided(r.Within2Count, n, within2Normal)
	counts := fmt.Sprintf("%d of %d (%.1f%%) lie within 2 sigma (binomial test against 95.4%%: p = %.2g)", r.Within2Count, n, 100*r.Within2, pw)
	var v []demoVerdict
	bands := math.Abs(r.PullMean) <= bm && math.Abs(r.RMSZ-1) <= br
	switch {
	case bands && pw >= pullTestLevel:
		weak := ""
		if n < 30 {
			weak = fmt.Sprintf("; with %d pulls this is weak evidence", n)
		}
		v = append(v, demoVerdict{OK: true, Text: fmt.Sprintf("%s: consistent with honest error bars: pulls have mean %+.3f (|mean| <= %.3f expected), rms %.3f (1 +- %.3f), and %s%s.",
			what, r.PullMean, bm, r.RMSZ, br, counts, weak)})
	case bands && pw >= pullWarnLevel:
		v = append(v, demoVerdict{OK: true, Marginal: true, Text: fmt.Sprintf("%s: only marginally consistent with honest error bars: pulls have mean %+.3f (|mean| <= %.3f expected) and rms %.3f (1 +- %.3f), but %s, fewer than honest error bars usually give: the error bars may be somewhat optimistic.",
			what, r.PullMean, bm, r.RMSZ, br, counts)})
	default:
		v = append(v, demoVerdict{OK: false, Text: fmt.Sprintf("%s: the pulls do not look standard normal: mean %+.3f (band +-%.3f), rms %.3f (band 1 +- %.3f), %s; the error bars or the fit are off.",
			what, r.PullMean, bm, r.RMSZ, br, counts)})
	}
	if chance := maxPullChance(r.MaxAbsZ, n); chance < 1e-3 {
		v = append(v, demoVerdict{OK: false, Text: fmt.Sprintf("%s: the largest |pull| %.2f is improbable for %d normal pulls (chance %.2g): one coefficient is off by more than its error bar allows.",
			what, r.MaxAbsZ, n, chance)})
	}
	return v
}

// exactVerdicts judge the expansion against exact diagonalisation on
// the patch: the crosscheck's own verdict, and the difference at the
// array's order against the data's noise.
func (d *demoRun) exactVerdicts() []demoVerdict {
	if d.patch == nil || d.patch.Check == nil || d.array == nil {
		return nil
	}
	c, n := d.patch.Check, len(d.patch.Sites)
	full := c.Orders[len(c.Orders)-1]
	v := []demoVerdict{{OK: full.MaxDiff <= 1e-9, Text: fmt.Sprintf("Exact check: with clusters as large as the patch (%d sites) the expansion reproduces dense exact diagonalisation to %s.", n, fmtG3(full.MaxDiff))}}
	o := min(d.array.Result.Order, len(c.Orders))
	dev, noise := c.Orders[o-1].MaxDiff, d.sc.dataNoise()
	v = append(v, demoVerdict{OK: dev <= d.sc.dataTol(), Text: fmt.Sprintf("Exact check: at the array's order %d the expansion is within %s of exact on the patch, %.2g x the statistical error %s of one measured expectation (the fitter asks for at most 0.1 x). A %dx%d patch is mostly boundary, where the series converge faster than in the bulk: the array's own convergence is judged below.",
		o, fmtG3(dev), dev/noise, fmtG3(noise), d.sc.Patch, d.sc.Patch)})
	for _, line := range c.Verdict {
		text, warn := strings.CutPrefix(line, "WARNING: ")
		v = append(v, demoVerdict{OK: !warn, Text: "Exact check (crosscheck): " + text + "."})
	}
	return v
}

// temperatureVerdicts judge the operating temperature.
func (d *demoRun) temperatureVerdicts() []demoVerdict {
	t, sc := d.temp, &d.sc
	if t == nil {
		return nil
	}
	v := []demoVerdict{{OK: t.Untrusted == 0, Text: fmt.Sprintf("Temperature: %d of %d term expectations of the fitted model have not converged in the expansion at order %d (criterion: %s).",
		t.Untrusted, t.Terms, t.Order, t.Criterion)}}
	top := t.Sweep.Betas[len(t.Sweep.Betas)-1]
	switch {
	case t.Edge == 0:
		v = append(v, demoVerdict{OK: true, Text: fmt.Sprintf("Temperature: energy and heat capacity converge on the whole sweep, up to beta %s (%.1fx the operating beta).",
			fmtFloat(top), top/sc.Beta)})
	case t.OperatingTrusted && t.LastGood > 0:
		v = append(v, demoVerdict{OK: true, Text: fmt.Sprintf("Temperature: the thermodynamic series %s; the operating beta %s sits at %.0f%% of that edge.",
			t.Judged.rangeText(), fmtFloat(sc.Beta), 100*sc.Beta/t.LastGood)})
	default:
		v = append(v, demoVerdict{OK: false, Text: fmt.Sprintf("Temperature: the thermodynamic series stop converging at beta %s, below the operating beta %s: the device is too cold for order %d.",
			fmtFloat(t.Edge), fmtFloat(sc.Beta), t.Order)})
	}
	if sc.Beta < t.Bound.Beta {
		return append(v, demoVerdict{OK: true, Text: fmt.Sprintf("Temperature: the sufficient condition beta < %.3g is met: the series converge at this temperature whatever the measured convergence says.", t.Bound.Beta)})
	}
	return append(v, demoVerdict{OK: true, Text: fmt.Sprintf("Temperature: the sufficient condition beta < %.3g is not met (%.0fx beyond); it is a worst-case bound, so trust rests on the measured convergence above.",
		t.Bound.Beta, sc.Beta/t.Bound.Beta)})
}

// fitWarnings are the warnings the fitter itself wrote into its reports,
// each prefixed by the fit it belongs to.
func (d *demoRun) fitWarnings() []string {
	var out []string
	add := func(name string, f *demoFit) {
		if f == nil {
			return
		}
		for _, w := range f.Report.Warnings {
			out = append(out, "("+name+") "+w)
		}
	}
	add("array fit", d.array)
	if d.patch != nil {
		add("patch fit", d.patch.Fit)
	}
	return out
}
