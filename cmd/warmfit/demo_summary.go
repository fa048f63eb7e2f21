package main

import (
	"fmt"
	"io"
	"strings"
)

// printSummary writes the demo's short summary to stdout, one line per
// result and where the report is, and every verdict that is not OK as a
// WARNING line to stderr.
func (d *demoRun) printSummary(w io.Writer) {
	sc := &d.sc
	p := func(format string, args ...any) { fmt.Fprintf(w, format+"\n", args...) }
	p("warmfit demo: %dx%d qubit array, %d coefficients, beta %s, %d shots in each of %d bases",
		sc.Width, sc.Height, d.arrayTerms(), fmtFloat(sc.Beta), sc.Shots, len(d.bases))
	if f := d.array; f != nil {
		r := f.Recovery
		p("  array fit    order %d: L2 error %s, Linf %s; pulls mean %+.2f, rms %.2f, %.1f%% within 2 sigma",
			f.Result.Order, fmtG3(r.L2), fmtG3(r.Linf), r.PullMean, r.RMSZ, 100*r.Within2)
	}
	if pt := d.patch; pt != nil && pt.Fit != nil {
		r := pt.Fit.Recovery
		line := fmt.Sprintf("  %dx%d patch    exact snapshots, order %d: Linf %s; pulls rms %.2f, %.1f%% within 2 sigma",
			sc.Patch, sc.Patch, pt.Fit.Result.Order, fmtG3(r.Linf), r.RMSZ, 100*r.Within2)
		if c := pt.Check; c != nil {
			o := min(d.array.Result.Order, len(c.Orders))
			line += fmt.Sprintf("; expansion vs exact at order %d: %s", o, fmtG3(c.Orders[o-1].MaxDiff))
		}
		p("%s", line)
	}
	if t := d.temp; t != nil {
		edge := "converged on the whole sweep"
		switch {
		case t.Edge > 0 && t.LastGood > 0:
			edge = "series trusted " + t.Judged.trustedLimit()
		case t.Edge > 0:
			edge = "series trusted nowhere on the sweep"
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
	// Warnings go to stderr, as every command's do; the summary counts
	// them.
	warn, marginal := 0, 0
	for _, v := range d.verdicts() {
		if v.Marginal {
			marginal++
		}
		if !v.OK {
			warn++
			fmt.Fprintf(d.env.Stderr, "WARNING: %s\n", v.Text)
		}
	}
	if fw := d.fitWarnings(); len(fw) > 0 {
		warn += len(fw)
		fmt.Fprintf(d.env.Stderr, "WARNING: the fitter itself raised %d warning(s); they are listed in the report\n", len(fw))
	}
	switch {
	case warn > 0:
		p("  verdict      %s: see stderr and the report", plural(warn, "warning"))
	case d.failure == nil && marginal > 0:
		p("  verdict      every check passed: the expansion is trusted at this temperature; the pulls are only marginally consistent with honest error bars (see the report)")
	case d.failure == nil:
		p("  verdict      every check passed: the expansion is trusted at this temperature and the pulls are consistent with honest error bars")
	}
	p("  report       %s", d.path("report.md"))
}
