package main

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"github.com/spf13/pflag"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/fit/stationary"
	"warmfit/lattice"
	"warmfit/lattice/model"
	"warmfit/validate"
)

// fitMethodOptions are the flags of "warmfit fit" that choose the
// estimator (the expansion's maximum-entropy fit or the stationarity
// constraints of fit/stationary).
var fitMethodOptions struct {
	method    fitMethod
	calibrate string
	farPairs  bool
}

// fitMethod is the value of fit --method: the estimator.
type fitMethod string

const (
	fitMethodExpansion  fitMethod = "expansion"  // maximum entropy on the linked-cluster expansion
	fitMethodStationary fitMethod = "stationary" // stationarity constraints (fit/stationary)
	fitMethodAuto       fitMethod = "auto"       // expansion, stationary where it is not trusted
)

const fitMethodLong = `

Method (--method): expansion (the default) is the maximum-entropy fit above.
stationary learns the coefficients from the stationarity of the state instead:
Tr(rho [A, H]) = 0 for every probe A (single-site Paulis and pairs of sites sharing
a term) is one linear equation per probe whose entries are measured 2- and 3-local
correlators (Bairey, Arad, Lindner, PRL 122, 020504 (2019)); it needs no expansion
and works at any temperature, but needs snapshots in bases that show those
correlators ('warmfit sample --bases covering:3'), or a table listing them. It
fixes the coefficients only up to their scale and up to conserved quantities such
as the uniform Z field of U(1) models; these are fixed by --calibrate NAME=VALUE
(term keys like ZZ:0:1 or group names, comma-separated) and, with a known beta, by
matching the Gibbs state of the learned direction to the measured term
expectations (exact for up to 12 qubits, the expansion at --order otherwise). The
report lists the lowest eigenvalues of the constraint system and every direction
the data do not resolve; at infinite temperature it says there is no information.
Real models (no term with an odd number of Y, such as XXZ or Ising) also probe
pairs of sites at distance two: their state is real, so only probes with an odd
number of Y carry signal, and nearest pairs alone leave directions unresolved.
The thermal match's chi2 counts the noise of the learned direction as well as
that of the data; a failed match, an unresolved direction or error bars that
cannot be computed give WARNING lines (and checks_passed false in the report).
auto runs the expansion fit and keeps it when it converged with every series
trusted; on lattices of at most 12 sites it refits at the order of the lattice,
where the expansion is exact, and keeps that (combined with the stationarity
constraints where both hold: see combined below). Otherwise it runs stationary and
uses it only when its checks pass (resolved spectrum, consistent thermal match,
finite error bars), else the converged expansion; stderr says which and why.
For example:

  warmfit model --lattice square:3x3 --preset xxz --set Jxy=0.4,Jz=0.3,hz=0.2,hx=0.1 --beta 1 -o device.json
  warmfit sample --model device.json --shots 200000 --bases covering:3 -o shots.csv
  warmfit fit --model device.json --data shots.csv --method stationary -o fitted.json
  warmfit fit --model device.json --data shots.csv --method stationary --calibrate ZZ:0:1=0.3`

// addFitMethodFlags registers the method flags on the fit command.
func addFitMethodFlags(fs *pflag.FlagSet) {
	o := &fitMethodOptions
	fs.StringVar((*string)(&o.method), "method", string(fitMethodExpansion), "estimator: expansion, stationary, combined or auto")
	fs.StringVar(&o.calibrate, "calibrate", "", "stationary: known coefficients `NAME=VALUE,...` (NAME a term key like ZZ:0:1, or a group)")
	fs.BoolVar(&o.farPairs, "far-pairs", false, "stationary: also probe pairs of sites at distance two (always on for real models, whose terms have an even number of Y)")
}

// fitMethodFirst runs the stationarity method when --method stationary
// and reports done; for expansion and auto the expansion fit runs first.
func fitMethodFirst(env *runEnv, tmpl *model.Model, beta float64) (done bool, err error) {
	method, err := parseChoice("--method", string(fitMethodOptions.method), fitMethodExpansion, fitMethodStationary, fitMethodCombined, fitMethodAuto)
	if err != nil {
		return true, err
	}
	if method != fitMethodStationary {
		return false, nil
	}
	fmt.Fprintln(env.Stderr, "fit: method stationary (--method stationary)")
	return true, runFitStationary(env, tmpl, beta)
}

// fitMethodAfter decides, for --method auto and combined, what becomes
// of the expansion fit (res, err).
//
// combined: the expansion fit is combined with the stationarity
// constraints (fitCombine), or, when the two disagree, kept if trusted
// and dropped for stationarity if not.
//
// auto: the expansion is chosen when it converged with every series
// trusted, or when its order covers the whole lattice (then it is
// exact), and then combined with the stationarity constraints wherever
// their checks pass (fitCombine keeps it otherwise). On lattices of at
// most cluster.MaxDenseQubits sites an expansion that stopped short of
// the whole lattice is first refitted at the order of the lattice, where
// it is exact (the fit at order 9 of review finding 1's 3x3 model has
// largest error 0.0037, stationarity 0.1). Otherwise the stationarity
// method runs; its result is used only when its own checks pass
// (stationaryRun.problems), combined with an expansion that converged
// when the two agree, and when the checks fail the expansion fit is kept
// if it converged. The choice and its reasons go to stderr either way,
// and est records them for the report.
//
// When done is false the caller goes on with the returned result res
// and its error fitErr (the refit's when there was one); when done is
// true err is the outcome of the stationarity method.
func fitMethodAfter(env *runEnv, tmpl *model.Model, beta float64, res *fit.Result, fitErr error, refit func(order int) (*fit.Result, error)) (done bool, _ *fit.Result, est *fit.ReportEstimator, _ error) {
	switch fitMethodOptions.method {
	case fitMethodCombined:
		if fitErr != nil {
			if done, _, _, err := fitCombine(env, tmpl, beta, nil, nil, true); done {
				return true, nil, nil, err
			}
			return false, res, nil, fitErr
		}
		return fitCombine(env, tmpl, beta, res, nil, true)
	case fitMethodAuto:
	default:
		return false, res, nil, fitErr
	}
	chose := func(r *fit.Result, why string) (bool, *fit.Result, *fit.ReportEstimator, error) {
		fmt.Fprintf(env.Stderr, "fit: method auto chose the expansion: %s\n", why)
		done, out, est, err := fitCombine(env, tmpl, beta, r, nil, false)
		if est != nil && est.Method == "expansion" {
			est.Reason = why + "; " + est.Reason
		}
		return done, out, est, err
	}
	n := tmpl.Lattice.NumSites()
	if n <= cluster.MaxDenseQubits && refit != nil && fitOptions.order.L == 0 && (fitErr != nil || res.Order < n) &&
		(fitErr != nil || !res.Converged || len(res.Untrusted) > 0) {
		fmt.Fprintf(env.Stderr, "fit: method auto: %d sites: refitting the expansion at order %d, where it covers the whole lattice and is exact\n", n, n)
		if r, err := refit(n); err == nil && r.Converged {
			return chose(r, fmt.Sprintf("order %d covers all %d sites, so it is exact here", n, n))
		} else if err != nil {
			fmt.Fprintf(env.Stderr, "fit: method auto: the exact-order refit failed (%v)\n", err)
		} else {
			fmt.Fprintf(env.Stderr, "fit: method auto: the exact-order refit did not converge (%s)\n", r.Reason)
		}
	}
	why := ""
	switch {
	case fitErr != nil:
		why = "the expansion fit failed: " + fitErr.Error()
	case !res.Converged:
		why = "the expansion fit did not converge: " + res.Reason
	case res.Order >= n:
		return chose(res, fmt.Sprintf("order %d covers all %d sites, so the expansion is exact here", res.Order, n))
	case len(res.Untrusted) > 0:
		why = fmt.Sprintf("%d term expectations of the expansion have not converged at order %d", len(res.Untrusted), res.Order)
	}
	if why == "" {
		return chose(res, fmt.Sprintf("converged, every series trusted at order %d", res.Order))
	}
	fmt.Fprintf(env.Stderr, "fit: method auto tries stationary: %s\n", why)
	run, serr := computeStationary(env, tmpl, beta)
	expansionUsable := fitErr == nil && res.Converged
	switch {
	case serr != nil && expansionUsable:
		reason := fmt.Sprintf("the stationarity method failed (%v)", serr)
		fmt.Fprintf(env.Stderr, "fit: method auto chose the expansion after all: %s\n", reason)
		return false, res, &fit.ReportEstimator{Method: "expansion", Reason: why + "; " + reason}, nil
	case serr != nil:
		return true, nil, nil, fmt.Errorf("%s; the stationarity method failed too: %w", why, serr)
	case len(run.problems) > 0 && expansionUsable:
		reason := fmt.Sprintf("the stationarity result fails its own checks (%s)", strings.Join(run.problems, "; "))
		fmt.Fprintf(env.Stderr, "fit: method auto chose the expansion after all: %s\n", reason)
		return false, res, &fit.ReportEstimator{Method: "expansion", Reason: why + "; " + reason}, nil
	case len(run.problems) > 0:
		fmt.Fprintf(env.Stderr, "fit: method auto chose stationary although it fails its own checks (%s): %s\n", strings.Join(run.problems, "; "), why)
		run.reason = why + "; it fails its own checks (" + strings.Join(run.problems, "; ") + ")"
	case expansionUsable:
		fmt.Fprintf(env.Stderr, "fit: method auto: %s, but the expansion converged: combining it with the stationarity result, which passes its checks\n", why)
		return fitCombine(env, tmpl, beta, res, run, false)
	default:
		fmt.Fprintf(env.Stderr, "fit: method auto chose stationary: %s, and the stationarity result passes its checks (resolved spectrum, consistent thermal match, finite error bars)\n", why)
		run.reason = why + "; the stationarity result passes its checks"
	}
	return true, nil, nil, writeStationary(env, tmpl, beta, run)
}

// stationaryReport is the "fit" object of a model written by the
// stationarity method.
type stationaryReport struct {
	Method             string    `json:"method"`
	Source             string    `json:"source"`
	Data               string    `json:"data"`
	Constraints        int       `json:"constraints"`
	LeftOut            int       `json:"constraints_left_out"`
	Chi2               float64   `json:"constraint_chi2"`
	Spectrum           []float64 `json:"lowest_eigenvalues"`
	Invisible          []string  `json:"invisible_directions"`
	Fixed              string    `json:"scale_fixed_by"`
	FarPairs           bool      `json:"far_pairs"`
	Checks             bool      `json:"checks_passed"`
	ErrorScale         float64   `json:"error_bars_scaled_by,omitempty"`
	MatchChi2          *float64  `json:"thermal_match_chi2,omitempty"`
	MatchChi2Direction *float64  `json:"thermal_match_chi2_with_direction_noise,omitempty"`
	MatchDOF           int       `json:"thermal_match_dof,omitempty"`
	NotThermal         bool      `json:"not_thermal,omitempty"`
	Reason             string    `json:"method_reason,omitempty"`
	Warnings           []string  `json:"warnings"`
	// Converged: the reweighting settled (stationary.Direction.Converged);
	// Order: the expansion order of the thermal match, 0 when none was
	// used (calibrations only, or exact diagonalisation).
	Converged    bool   `json:"converged"`
	Order        int    `json:"order"`
	Solver       string `json:"solver"`
	Reweightings int    `json:"reweightings"`
	ErrorBars    string `json:"error_bars"`
}

func runFitStationary(env *runEnv, tmpl *model.Model, beta float64) error {
	run, err := computeStationary(env, tmpl, beta)
	if err != nil {
		return err
	}
	return writeStationary(env, tmpl, beta, run)
}

// stationaryRun is a computed stationarity fit, not yet written.
type stationaryRun struct {
	sys      *stationary.System
	d        *stationary.Direction
	est      *fit.Estimates
	cal      map[string]float64
	res      *stationary.Result // nil until fix
	reason   string             // why a method choice took it (empty for --method stationary)
	warnings []string
	// order is the expansion order of the thermal match (0: none).
	order int
	// problems are the failed checks that make the result untrustworthy
	// (also in warnings): --method auto does not choose such a result.
	problems []string
}

// computeStationary runs the stationarity method and its checks,
// printing its progress lines to stderr (warnings are printed by
// writeStationary).
func computeStationary(env *runEnv, tmpl *model.Model, beta float64) (*stationaryRun, error) {
	run, err := solveStationary(env, tmpl)
	if err != nil {
		return nil, err
	}
	if err := run.fix(tmpl, beta); err != nil {
		return nil, err
	}
	return run, nil
}

// problem records a failed check: short for the list of problems, long
// as a warning.
func (run *stationaryRun) problem(short, long string) {
	run.problems = append(run.problems, short)
	run.warnings = append(run.warnings, long)
}

// solveStationary reads the data into the constraints and solves for the
// direction, with the checks of the direction (the scale is fixed by
// fix; the combination with the expansion does not need it).
func solveStationary(env *runEnv, tmpl *model.Model) (*stationaryRun, error) {
	o, mo := fitOptions, fitMethodOptions
	n := tmpl.Lattice.NumSites()
	sys, err := stationary.NewSystemWith(n, tmpl.Terms, stationary.SystemOptions{FarPairs: mo.farPairs})
	if err != nil {
		return nil, err
	}
	cal, err := parseCalibrations(mo.calibrate)
	if err != nil {
		return nil, err
	}
	kind, err := fit.DetectDataKind(o.data)
	if err != nil {
		return nil, err
	}
	var est *fit.Estimates
	if kind == fit.KindSnapshots {
		f, err := os.Open(o.data)
		if err != nil {
			return nil, err
		}
		est, err = stationary.EstimateSnapshots(f, o.data, sys, fit.CovarianceOptions{Distance: o.covDist})
		f.Close()
		if err != nil {
			return nil, err
		}
	} else {
		t, err := fit.ReadTableFile(o.data)
		if err != nil {
			return nil, err
		}
		if est, err = stationary.EstimatesFromTable(t, sys); err != nil {
			return nil, fmt.Errorf("%s: %w", o.data, err)
		}
	}
	probes := "single sites and pairs of sites sharing a term"
	if sys.FarPairs {
		probes += ", and pairs at distance two"
		if !mo.farPairs {
			probes += " (on for real models: their Gibbs state is real, so only probes with an odd number of Y carry signal)"
		}
	}
	fmt.Fprintf(env.Stderr, "fit: stationarity: %d probes (%s), %d correlators needed (%d without data), %d terms\n",
		sys.NumRows(), probes, len(sys.Strings), len(est.Missing), len(tmpl.Terms))
	d, err := stationary.Solve(sys, est, stationary.Options{})
	if d != nil {
		for _, line := range strings.Split(strings.TrimSpace(d.Summary()), "\n") {
			if strings.HasPrefix(line, "WARNING") {
				continue // recorded and printed with the other warnings
			}
			fmt.Fprintln(env.Stderr, "fit: "+line)
		}
	}
	if err != nil {
		if len(est.Missing) > 0 {
			err = fmt.Errorf("%w; %s", err, missingStringsMessage(sys, est))
		}
		return nil, fmt.Errorf("%s: %w", o.data, err)
	}
	run := &stationaryRun{sys: sys, d: d, est: est, cal: cal}
	problem := run.problem
	if d.Misfit {
		problem("constraint chi2 too large", fmt.Sprintf("constraint chi2 %s far above its degrees of freedom: the data fit no stationary state of these terms well (a term missing from the template, systematic errors, or a non-stationary state)", fmtG3(d.Chi2)))
	}
	if !d.Converged {
		problem("reweighting not settled", fmt.Sprintf("the reweighting did not settle in %d iterations (last change of a component %s): the direction is not a fixed point of the noise-weighted objective", d.Iterations, fmtG3(d.LastChange)))
	}
	if d.Weak {
		problem("weak signal", fmt.Sprintf("weak signal: a resolved direction has a standard error of %s of the unit direction; the direction error is not in its linear regime and error bars may be too small (seeded repetitions at beta x max|coeff| = 0.1 gave pull rms 2.2): use more shots", fmtG3(maxResolvedStdErr(d))))
	}
	if d.Dropped > 0 {
		run.warnings = append(run.warnings, fmt.Sprintf("%d of %d constraints left out: %s", d.Dropped, d.Dropped+d.Rows, missingStringsMessage(sys, est)))
	}
	return run, nil
}

// fix fixes the scale and the invisible directions of a solved run
// (calibrations, or the thermal match at a known beta) with its checks.
func (run *stationaryRun) fix(tmpl *model.Model, beta float64) error {
	sys, d, est, problem := run.sys, run.d, run.est, run.problem
	g := stationary.Gauge{Calibrated: run.cal}
	source := ""
	var err error
	if beta > 0 {
		g.Beta = beta
		g.Evaluate, g.Response, source, err = stationaryEvaluator(tmpl)
		if err != nil {
			return err
		}
		run.order = stationaryMatchOrder(tmpl)
	}
	res, err := stationary.Fix(sys, est, d, g, stationary.Options{})
	if err != nil {
		return err
	}
	run.res = res
	for _, w := range res.Warnings {
		// Error bars that are missing fail the checks; error bars that
		// leave out the direction's noise through the match only warn
		// (the consistency test then says whether it is conclusive).
		if strings.Contains(w, "not computed") {
			problem("error bars not computed", w)
		} else {
			run.warnings = append(run.warnings, w)
		}
	}
	if m := res.Match; m != nil {
		dof := max(m.DOF, 1)
		switch {
		case m.NotThermal() && m.Inconclusive():
			problem("thermal match inconclusive", fmt.Sprintf("the thermal match at beta %s has chi2 %.4g for %d dof, but the time budget let only %d of the learned direction's error directions be propagated into it, so this does not show that the state is not thermal; the direction may be wrong by more than its error bars",
				fmtFloat(beta), m.Chi2Direction, m.DOF, m.DirectionRank))
		case m.NotThermal():
			problem("thermal match fails", fmt.Sprintf("the thermal match fails (chi2 %.4g for %d dof, the learned direction's noise included): no Gibbs state of the learned direction at beta %s reproduces the data: the learned direction may be wrong by more than its error bars (too little signal for these shots; the error bars are scaled up for it), the state may be stationary but not thermal, beta may be wrong, or the template lacks a term",
				m.Chi2Direction, m.DOF, fmtFloat(beta)))
		case m.DirectionRank == 0 && m.Chi2 > 3*float64(dof):
			problem("thermal match unchecked", fmt.Sprintf("the thermal match has chi2 %.4g for %d dof counting shot noise only (the direction's noise could not be propagated), so its consistency is unchecked", m.Chi2, m.DOF))
		}
		if source != "" && !strings.HasPrefix(source, "exact") {
			run.warnings = append(run.warnings, "the thermal match uses "+source+"; its convergence is not checked here, so the scale is only as good as the expansion at this temperature")
		}
	}
	if res.ErrorScale > 1.5 {
		run.warnings = append(run.warnings, fmt.Sprintf("error bars scaled up by %s = sqrt(chi2/dof) of the thermal match: the data and the learned direction agree less well than their noise says", fmtG3(res.ErrorScale)))
	}
	for q, se := range res.StdErr {
		if math.IsNaN(se) || math.IsInf(se, 0) {
			problem("error bars not finite", fmt.Sprintf("the error bar of %s is not finite: the direction error cannot be bounded", sys.Params().Names[q]))
			break
		}
	}
	for _, inv := range d.Invisible {
		if strings.HasPrefix(inv.Name, "not resolved") {
			problem("unresolved direction", "invisible direction: "+inv.Name+"; fixed only by "+res.Fixed)
			continue
		}
		run.warnings = append(run.warnings, "invisible direction: "+inv.Name)
	}
	return nil
}

// writeStationary prints the scale, the comparison with --truth and the
// warnings, and writes the learned model.
func writeStationary(env *runEnv, tmpl *model.Model, beta float64, run *stationaryRun) error {
	o := fitOptions
	sys, d, res, warnings := run.sys, run.d, run.res, run.warnings
	fmt.Fprintf(env.Stderr, "fit: scale fixed by %s\n", res.Fixed)
	if res.ErrorScale > 1 {
		fmt.Fprintf(env.Stderr, "fit: error bars scaled by %s = sqrt(chi2/dof) of the thermal match\n", fmtG3(res.ErrorScale))
	}
	if m := res.Match; m != nil && m.DirectionRank > 0 {
		fmt.Fprintf(env.Stderr, "fit: thermal consistency: chi2 %s for %d dof with the learned direction's noise propagated (%d error directions, %.0f%% of its variance); %s counting shot noise only\n",
			fmtG3(m.Chi2Direction), m.DOF, m.DirectionRank, 100*m.DirectionShare, fmtG3(m.Chi2))
	}
	if o.truth != "" {
		truth, err := model.ReadFile(o.truth)
		if err != nil {
			return err
		}
		if err := stationaryCompareTruth(env.Stderr, tmpl, truth, res); err != nil {
			return err
		}
	}
	for _, w := range warnings {
		fmt.Fprintln(env.Stderr, "WARNING: "+w)
	}
	terms := append([]lattice.Term(nil), tmpl.Terms...)
	p := sys.Params()
	for k := range terms {
		terms[k].Coeff = res.Lambda[k]
		se := res.StdErr[p.Of[k]]
		terms[k].Stderr, terms[k].HasStderr = se, !math.IsNaN(se) && !math.IsInf(se, 0)
		terms[k].Significant = nil
		if math.IsNaN(terms[k].Coeff) || math.IsInf(terms[k].Coeff, 0) {
			return fmt.Errorf("term %s: coefficient %v is not finite", terms[k].Key(), terms[k].Coeff)
		}
	}
	rep := stationaryReport{
		Method: "stationary", Source: "Bairey, Arad, Lindner, PRL 122, 020504 (2019)", Data: o.data,
		Constraints: d.Rows, LeftOut: d.Dropped, Chi2: d.Chi2, Spectrum: d.Spectrum, Fixed: res.Fixed,
		FarPairs: sys.FarPairs, Checks: len(run.problems) == 0, ErrorScale: res.ErrorScale,
		Warnings: append([]string{}, warnings...), Invisible: []string{}, Reason: run.reason,
		Converged: d.Converged, Order: run.order, Solver: d.Method, Reweightings: d.Iterations, ErrorBars: res.ErrorMethod,
	}
	if rep.ErrorBars == "" {
		rep.ErrorBars = "not computed"
	}
	for _, inv := range d.Invisible {
		rep.Invisible = append(rep.Invisible, inv.Name)
	}
	if m := res.Match; m != nil {
		c := m.Chi2
		rep.MatchChi2, rep.MatchDOF, rep.NotThermal = &c, m.DOF, m.NotThermal() && !m.Inconclusive()
		if m.DirectionRank > 0 {
			cd := m.Chi2Direction
			rep.MatchChi2Direction = &cd
		}
	}
	raw, err := json.Marshal(rep)
	if err != nil {
		return fmt.Errorf("fit report: %v", err)
	}
	outBeta := beta
	if outBeta <= 0 {
		outBeta = 0
	}
	m := &model.Model{Lattice: tmpl.Lattice, Beta: outBeta, Terms: terms, Units: tmpl.Units, Fit: raw}
	if o.format == "csv" {
		meta := &csvMeta{Command: "fit --method stationary", Contents: "one row per template term: its coefficient from the stationarity constraints"}
		meta.line("warmfit fit --method stationary: scale fixed by %s", rep.Fixed)
		for _, warn := range rep.Warnings {
			meta.line("WARNING: %s", warn)
		}
		meta.set("template", o.model)
		meta.set("data", o.data)
		meta.set("fit", json.RawMessage(raw))
		meta.set("converged", rep.Converged)
		meta.set("order", rep.Order)
		return writeCSVResult(env, o.out, o.csv, meta, func(w io.Writer) error { return stationaryWriteCSV(w, terms) })
	}
	return writeOutput(env, o.out, func(w io.Writer) error { return model.Write(w, m) })
}

// missingStringsMessage says which correlators the constraints need but
// the data lack, and which bases provide them.
func missingStringsMessage(sys *stationary.System, est *fit.Estimates) string {
	const show = 4
	var names []string
	threeLocal := false
	for _, j := range est.Missing {
		s := sys.Strings[j]
		if len(s.Sites) >= 3 {
			threeLocal = true
		}
		if len(names) < show {
			names = append(names, s.Key())
		}
	}
	more := ""
	if len(est.Missing) > show {
		more = fmt.Sprintf(" and %d more", len(est.Missing)-show)
	}
	kind := "correlators"
	if threeLocal {
		kind = "correlators (among them 3-local ones)"
	}
	return fmt.Sprintf("the data have no values for %d of the %d %s the constraints need (%s%s); snapshots in the bases of 'warmfit sample --bases covering:3' measure all of them ('--bases covering' measures only the terms), or give a table that lists them",
		len(est.Missing), len(sys.Strings), kind, strings.Join(names, ", "), more)
}

// stationaryWriteCSV writes pauli,sites,coeff,stderr (the report's
// headline and warnings go to the metadata).
func stationaryWriteCSV(w io.Writer, terms []lattice.Term) error {
	fmt.Fprintln(w, "pauli,sites,coeff,stderr")
	for _, t := range terms {
		se := ""
		if t.HasStderr {
			se = fmtExact(t.Stderr)
		}
		fmt.Fprintf(w, "%s,%s,%s,%s\n", t.Pauli, lattice.SitesString(t.Sites), fmtExact(t.Coeff), se)
	}
	return nil
}

// parseCalibrations reads NAME=VALUE,... where NAME is a term key with
// ':' or spaces between letters and sites (ZZ:0:1) or a group name.
func parseCalibrations(s string) (map[string]float64, error) {
	out := map[string]float64{}
	if strings.TrimSpace(s) == "" {
		return out, nil
	}
	for _, item := range strings.Split(s, ",") {
		name, val, ok := strings.Cut(item, "=")
		if !ok {
			return nil, usagef("--calibrate %q: want NAME=VALUE", item)
		}
		v, err := strconv.ParseFloat(strings.TrimSpace(val), 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, usagef("--calibrate %q: value %q is not a finite number", item, val)
		}
		name = strings.Join(strings.FieldsFunc(name, func(r rune) bool { return r == ':' || r == ' ' }), " ")
		out[name] = v
	}
	return out, nil
}

// stationaryEvaluator returns the term expectations of the template's
// lattice and terms at given coefficients, and their linear response
// (for the direction's noise through the thermal match): exact (dense)
// up to cluster.MaxDenseQubits qubits, the expansion at --order (5 when
// auto) otherwise.
func stationaryEvaluator(tmpl *model.Model) (stationary.Evaluator, stationary.ResponseEvaluator, string, error) {
	n := tmpl.Lattice.NumSites()
	terms := tmpl.Terms
	if n <= cluster.MaxDenseQubits {
		ops, err := cluster.TermPaulis(terms)
		if err != nil {
			return nil, nil, "", err
		}
		eval := func(lambda []float64, beta float64) ([]float64, error) {
			tt := withCoeffs(terms, lambda)
			th, err := validate.ExactThermal(n, tt, beta)
			if err != nil {
				return nil, err
			}
			out := make([]float64, len(ops))
			th.ExpectAll(ops, out)
			return out, nil
		}
		resp := func(lambda []float64, beta float64) (*cluster.SparseSym, error) {
			th, err := validate.ExactThermal(n, withCoeffs(terms, lambda), beta)
			if err != nil {
				return nil, err
			}
			k := len(ops)
			dense := make([]float64, k*k)
			th.Response(ops, dense)
			out := cluster.NewSparseSym(k)
			for a := range k {
				for b := a; b < k; b++ {
					if x := dense[a*k+b]; x != 0 {
						out.Set(a, b, x)
					}
				}
			}
			return out, nil
		}
		return eval, resp, "exact diagonalisation of the whole system", nil
	}
	order := stationaryMatchOrder(tmpl)
	exp, err := cluster.NewExpansion(tmpl.Lattice, terms)
	if err != nil {
		return nil, nil, "", err
	}
	eval := func(lambda []float64, beta float64) ([]float64, error) {
		r, err := exp.Evaluate(lambda, beta, cluster.Options{Order: order, Workers: fitOptions.workers})
		if err != nil {
			return nil, err
		}
		return r.Expect[len(r.Expect)-1], nil
	}
	resp := func(lambda []float64, beta float64) (*cluster.SparseSym, error) {
		r, err := exp.Evaluate(lambda, beta, cluster.Options{Order: order, Workers: fitOptions.workers, Response: true})
		if err != nil {
			return nil, err
		}
		return r.Response, nil
	}
	return eval, resp, fmt.Sprintf("the linked-cluster expansion at order %d", order), nil
}

// stationaryMatchOrder is the expansion order stationaryEvaluator uses
// for the template: 0 when it diagonalises exactly.
func stationaryMatchOrder(tmpl *model.Model) int {
	if tmpl.Lattice.NumSites() <= cluster.MaxDenseQubits {
		return 0
	}
	if fitOptions.order.L > 0 {
		return fitOptions.order.L
	}
	return 5
}

func withCoeffs(terms []lattice.Term, lambda []float64) []lattice.Term {
	out := make([]lattice.Term, len(terms))
	for k, t := range terms {
		t.Coeff = lambda[k]
		out[k] = t
	}
	return out
}

// stationaryCompareTruth prints the largest error and the rms z-score
// against a true model with the same terms.
func stationaryCompareTruth(w io.Writer, tmpl, truth *model.Model, res *stationary.Result) error {
	index := map[string]float64{}
	for _, t := range truth.Terms {
		index[t.Key()] = t.Coeff
	}
	var worst, z2 float64
	var nz int
	for k, t := range tmpl.Terms {
		want, ok := index[t.Key()]
		if !ok {
			return fmt.Errorf("--truth: term %s of the template is not in %s", t.Key(), truth.Lattice.Spec.String())
		}
		diff := res.Lambda[k] - want
		worst = max(worst, math.Abs(diff))
		if se := res.StdErr[res.Direction.ParamOf(k)]; se > 0 {
			z2 += diff * diff / (se * se)
			nz++
		}
	}
	fmt.Fprintf(w, "fit: against the truth: largest |error| %s, rms z-score %s over %d coefficients\n", fmtG3(worst), fmtG3(math.Sqrt(z2/float64(max(nz, 1)))), nz)
	return nil
}

// maxResolvedStdErr is the largest standard error of a direction the
// data resolve.
func maxResolvedStdErr(d *stationary.Direction) float64 {
	var m float64
	for _, se := range d.StdErr {
		if !math.IsInf(se, 0) && se <= 0.3 {
			m = max(m, se)
		}
	}
	return m
}
