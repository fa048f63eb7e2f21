package main

import (
	"fmt"
	"io"
	"math"
	"strings"
	"time"

	"warmfit/fit"
)

// demoVerdict is one plain-language conclusion; a verdict that is not OK
// is written as a WARNING line.
type demoVerdict struct {
	OK   bool
	Text string
}

// Consistency bands for pulls of honest error bars, at three standard
// deviations of the statistic for n independent standard-normal pulls
// (common practice): the mean has sd 1/sqrt(n); the rms has sd about
// 1/sqrt(2n); the fraction within 2 sigma, p = 0.9545, has sd
// sqrt(p(1-p)/n).
func pullBands(n int) (mean, rms, within float64) {
	f := float64(n)
	return 3 / math.Sqrt(f), 3 / math.Sqrt(2*f), 3 * math.Sqrt(0.9545*0.0455/f)
}

// maxPullChance is the probability that the largest of n independent
// standard-normal |pulls| is at least x: 1 - (1 - erfc(x/sqrt 2))^n.
func maxPullChance(x float64, n int) float64 {
	q := math.Erfc(x / math.Sqrt2)
	return -math.Expm1(float64(n) * math.Log1p(-q))
}

// pullVerdicts judges whether pulls look like standard-normal draws.
func pullVerdicts(what string, c *demoComparison) []demoVerdict {
	if c == nil {
		return nil
	}
	bm, br, bw := pullBands(c.Terms)
	ok := math.Abs(c.PullMean) <= bm && math.Abs(c.PullRMS-1) <= br && math.Abs(c.Within2-0.9545) <= bw
	var extra []demoVerdict
	if pmax := maxPullChance(c.MaxAbsPull, c.Terms); pmax < 1e-3 {
		extra = append(extra, demoVerdict{false, fmt.Sprintf("%s: the largest |pull| %.2f is improbable for %d normal pulls (chance %.2g): one coefficient is off by more than its error bar allows.",
			what, c.MaxAbsPull, c.Terms, pmax)})
	}
	if ok {
		return append([]demoVerdict{{true, fmt.Sprintf("%s: the error bars are honest: pulls have mean %+.3f (|mean| <= %.3f expected), rms %.3f (1 +- %.3f) and %.1f%% lie within 2 sigma (95.4%% +- %.1f%%).",
			what, c.PullMean, bm, c.PullRMS, br, 100*c.Within2, 100*bw)}}, extra...)
	}
	return append([]demoVerdict{{false, fmt.Sprintf("%s: the pulls do not look standard normal: mean %+.3f (band +-%.3f), rms %.3f (band 1 +- %.3f), %.1f%% within 2 sigma (band 95.4%% +- %.1f%%); the error bars or the fit are off.",
		what, c.PullMean, bm, c.PullRMS, br, 100*c.Within2, 100*bw)}}, extra...)
}

// verdicts collects every conclusion of the run.
func (d *demoRun) verdicts() []demoVerdict {
	var v []demoVerdict
	if d.failure != nil {
		v = append(v, demoVerdict{false, fmt.Sprintf("the demo stopped: %v", d.failure)})
		if d.fitReport == nil && d.device != nil {
			v = append(v, demoVerdict{false, fmt.Sprintf("beta x max|coefficient| is %.3g here; the fit of a square array needs the linked-cluster series to converge, which at order 5-6 takes beta x coupling below about 0.1: try a smaller --beta (the default is %s).",
				d.sc.Beta*d.maxTrueCoeff(), fmtFloat(defaultDemoScenario().Beta))})
		}
	}
	if rep := d.fitReport; rep != nil {
		v = append(v, demoVerdict{rep.Converged, fmt.Sprintf("Array fit: converged at expansion order %d (%s selection) after %s.", rep.Order, rep.OrderMode, plural(rep.Iterations, "Newton iteration"))})
		tr := rep.Truncation
		switch {
		case tr.Exact:
			v = append(v, demoVerdict{true, "Array fit: the order covers the whole array, so the expansion is exact."})
		case !tr.Known:
			v = append(v, demoVerdict{false, "Array fit: the truncation error is unknown (no lower order to compare with)."})
		case tr.OK:
			v = append(v, demoVerdict{true, fmt.Sprintf("Array fit: truncation under control: the coefficients moved by at most %s between the last orders, under the target %s (a tenth of the median statistical error %s).",
				fmtMaybePtr(tr.Error), fmtG3(tr.Target), fmtG3(tr.StatError))})
		default:
			v = append(v, demoVerdict{false, fmt.Sprintf("Array fit: the truncation error %s exceeds its target %s: the temperature is too low for order %d, the coefficients carry a systematic error comparable to their error bars.",
				fmtMaybePtr(tr.Error), fmtG3(tr.Target), rep.Order)})
		}
	}
	v = append(v, pullVerdicts(fmt.Sprintf("Array (%d coefficients)", d.arrayTerms()), d.array)...)
	v = append(v, pullVerdicts(fmt.Sprintf("Patch (%d coefficients, exact snapshots)", d.patchTerms()), d.patch)...)
	if c := d.edCheck; c != nil {
		full := c.MaxDev[len(c.MaxDev)-1]
		v = append(v, demoVerdict{full <= 1e-9, fmt.Sprintf("Exact check: with clusters as large as the patch (%d sites) the expansion reproduces dense exact diagonalisation to %s.", c.Qubits, fmtG3(full))})
		o := min(c.ArrayOrder, len(c.MaxDev))
		dev := c.MaxDev[o-1]
		noise := d.dataNoise()
		ok := dev <= 0.1*noise
		v = append(v, demoVerdict{ok, fmt.Sprintf("Exact check: at the array's order %d the expansion is within %s of exact on the patch, %.2g x the statistical error %s of one measured expectation (the fitter asks for at most 0.1 x). A %dx%d patch is mostly boundary, where the series converge faster than in the bulk: the array's own convergence is judged below.",
			o, fmtG3(dev), dev/noise, fmtG3(noise), d.sc.Patch, d.sc.Patch)})
	}
	if t := d.temp; t != nil {
		v = append(v, demoVerdict{t.Untrusted == 0, fmt.Sprintf("Temperature: %d of %d term expectations of the fitted model have not converged in the expansion at order %d (criterion: %s).",
			t.Untrusted, t.Terms, t.Order, t.Criterion)})
		switch {
		case t.Edge == 0:
			v = append(v, demoVerdict{true, fmt.Sprintf("Temperature: energy and heat capacity converge on the whole scan, up to beta %s (%.1fx the operating beta).",
				fmtFloat(t.Scan.Betas[len(t.Scan.Betas)-1]), t.Scan.Betas[len(t.Scan.Betas)-1]/d.sc.Beta)})
		case t.OperatingTrusted:
			v = append(v, demoVerdict{true, fmt.Sprintf("Temperature: the thermodynamic series converge (tolerance %g per site) up to beta %s; the operating beta %s sits at %.0f%% of that edge.",
				d.sc.ThermoTol, fmtFloat(t.LastGood), fmtFloat(d.sc.Beta), 100*d.sc.Beta/t.LastGood)})
		default:
			v = append(v, demoVerdict{false, fmt.Sprintf("Temperature: the thermodynamic series stop converging at beta %s, below the operating beta %s: the device is too cold for order %d.",
				fmtFloat(t.Edge), fmtFloat(d.sc.Beta), t.Order)})
		}
		v = append(v, demoVerdict{true, fmt.Sprintf("Temperature: the sufficient condition beta < %.3g is not met (%.0fx beyond); it is a worst-case bound, so trust rests on the measured convergence above.",
			t.Bound.Beta, d.sc.Beta/t.Bound.Beta)})
	}
	return v
}

// fitWarnings are the warnings the fitter itself wrote into its reports,
// each prefixed by the fit it belongs to.
func (d *demoRun) fitWarnings() []string {
	var out []string
	add := func(name string, r *fit.Report) {
		if r == nil {
			return
		}
		for _, w := range r.Warnings {
			out = append(out, "("+name+") "+w)
		}
	}
	add("array fit", d.fitReport)
	add("patch fit", d.patchReport)
	return out
}

func plural(n int, what string) string {
	if n == 1 {
		return "1 " + what
	}
	return fmt.Sprintf("%d %ss", n, what)
}

func (d *demoRun) arrayTerms() int {
	if d.device == nil {
		return 0
	}
	return len(d.device.Terms)
}

func (d *demoRun) patchTerms() int {
	if d.patchTruth == nil {
		return 0
	}
	return len(d.patchTruth.Terms)
}

// dataNoise is the typical statistical error of one measured
// expectation: the shot noise sqrt((1 - e^2)/N) of a +-1 outcome with e
// near 0 (the state is weakly polarised at high temperature) and N the
// shots per basis (every term here is served by one basis).
func (d *demoRun) dataNoise() float64 { return 1 / math.Sqrt(float64(d.sc.Shots)) }

// writeReport writes report.md: scenario, steps, results, verdicts,
// figures and the commands that reproduce each step.
func (d *demoRun) writeReport() error {
	return d.write("report.md", func(w io.Writer) error {
		var b strings.Builder
		d.reportBody(&b)
		_, err := io.WriteString(w, b.String())
		return err
	})
}

func (d *demoRun) reportBody(b *strings.Builder) {
	sc := &d.sc
	p := func(format string, args ...any) { fmt.Fprintf(b, format, args...) }
	n := sc.numSites()
	p("# warmfit demo: calibrating a %dx%d qubit array from its thermal state\n\n", sc.Width, sc.Height)
	p("Written by `warmfit demo` in %.1f s. Every number below was computed in this run; the\n", time.Since(d.start).Seconds())
	p("device is invented and its true coefficients are known only to the demo.\n\n")

	p("## The scenario\n\n")
	p("A lab runs an analog quantum simulator: a %dx%d square array of %d coupled qubits. The device\n", sc.Width, sc.Height, n)
	p("Hamiltonian has XXZ exchange on each of the %d nearest-neighbour bonds and an X field (drive)\n", d.numBonds())
	p("and a Z field (detuning) on every site,\n\n")
	p("    H = sum_<ij> (Jx_ij X_i X_j + Jy_ij Y_i Y_j + Jz_ij Z_i Z_j) + sum_i (hx_i X_i + hz_i Z_i),\n\n")
	p("%d coefficients in all, designed as Jx = Jy = Jxy, Jz, hx and hz below. Fabrication spread\n", d.arrayTerms())
	p("moves every coefficient (Jx and Jy of one bond independently) off its design value by a\n")
	p("uniform random amount in [-%s, %s) (seed %d). The array is held at an effective\n", fmtFloat(sc.Disorder), fmtFloat(sc.Disorder), sc.Seed)
	p("temperature: its state is the Gibbs state\n")
	p("exp(-beta H)/Z with beta = %s in the units of the coefficients, assumed known from an\n", fmtFloat(sc.Beta))
	p("independent calibration (without it, `warmfit fit` learns the products beta x coefficient).\n\n")
	p("| parameter | design value | meaning |\n|---|---|---|\n")
	for _, q := range sc.Params {
		p("| %s | %s | %s |\n", q.Name, fmtFloat(q.Value), q.Doc)
	}
	p("| disorder | +-%s | uniform shift of every coefficient, seed %d |\n", fmtFloat(sc.Disorder), sc.Seed)
	p("| beta | %s | inverse temperature; beta x max|coefficient| = %.3f |\n", fmtFloat(sc.Beta), sc.Beta*d.maxTrueCoeff())
	p("| shots | %d per basis | measurement budget |\n\n", sc.Shots)
	if sc.Quick {
		p("This is the --quick variant (a %dx%d array, expansion orders up to %d).\n\n", sc.Width, sc.Height, sc.MaxOrder)
	}

	p("## What was done\n\n")
	for _, s := range d.steps {
		p("%d. %s (%.1f s)\n", s.Number, capitalise(s.Title), s.Elapsed.Seconds())
		for _, line := range d.stepDetails(s.Number) {
			p("   - %s\n", line)
		}
	}
	p("\n")

	d.reportResults(b)

	p("## Verdicts\n\n")
	for _, v := range d.verdicts() {
		if v.OK {
			p("- %s\n", v.Text)
		} else {
			p("- WARNING: %s\n", v.Text)
		}
	}
	p("\n")
	if fw := d.fitWarnings(); len(fw) > 0 {
		p("The fitter's own warnings, as written into fitted.json and patch-fitted.json:\n\n")
		for _, w := range fw {
			p("- WARNING %s\n", w)
		}
		p("\n")
	}

	if d.failure == nil {
		p("## Figures\n\n")
		for _, f := range demoFigureList {
			p("- [%s](%s): %s\n", f.File, f.File, f.Caption)
		}
		p("\n")
	}

	p("## Reproduce with the warmfit command line\n\n")
	p("Every step is an ordinary warmfit command; run them in the output directory. template.json\n")
	p("and patch-template.json were written by the demo (the terms of the truth with coefficient 0);\n")
	p("any model file with the same terms serves, since `warmfit fit` only uses a template's\n")
	p("coefficients with --start template.\n\n```sh\n")
	p("cd %s\n", shellQuote(d.out))
	last := 0
	for _, c := range d.commands {
		if c.Step != last {
			p("\n# step %d\n", c.Step)
			last = c.Step
		}
		if c.Comment != "" {
			p("# %s\n", c.Comment)
		}
		if len(c.Args) == 0 {
			continue
		}
		quoted := make([]string, len(c.Args))
		for i, a := range c.Args {
			quoted[i] = shellQuote(a)
		}
		p("warmfit %s\n", strings.Join(quoted, " "))
	}
	p("```\n\n")

	p("## What this run does and does not show\n\n")
	p("- The array's data are drawn from the order-%d expansion of the truth (exact snapshots need\n", sc.DataOrder)
	p("  dense diagonalisation, at most 12 qubits; the array has %d). The array comparison tests the\n", n)
	p("  statistics, the fitter and its error bars, and the truncation only between the fit's order\n")
	p("  and order %d; the %dx%d patch, with exact snapshots and dense diagonalisation, is the check\n", sc.DataOrder, sc.Patch, sc.Patch)
	p("  against exact results.\n")
	p("- The binomial generator draws each term's estimate on its own: real shots correlate the\n")
	p("  estimates that share them. The patch's snapshots are real shots and its fit uses their\n")
	p("  covariance.\n")
	p("- The sufficient-temperature bound is a worst-case guarantee far below practical\n")
	p("  temperatures; the trust verdicts rest on the measured convergence of the series.\n\n")

	p("## Files\n\n")
	for _, f := range d.files {
		p("- %s\n", f)
	}
	p("- report.md (this file)\n")
}

func (d *demoRun) numBonds() int {
	if d.device == nil {
		return 2*d.sc.Width*d.sc.Height - d.sc.Width - d.sc.Height
	}
	return len(d.device.Lattice.NN)
}

func (d *demoRun) maxTrueCoeff() float64 {
	if d.device == nil {
		return d.sc.maxDesignCoeff()
	}
	m := 0.0
	for _, t := range d.device.Terms {
		m = math.Max(m, math.Abs(t.Coeff))
	}
	return m
}

// stepDetails are the facts of one step for the report.
func (d *demoRun) stepDetails(step int) []string {
	sc := &d.sc
	var out []string
	switch step {
	case 1:
		if d.device != nil {
			out = append(out, fmt.Sprintf("truth.json: %d terms on %s; template.json: the same terms without coefficients.", len(d.device.Terms), sc.latticeSpec()))
		}
	case 2:
		if d.bases != nil {
			out = append(out, fmt.Sprintf("%d product bases (%s) measure every term; %d shots each, %d in all.", len(d.bases), describeBases(d.bases), sc.Shots, sc.Shots*int64(len(d.bases))))
			out = append(out, fmt.Sprintf("data.csv: each term's estimate drawn from the binomial law with the order-%d expansion's expectation value, with its standard error.", sc.DataOrder))
		}
	case 3:
		if r := d.fitReport; r != nil {
			out = append(out, fmt.Sprintf("fitted.json: %d coefficients with error bars (%s), expansion order %d chosen %s, %s, %.1f s.",
				r.Terms, r.ErrorMethod, r.Order, map[string]string{"auto": "by the fitter", "fixed": "by --order"}[r.OrderMode], plural(r.Iterations, "Newton iteration"), r.ElapsedSeconds))
		}
	case 4:
		if d.patchReport != nil {
			r := d.patchReport
			how := fmt.Sprintf("order %d", r.Order)
			if r.Truncation.Exact {
				how += " (covers the patch: exact)"
			}
			out = append(out, fmt.Sprintf("%d exact snapshots per basis in %d bases from the patch's Gibbs state; fit at %s.", sc.Shots, len(d.patchBases), how))
		}
		if c := d.edCheck; c != nil {
			out = append(out, fmt.Sprintf("expansion against dense exact diagonalisation of the %d-qubit patch at every order (%.1f s).", c.Qubits, c.Elapsed.Seconds()))
		}
	case 5:
		if t := d.temp; t != nil && t.Scan != nil {
			out = append(out, fmt.Sprintf("thermo.csv: energy, entropy and heat capacity per site of the fitted model at %d inverse temperatures up to %s, order %d.", len(t.Scan.Betas), fmtFloat(sc.ThermoMax), t.Order))
		}
	case 6:
		if len(d.plans) > 0 {
			out = append(out, fmt.Sprintf("planned from the fitted model (the lab's best knowledge), order-%d response, covering bases.", d.plans[0].Order))
		}
	}
	return out
}

func (d *demoRun) reportResults(b *strings.Builder) {
	sc := &d.sc
	p := func(format string, args ...any) { fmt.Fprintf(b, format, args...) }
	if d.array == nil {
		return
	}
	p("## Results\n\n")
	p("### Recovery of the coefficients\n\n")
	p("Pull = (fitted - true) / stderr; for honest error bars pulls are standard normal.\n\n")
	arrayHead := fmt.Sprintf("array %dx%d (binomial data)", sc.Width, sc.Height)
	patchHead := fmt.Sprintf("patch %dx%d (exact snapshots)", sc.Patch, sc.Patch)
	p("| | %s | %s |\n|---|---|---|\n", arrayHead, patchHead)
	row := func(name string, f func(c *demoComparison, r *fitReportView) string) {
		a := f(d.array, d.arrayView())
		pa := "-"
		if d.patch != nil {
			pa = f(d.patch, d.patchView())
		}
		p("| %s | %s | %s |\n", name, a, pa)
	}
	row("coefficients", func(c *demoComparison, _ *fitReportView) string { return fmt.Sprint(c.Terms) })
	row("expansion order", func(_ *demoComparison, r *fitReportView) string { return r.order })
	row("L2 error", func(c *demoComparison, _ *fitReportView) string { return fmtG3(c.L2) })
	row("Linf error (term)", func(c *demoComparison, _ *fitReportView) string { return fmtG3(c.Linf) + " (" + c.Worst + ")" })
	row("median / largest stderr", func(c *demoComparison, _ *fitReportView) string {
		return fmtG3(c.MedStderr) + " / " + fmtG3(c.MaxStderr)
	})
	row("pull mean", func(c *demoComparison, _ *fitReportView) string { return fmt.Sprintf("%+.3f", c.PullMean) })
	row("pull rms", func(c *demoComparison, _ *fitReportView) string { return fmt.Sprintf("%.3f", c.PullRMS) })
	row("within 2 sigma", func(c *demoComparison, _ *fitReportView) string { return fmt.Sprintf("%.1f%%", 100*c.Within2) })
	row("largest |pull| (chance of one as large)", func(c *demoComparison, _ *fitReportView) string {
		return fmt.Sprintf("%.2f (%.2g)", c.MaxAbsPull, maxPullChance(c.MaxAbsPull, c.Terms))
	})
	row("fit time", func(_ *demoComparison, r *fitReportView) string { return r.elapsed })
	p("\n")

	p("By kind of term (array):\n\n")
	p("| term | count | true values (mean, range) | rms error | median stderr | pull rms |\n|---|---|---|---|---|---|\n")
	for _, s := range d.array.ByLetters {
		p("| %s | %d | %.3f (%.3f .. %.3f) | %s | %s | %.2f |\n", s.Pauli, s.Count, s.TrueMean, s.TrueMin, s.TrueMax, fmtG3(s.RMSError), fmtG3(s.MedStderr), s.PullRMS)
	}
	p("\n")

	if c := d.edCheck; c != nil {
		p("### The expansion against exact diagonalisation (patch)\n\n")
		p("Largest difference over the patch's %d term expectations between the linked-cluster\n", d.patchTerms())
		p("expansion at order L and dense exact diagonalisation of all %d qubits, at beta = %s.\n", c.Qubits, fmtFloat(sc.Beta))
		p("For comparison, one measured expectation has a statistical error of about %s.\n\n", fmtG3(d.dataNoise()))
		p("| order L |")
		for o := 2; o <= len(c.MaxDev); o++ {
			p(" %d |", o)
		}
		p("\n|---|")
		for o := 2; o <= len(c.MaxDev); o++ {
			p("---|")
		}
		p("\n| max difference |")
		for o := 2; o <= len(c.MaxDev); o++ {
			mark := ""
			if o == c.ArrayOrder {
				mark = " (array)"
			}
			p(" %s%s |", fmtG3(c.MaxDev[o-1]), mark)
		}
		p("\n\n")
	}

	if t := d.temp; t != nil {
		p("### Temperature\n\n")
		p("| check | value |\n|---|---|\n")
		p("| sufficient-condition bound (term-overlap degree %d) | beta < %.3g |\n", t.Bound.Degree, t.Bound.Beta)
		p("| operating beta | %s (%.0fx the bound) |\n", fmtFloat(sc.Beta), sc.Beta/t.Bound.Beta)
		p("| unconverged term expectations at the fit (order %d) | %d of %d |\n", t.Order, t.Untrusted, t.Terms)
		p("| truncation error of the coefficients (orders %s) | %s (target %s) |\n", intsJoin(t.Truncation.Orders), fmtMaybePtr(t.Truncation.Error), fmtG3(t.Truncation.Target))
		if t.Scan != nil {
			edge := "beyond the scan"
			if t.Edge > 0 {
				edge = "beta < " + fmtFloat(t.Edge)
			}
			p("| energy and heat capacity per site converged (tolerance %g) | %s |\n", sc.ThermoTol, edge)
		}
		p("\n")
	}

	if len(d.plans) > 0 {
		p("### Shot plan\n\n")
		p("Shots per basis so that every coefficient is within eps of the truth at 95%% confidence\n")
		p("(Bonferroni over all coefficients, z = %.2f), predicted before measuring from the fitted\n", d.plans[0].Z)
		p("model with %d covering bases. Error bars shrink as 1/sqrt(shots).\n\n", d.plans[0].Bases)
		p("| Linf target eps | shots per basis | total shots | predicted largest stderr |\n|---|---|---|---|\n")
		for _, pl := range d.plans {
			p("| %s | %d | %d | %s |\n", fmtFloat(pl.Target), pl.ShotsPerBasis, pl.TotalShots, fmtG3(pl.MaxStderr))
		}
		p("\nAt the %d shots per basis of this run the planner predicts a largest stderr of %s; the\n", sc.Shots, fmtG3(d.planPredictedAtRun))
		p("fit reported %s.\n\n", fmtG3(d.array.MaxStderr))
	}
}

// fitReportView holds the report fields the results table shows.
type fitReportView struct{ order, elapsed string }

func viewOf(order int, orderMode string, exact bool, elapsed float64) *fitReportView {
	o := fmt.Sprintf("%d (%s)", order, orderMode)
	if exact {
		o = fmt.Sprintf("%d (exact)", order)
	}
	return &fitReportView{order: o, elapsed: fmt.Sprintf("%.1f s", elapsed)}
}

func (d *demoRun) arrayView() *fitReportView {
	r := d.fitReport
	return viewOf(r.Order, r.OrderMode, r.Truncation.Exact, r.ElapsedSeconds)
}

func (d *demoRun) patchView() *fitReportView {
	r := d.patchReport
	return viewOf(r.Order, r.OrderMode, r.Truncation.Exact, r.ElapsedSeconds)
}

func intsJoin(v []int) string {
	s := make([]string, len(v))
	for i, x := range v {
		s[i] = fmt.Sprint(x)
	}
	return strings.Join(s, ", ")
}

func capitalise(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

// shellQuote quotes an argument for a POSIX shell when it needs it.
func shellQuote(s string) string {
	if s != "" && strings.IndexFunc(s, func(r rune) bool {
		return !(r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || strings.ContainsRune("-_./:=,+@%", r))
	}) < 0 {
		return s
	}
	return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
}

// printSummary writes the short summary to stdout.
func (d *demoRun) printSummary(w io.Writer) {
	sc := &d.sc
	p := func(format string, args ...any) { fmt.Fprintf(w, format+"\n", args...) }
	p("warmfit demo: %dx%d qubit array, %d coefficients, beta %s, %d shots in each of %d bases",
		sc.Width, sc.Height, d.arrayTerms(), fmtFloat(sc.Beta), sc.Shots, len(d.bases))
	if c, r := d.array, d.fitReport; c != nil && r != nil {
		p("  array fit    order %d: L2 error %s, Linf %s; pulls mean %+.2f, rms %.2f, %.1f%% within 2 sigma",
			r.Order, fmtG3(c.L2), fmtG3(c.Linf), c.PullMean, c.PullRMS, 100*c.Within2)
	}
	if c, r := d.patch, d.patchReport; c != nil && r != nil {
		line := fmt.Sprintf("  %dx%d patch    exact snapshots, order %d: Linf %s; pulls rms %.2f, %.1f%% within 2 sigma",
			sc.Patch, sc.Patch, r.Order, fmtG3(c.Linf), c.PullRMS, 100*c.Within2)
		if e := d.edCheck; e != nil {
			o := min(e.ArrayOrder, len(e.MaxDev))
			line += fmt.Sprintf("; expansion vs exact at order %d: %s", o, fmtG3(e.MaxDev[o-1]))
		}
		p("%s", line)
	}
	if t := d.temp; t != nil {
		edge := "converged on the whole scan"
		if t.Edge > 0 {
			edge = "series trusted up to beta " + fmtFloat(t.LastGood)
		}
		p("  temperature  %d of %d expectations unconverged at order %d; %s; sufficient bound beta < %.2g",
			t.Untrusted, t.Terms, t.Order, edge, t.Bound.Beta)
	}
	if len(d.plans) > 0 {
		var parts []string
		for _, pl := range d.plans {
			parts = append(parts, fmt.Sprintf("%s: %d", fmtFloat(pl.Target), pl.ShotsPerBasis))
		}
		p("  shot plan    shots per basis for Linf %s", strings.Join(parts, ", "))
	}
	warn := 0
	for _, v := range d.verdicts() {
		if !v.OK {
			warn++
			p("WARNING: %s", v.Text)
		}
	}
	if fw := d.fitWarnings(); len(fw) > 0 {
		warn += len(fw)
		p("WARNING: the fitter itself raised %d warning(s); they are listed in the report", len(fw))
	}
	if warn == 0 && d.failure == nil {
		p("  verdict      every check passed: the expansion is trusted at this temperature and the error bars are honest")
	}
	p("  report       %s", d.path("report.md"))
}
