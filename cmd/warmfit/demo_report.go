package main

import (
	"fmt"
	"io"
	"math"
	"strings"
	"time"

	"warmfit/cluster"
)

// The demo's report, report.md: the scenario, what was done, the
// results, the verdicts, the figures and the commands that reproduce
// each step, section by section.

// mdWriter accumulates the report.
type mdWriter struct{ strings.Builder }

func (m *mdWriter) p(format string, args ...any) { fmt.Fprintf(&m.Builder, format, args...) }

// mdCell escapes the text of one table cell: a bare '|' would end the
// cell, so it is written as the HTML entity &#124;, as README's tables do.
func mdCell(s string) string { return strings.ReplaceAll(s, "|", "&#124;") }

// writeReport writes report.md.
func (d *demoRun) writeReport() error {
	return d.write("report.md", func(w io.Writer) error {
		var m mdWriter
		d.reportScenario(&m)
		d.reportSteps(&m)
		if d.array != nil {
			m.p("## Results\n\n")
			d.reportRecovery(&m)
			d.reportCrosscheck(&m)
			d.reportTemperature(&m)
			d.reportPlan(&m)
		}
		d.reportVerdicts(&m)
		if d.failure == nil {
			m.p("## Figures\n\n")
			for _, f := range demoFigureList {
				m.p("- [%s](%s): %s\n", f.File, f.File, f.Caption)
			}
			m.p("\n")
		}
		d.reportReproduce(&m)
		d.reportLimits(&m)
		m.p("## Files\n\n")
		for _, f := range d.files {
			m.p("- %s\n", f)
		}
		m.p("- report.md (this file)\n")
		_, err := io.WriteString(w, m.String())
		return err
	})
}

func (d *demoRun) reportScenario(m *mdWriter) {
	sc := &d.sc
	m.p("# warmfit demo: calibrating a %dx%d qubit array from its thermal state\n\n", sc.Width, sc.Height)
	m.p("Written by `warmfit demo` in %.1f s. Every number below was computed in this run; the\n", time.Since(d.start).Seconds())
	m.p("device is invented and its true coefficients are known only to the demo.\n\n")
	m.p("## The scenario\n\n")
	m.p("A lab runs an analog quantum simulator: a %dx%d square array of %d coupled qubits. The device\n", sc.Width, sc.Height, sc.numSites())
	m.p("Hamiltonian has XXZ exchange on each of the %d nearest-neighbour bonds and an X field (drive)\n", d.numBonds())
	m.p("and a Z field (detuning) on every site,\n\n")
	m.p("    H = sum_<ij> (Jx_ij X_i X_j + Jy_ij Y_i Y_j + Jz_ij Z_i Z_j) + sum_i (hx_i X_i + hz_i Z_i),\n\n")
	m.p("%d coefficients in all, designed as Jx = Jy = Jxy, Jz, hx and hz below. Fabrication spread\n", d.arrayTerms())
	m.p("moves every coefficient (Jx and Jy of one bond independently) off its design value by a\n")
	m.p("uniform random amount in [-%s, %s) (seed %d). The array is held at an effective\n", fmtFloat(sc.Disorder), fmtFloat(sc.Disorder), sc.Seed)
	m.p("temperature: its state is the Gibbs state\n")
	m.p("exp(-beta H)/Z with beta = %s in the units of the coefficients, assumed known from an\n", fmtFloat(sc.Beta))
	m.p("independent calibration (without it, `warmfit fit` learns the products beta x coefficient).\n\n")
	m.p("| parameter | design value | meaning |\n|---|---|---|\n")
	for _, q := range sc.Params {
		m.p("| %s | %s | %s |\n", mdCell(q.Name), fmtFloat(q.Value), mdCell(q.Doc))
	}
	m.p("| disorder | +-%s | uniform shift of every coefficient, seed %d |\n", fmtFloat(sc.Disorder), sc.Seed)
	m.p("| beta | %s | inverse temperature; beta x max&#124;coefficient&#124; = %.3f |\n", fmtFloat(sc.Beta), sc.Beta*d.maxTrueCoeff())
	m.p("| shots | %d per basis | measurement budget |\n\n", sc.Shots)
	if sc.Quick {
		m.p("This is the --quick variant (a %dx%d array).\n\n", sc.Width, sc.Height)
	}
}

func (d *demoRun) reportSteps(m *mdWriter) {
	m.p("## What was done\n\n")
	for _, s := range d.steps {
		m.p("%d. %s (%.1f s)\n", s.Number, capitalise(s.Title), s.Elapsed.Seconds())
		for _, line := range d.stepDetails(s.Number) {
			m.p("   - %s\n", line)
		}
	}
	m.p("\n")
}

// stepDetails are the facts of one step for the report.
func (d *demoRun) stepDetails(step int) []string {
	sc := &d.sc
	var out []string
	switch step {
	case 1:
		if d.device != nil {
			out = append(out, fmt.Sprintf("truth.json: %d terms on %s; template.json: the same terms at their design values.", len(d.device.Terms), sc.latticeSpec()))
		}
	case 2:
		if d.data != nil {
			out = append(out, fmt.Sprintf("%d product bases (%s) measure every term; %d shots each, %d in all.", len(d.bases), describeBases(d.bases), sc.Shots, sc.Shots*int64(len(d.bases))))
			out = append(out, fmt.Sprintf("data.csv: each term's estimate drawn from the binomial law with the expansion's expectation value at order %d, chosen by the order policy for a truncation error of %s (a tenth of the shot noise): %s.",
				d.data.Order, fmtG3(sc.dataTol()), d.data.Reason))
		}
	case 3:
		if f := d.array; f != nil {
			r := f.Report
			out = append(out, fmt.Sprintf("fitted.json: %d coefficients with error bars (%s), expansion order %d chosen %s, %s, %.1f s.",
				r.Terms, r.ErrorMethod, r.Order, map[string]string{"auto": "by the fitter", "fixed": "by --order"}[string(r.OrderMode)], newtonIterations(r.AllIterations, r.Iterations, r.Order), r.ElapsedSeconds))
		}
	case 4:
		if p := d.patch; p != nil && p.Fit != nil {
			r := p.Fit.Report
			how := fmt.Sprintf("order %d", r.Order)
			if r.Truncation.Exact {
				how += " (covers the patch: exact)"
			}
			out = append(out, fmt.Sprintf("%d exact snapshots per basis in %d bases from the patch's Gibbs state; fit at %s.", sc.Shots, len(p.Bases), how))
		}
		if p := d.patch; p != nil && p.Check != nil {
			out = append(out, fmt.Sprintf("expansion against dense exact diagonalisation of the %d-qubit patch at every order (%.1f s).", len(p.Sites), p.CheckElapsed.Seconds()))
		}
	case 5:
		if t := d.temp; t != nil && t.Sweep != nil {
			out = append(out, fmt.Sprintf("sweep.csv: energy, entropy and heat capacity per site of the fitted model at %d inverse temperatures up to %s, order %d.",
				len(t.Sweep.Betas), fmtFloat(t.Sweep.Betas[len(t.Sweep.Betas)-1]), t.Order))
		}
	case 6:
		if len(d.plans) > 0 {
			out = append(out, fmt.Sprintf("planned from the fitted model (the lab's best knowledge), order-%d response, covering bases.", d.plans[0].Order))
		}
	}
	return out
}

func (d *demoRun) reportRecovery(m *mdWriter) {
	sc := &d.sc
	m.p("### Recovery of the coefficients\n\n")
	m.p("Pull = (fitted - true) / stderr; for honest error bars pulls are standard normal.\n\n")
	fits := []*demoFit{d.array}
	m.p("| | array %dx%d (binomial data) |", sc.Width, sc.Height)
	if d.patch != nil && d.patch.Fit != nil {
		fits = append(fits, d.patch.Fit)
		m.p(" patch %dx%d (exact snapshots) |", sc.Patch, sc.Patch)
	}
	m.p("\n|---|---|%s\n", strings.Repeat("---|", len(fits)-1))
	row := func(name string, cell func(f *demoFit, r *demoRecovery) string) {
		m.p("| %s |", mdCell(name))
		for _, f := range fits {
			m.p(" %s |", mdCell(cell(f, f.Recovery)))
		}
		m.p("\n")
	}
	row("coefficients", func(_ *demoFit, r *demoRecovery) string { return fmt.Sprint(len(r.Terms)) })
	row("expansion order", func(f *demoFit, _ *demoRecovery) string {
		if f.Report.Truncation.Exact {
			return fmt.Sprintf("%d (exact)", f.Report.Order)
		}
		return fmt.Sprintf("%d (%s)", f.Report.Order, f.Report.OrderMode)
	})
	row("L2 error", func(_ *demoFit, r *demoRecovery) string { return fmtG3(r.L2) })
	row("Linf error (term)", func(_ *demoFit, r *demoRecovery) string { return fmtG3(r.Linf) + " (" + r.LargestError + ")" })
	row("median / largest stderr", func(_ *demoFit, r *demoRecovery) string { return fmtG3(r.MedStderr) + " / " + fmtG3(r.MaxStderr) })
	row("pull mean", func(_ *demoFit, r *demoRecovery) string { return fmt.Sprintf("%+.3f", r.PullMean) })
	row("pull rms", func(_ *demoFit, r *demoRecovery) string { return fmt.Sprintf("%.3f", r.RMSZ) })
	row("within 2 sigma", func(_ *demoFit, r *demoRecovery) string { return fmt.Sprintf("%.1f%%", 100*r.Within2) })
	row("largest |pull| (chance of one as large)", func(_ *demoFit, r *demoRecovery) string {
		return fmt.Sprintf("%.2f (%.2g)", r.MaxAbsZ, maxPullChance(r.MaxAbsZ, len(r.Terms)))
	})
	row("fit time", func(f *demoFit, _ *demoRecovery) string { return fmt.Sprintf("%.1f s", f.Report.ElapsedSeconds) })
	m.p("\nBy kind of term (array):\n\n")
	m.p("| term | count | true values (mean, range) | rms error | median stderr | pull rms |\n|---|---|---|---|---|---|\n")
	for _, s := range d.array.Recovery.ByKind {
		m.p("| %s | %d | %.3f (%.3f .. %.3f) | %s | %s | %.2f |\n", s.Pauli, s.Count, s.TrueMean, s.TrueMin, s.TrueMax, fmtG3(s.RMSError), fmtG3(s.MedStderr), s.PullRMS)
	}
	m.p("\n")
}

func (d *demoRun) reportCrosscheck(m *mdWriter) {
	if d.patch == nil || d.patch.Check == nil {
		return
	}
	c, n := d.patch.Check, len(d.patch.Sites)
	m.p("### The expansion against exact diagonalisation (patch)\n\n")
	m.p("Largest difference over the patch's %d term expectations between the linked-cluster\n", len(d.patch.Truth.Model.Terms))
	m.p("expansion at order L and dense exact diagonalisation of all %d qubits, at beta = %s\n", n, fmtFloat(d.sc.Beta))
	m.p("(validate.Crosscheck, as `warmfit crosscheck` computes it). For comparison, one measured\n")
	m.p("expectation has a statistical error of about %s.\n\n", fmtG3(d.sc.dataNoise()))
	m.p("| order L |")
	for _, oc := range c.Orders[1:] {
		m.p(" %d |", oc.Order)
	}
	m.p("\n|---|%s\n| max difference |", strings.Repeat("---|", len(c.Orders)-1))
	for _, oc := range c.Orders[1:] {
		mark := ""
		if oc.Order == d.array.Result.Order {
			mark = " (array)"
		}
		m.p(" %s%s |", fmtG3(oc.MaxDiff), mark)
	}
	m.p("\n\n")
}

func (d *demoRun) reportTemperature(m *mdWriter) {
	t, sc := d.temp, &d.sc
	if t == nil {
		return
	}
	m.p("### Temperature\n\n")
	m.p("| check | value |\n|---|---|\n")
	m.p("| sufficient-condition bound (term-overlap degree %d) | beta < %.3g |\n", t.Bound.Degree, t.Bound.Beta)
	m.p("| operating beta | %s (%.0fx the bound) |\n", fmtFloat(sc.Beta), sc.Beta/t.Bound.Beta)
	m.p("| unconverged term expectations at the fit (order %d) | %d of %d |\n", t.Order, t.Untrusted, t.Terms)
	m.p("| truncation error of the coefficients (orders %s) | %s (target %s) |\n", joinInts(t.Truncation.Orders, ", "), fmtMaybePtr(t.Truncation.Error), fmtG3(t.Truncation.Target))
	edge := "on the whole sweep"
	switch {
	case t.Edge > 0 && t.LastGood > 0:
		edge = t.Judged.trustedLimit()
	case t.Edge > 0:
		edge = "nowhere on the sweep"
	}
	m.p("| energy and heat capacity per site converged (tolerance %g) | %s |\n\n", sc.SweepTol, edge)
}

func (d *demoRun) reportPlan(m *mdWriter) {
	if len(d.plans) == 0 {
		return
	}
	first := d.plans[0]
	m.p("### Shot plan\n\n")
	m.p("Shots per basis so that every coefficient is within eps of the truth at 95%% confidence\n")
	m.p("(Bonferroni over all coefficients, z = %.2f), predicted before measuring from the fitted\n", first.Z)
	m.p("model with %d covering bases. Error bars shrink as 1/sqrt(shots).\n\n", len(first.Bases))
	m.p("| Linf target eps | shots per basis | total shots | predicted largest stderr |\n|---|---|---|---|\n")
	for _, pl := range d.plans {
		m.p("| %s | %d | %d | %s |\n", fmtFloat(pl.Target), pl.ShotsPerBasis, pl.TotalShots, fmtG3(pl.PredictedLinf()))
	}
	m.p("\nAt the %d shots per basis of this run the planner predicts a largest stderr of %s; the\n", d.sc.Shots, fmtG3(d.planAtRun))
	m.p("fit reported %s.\n\n", fmtG3(d.array.Recovery.MaxStderr))
}

func (d *demoRun) reportVerdicts(m *mdWriter) {
	m.p("## Verdicts\n\n")
	for _, v := range d.verdicts() {
		if v.OK {
			m.p("- %s\n", v.Text)
		} else {
			m.p("- WARNING: %s\n", v.Text)
		}
	}
	m.p("\n")
	if fw := d.fitWarnings(); len(fw) > 0 {
		m.p("The fitter's own warnings, as written into fitted.json and patch-fitted.json:\n\n")
		for _, w := range fw {
			m.p("- WARNING %s\n", w)
		}
		m.p("\n")
	}
}

func (d *demoRun) reportReproduce(m *mdWriter) {
	m.p("## Reproduce with the warmfit command line\n\n")
	m.p("The demo ran every step through the warmfit library; each is also an ordinary warmfit\n")
	m.p("command, listed here to be run in the output directory. Only the patch's two model files\n")
	m.p("are cut by the demo itself (no command writes a patch of a model).\n\n")
	d.writeCommands(m)
}

func (d *demoRun) reportLimits(m *mdWriter) {
	sc := &d.sc
	order := "the order the policy chose"
	if d.data != nil {
		order = fmt.Sprintf("order %d", d.data.Order)
	}
	m.p("## What this run does and does not show\n\n")
	m.p("- The array's data are drawn from the expansion of the truth at %s (exact snapshots need\n", order)
	m.p("  dense diagonalisation, at most %d qubits; the array has %d), accurate to a tenth of the\n", cluster.MaxDenseQubits, sc.numSites())
	m.p("  shot noise. The array comparison tests the statistics, the fitter and its error bars; the\n")
	m.p("  %dx%d patch, with exact snapshots and dense diagonalisation, is the check against exact\n", sc.Patch, sc.Patch)
	m.p("  results.\n")
	m.p("- The binomial generator draws each term's estimate on its own: real shots correlate the\n")
	m.p("  estimates that share them (cross-term correlations are ignored). The patch's snapshots are\n")
	m.p("  real shots and its fit uses their covariance.\n")
	m.p("- The sufficient-temperature bound is a worst-case guarantee far below practical\n")
	m.p("  temperatures; the trust verdicts rest on the measured convergence of the series.\n\n")
}

func (d *demoRun) numBonds() int {
	if d.device == nil {
		return 2*d.sc.Width*d.sc.Height - d.sc.Width - d.sc.Height
	}
	return len(d.device.Lattice.NN)
}

func (d *demoRun) arrayTerms() int {
	if d.device == nil {
		return 0
	}
	return len(d.device.Terms)
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

func plural(n int, what string) string {
	if n == 1 {
		return "1 " + what
	}
	return fmt.Sprintf("%d %ss", n, what)
}

func joinInts(v []int, sep string) string {
	s := make([]string, len(v))
	for i, x := range v {
		s[i] = fmt.Sprint(x)
	}
	return strings.Join(s, sep)
}

func capitalise(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}
