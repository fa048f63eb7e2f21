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
auto runs the expansion fit and keeps it when it converged with every series
trusted; otherwise it uses stationary, and says which it used. For example:

  warmfit sample --model device.json --shots 50000 --bases covering:3 -o shots.csv
  warmfit fit --model device.json --data shots.csv --method stationary -o fitted.json
  warmfit fit --model template.json --data shots.csv --method stationary --calibrate ZZ:0:1=0.2`

// addFitMethodFlags registers the method flags on the fit command.
func addFitMethodFlags(fs *pflag.FlagSet) {
	o := &fitMethodOptions
	fs.StringVar((*string)(&o.method), "method", string(fitMethodExpansion), "estimator: expansion, stationary or auto")
	fs.StringVar(&o.calibrate, "calibrate", "", "stationary: known coefficients `NAME=VALUE,...` (NAME a term key like ZZ:0:1, or a group)")
	fs.BoolVar(&o.farPairs, "far-pairs", false, "stationary: also probe pairs of sites at distance two (symmetric models)")
}

// fitMethodFirst runs the stationarity method when --method stationary
// and reports done; for expansion and auto the expansion fit runs first.
func fitMethodFirst(env *runEnv, tmpl *model.Model, beta float64) (done bool, err error) {
	method, err := parseChoice("--method", string(fitMethodOptions.method), fitMethodExpansion, fitMethodStationary, fitMethodAuto)
	if err != nil {
		return true, err
	}
	if method != fitMethodStationary {
		return false, nil
	}
	fmt.Fprintln(env.Stderr, "fit: method stationary (--method stationary)")
	return true, runFitStationary(env, tmpl, beta)
}

// fitMethodAfter decides, for --method auto, whether the expansion fit
// (res, err) is trusted; when it is not, it runs the stationarity method
// and reports done.
func fitMethodAfter(env *runEnv, tmpl *model.Model, beta float64, res *fit.Result, fitErr error) (done bool, err error) {
	if fitMethodOptions.method != fitMethodAuto {
		return false, nil
	}
	why := ""
	switch {
	case fitErr != nil:
		why = "the expansion fit failed: " + fitErr.Error()
	case !res.Converged:
		why = "the expansion fit did not converge: " + res.Reason
	case len(res.Untrusted) > 0:
		why = fmt.Sprintf("%d term expectations of the expansion have not converged at order %d", len(res.Untrusted), res.Order)
	}
	if why == "" {
		fmt.Fprintf(env.Stderr, "fit: method auto chose the expansion (converged, every series trusted at order %d)\n", res.Order)
		return false, nil
	}
	fmt.Fprintf(env.Stderr, "fit: method auto chose stationary: %s\n", why)
	return true, runFitStationary(env, tmpl, beta)
}

// stationaryReport is the "fit" object of a model written by the
// stationarity method.
type stationaryReport struct {
	Method      string    `json:"method"`
	Source      string    `json:"source"`
	Data        string    `json:"data"`
	Constraints int       `json:"constraints"`
	LeftOut     int       `json:"constraints_left_out"`
	Chi2        float64   `json:"constraint_chi2"`
	Spectrum    []float64 `json:"lowest_eigenvalues"`
	Invisible   []string  `json:"invisible_directions"`
	Fixed       string    `json:"scale_fixed_by"`
	MatchChi2   *float64  `json:"thermal_match_chi2,omitempty"`
	MatchDOF    int       `json:"thermal_match_dof,omitempty"`
	NotThermal  bool      `json:"not_thermal,omitempty"`
	Warnings    []string  `json:"warnings"`
}

func runFitStationary(env *runEnv, tmpl *model.Model, beta float64) error {
	o, mo := fitOptions, fitMethodOptions
	n := tmpl.Lattice.NumSites()
	sys, err := stationary.NewSystemWith(n, tmpl.Terms, stationary.SystemOptions{FarPairs: mo.farPairs})
	if err != nil {
		return err
	}
	cal, err := parseCalibrations(mo.calibrate)
	if err != nil {
		return err
	}
	kind, err := fit.DetectDataKind(o.data)
	if err != nil {
		return err
	}
	var est *fit.Estimates
	if kind == fit.KindSnapshots {
		f, err := os.Open(o.data)
		if err != nil {
			return err
		}
		est, err = stationary.EstimateSnapshots(f, o.data, sys, fit.CovarianceOptions{Distance: o.covDist})
		f.Close()
		if err != nil {
			return err
		}
	} else {
		t, err := fit.ReadTableFile(o.data)
		if err != nil {
			return err
		}
		if est, err = stationary.EstimatesFromTable(t, sys); err != nil {
			return fmt.Errorf("%s: %w", o.data, err)
		}
	}
	fmt.Fprintf(env.Stderr, "fit: stationarity: %d probes, %d correlators needed (%d without data), %d terms\n",
		sys.NumRows(), len(sys.Strings), len(est.Missing), len(tmpl.Terms))
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
		return fmt.Errorf("%s: %w", o.data, err)
	}
	var warnings []string
	if d.Misfit {
		warnings = append(warnings, fmt.Sprintf("constraint chi2 %s far above its degrees of freedom: the data fit no stationary state of these terms well (a term missing from the template, systematic errors, or a non-stationary state)", fmtG3(d.Chi2)))
	}
	if d.Weak {
		warnings = append(warnings, fmt.Sprintf("weak signal: a resolved direction has a standard error of %s of the unit direction; error bars may be too small (seeded repetitions at beta x max|coeff| = 0.1 gave pull rms 2.2)", fmtG3(maxResolvedStdErr(d))))
	}
	if d.Dropped > 0 {
		warnings = append(warnings, fmt.Sprintf("%d of %d constraints left out: their correlators have no data (measure in the bases of --bases covering:3)", d.Dropped, d.Dropped+d.Rows))
	}
	g := stationary.Gauge{Calibrated: cal}
	source := ""
	if beta > 0 {
		g.Beta = beta
		g.Evaluate, source, err = stationaryEvaluator(tmpl)
		if err != nil {
			return err
		}
	}
	res, err := stationary.Fix(sys, est, d, g, stationary.Options{})
	if err != nil {
		return err
	}
	warnings = append(warnings, res.Warnings...)
	if res.Match != nil {
		if res.Match.NotThermal() {
			warnings = append(warnings, fmt.Sprintf("the thermal match fails (chi2 %.4g for %d dof): no Gibbs state of the learned direction at beta %s reproduces the data; the state may be stationary but not thermal, or beta is wrong",
				res.Match.Chi2, res.Match.DOF, fmtFloat(beta)))
		}
		if source != "" && !strings.HasPrefix(source, "exact") {
			warnings = append(warnings, "the thermal match uses "+source+"; its convergence is not checked here, so the scale is only as good as the expansion at this temperature")
		}
	}
	for _, inv := range d.Invisible {
		warnings = append(warnings, "invisible direction: "+inv.Name)
	}
	fmt.Fprintf(env.Stderr, "fit: scale fixed by %s\n", res.Fixed)
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
		terms[k].Stderr, terms[k].HasStderr = se, !math.IsNaN(se)
		terms[k].Significant = nil
		if math.IsNaN(terms[k].Coeff) || math.IsInf(terms[k].Coeff, 0) {
			return fmt.Errorf("term %s: coefficient %v is not finite", terms[k].Key(), terms[k].Coeff)
		}
	}
	rep := stationaryReport{
		Method: "stationary", Source: "Bairey, Arad, Lindner, PRL 122, 020504 (2019)", Data: o.data,
		Constraints: d.Rows, LeftOut: d.Dropped, Chi2: d.Chi2, Spectrum: d.Spectrum, Fixed: res.Fixed,
		Warnings: append([]string{}, warnings...), Invisible: []string{},
	}
	for _, inv := range d.Invisible {
		rep.Invisible = append(rep.Invisible, inv.Name)
	}
	if res.Match != nil {
		c := res.Match.Chi2
		rep.MatchChi2, rep.MatchDOF, rep.NotThermal = &c, res.Match.DOF, res.Match.NotThermal()
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
		return writeCSVResult(env, o.out, o.csv, meta, func(w io.Writer) error { return stationaryWriteCSV(w, terms) })
	}
	return writeOutput(env, o.out, func(w io.Writer) error { return model.Write(w, m) })
}

// stationaryWriteCSV writes pauli,sites,coeff,stderr (the report's
// headline and warnings go to the metadata).
func stationaryWriteCSV(w io.Writer, terms []lattice.Term) error {
	fmt.Fprintln(w, "pauli,sites,coeff,stderr")
	for _, t := range terms {
		se := ""
		if t.HasStderr {
			se = strconv.FormatFloat(t.Stderr, 'g', -1, 64)
		}
		fmt.Fprintf(w, "%s,%s,%s,%s\n", t.Pauli, lattice.SitesString(t.Sites), strconv.FormatFloat(t.Coeff, 'g', -1, 64), se)
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
// lattice and terms at given coefficients: exact (dense) up to
// cluster.MaxDenseQubits qubits, the expansion at --order (5 when auto)
// otherwise.
func stationaryEvaluator(tmpl *model.Model) (stationary.Evaluator, string, error) {
	n := tmpl.Lattice.NumSites()
	terms := tmpl.Terms
	if n <= cluster.MaxDenseQubits {
		ops, err := cluster.TermPaulis(terms)
		if err != nil {
			return nil, "", err
		}
		return func(lambda []float64, beta float64) ([]float64, error) {
			tt := withCoeffs(terms, lambda)
			th, err := validate.ExactThermal(n, tt, beta)
			if err != nil {
				return nil, err
			}
			out := make([]float64, len(ops))
			th.ExpectAll(ops, out)
			return out, nil
		}, "exact diagonalisation of the whole system", nil
	}
	order := 5
	if fitOptions.order.L > 0 {
		order = fitOptions.order.L
	}
	exp, err := cluster.NewExpansion(tmpl.Lattice, terms)
	if err != nil {
		return nil, "", err
	}
	return func(lambda []float64, beta float64) ([]float64, error) {
		r, err := exp.Evaluate(lambda, beta, cluster.Options{Order: order, Workers: fitOptions.workers})
		if err != nil {
			return nil, err
		}
		return r.Expect[len(r.Expect)-1], nil
	}, fmt.Sprintf("the linked-cluster expansion at order %d", order), nil
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
