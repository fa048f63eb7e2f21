package main

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"warmfit/fit"
	"warmfit/lattice"
	"warmfit/lattice/model"
)

// The energy scale of a fit at unknown temperature. Without beta, fit
// learns theta = beta*lambda; --scale-from fixes the scale after the fit
// from one calibrated coefficient or a known beta (fit.ScaleEnergy), and
// everything written without it is labelled beta*lambda.

const scaleFromHelp = `Unknown temperature: without beta (neither --beta nor the template's) the data fix
only the products beta*lambda. They
are written as such: the report says "coefficients": "beta*lambda" and "beta_source":
"unknown", the CSV columns are beta_coeff and beta_coeff_stderr, the model's units say
so, and beta = 1 in the file is a convention, not a measured temperature (plan and
model --check warn about it; --beta on such a model is refused). --scale-from fixes the
energy scale after the fit: TERM=VALUE gives one coefficient known from elsewhere
(a calibrated coupling, e.g. "ZZ 0 1=0.25", ZZ:0:1=0.25, or a group name: J=0.25), beta=B a known inverse
temperature; either may carry an uncertainty, as VALUE+-ERR. Then beta = theta_r/VALUE
is reported with its error bar (delta method with the fitted covariance of beta*lambda),
every coefficient is lambda with error bars that include the scale's, and the model
is written at that beta.`

// unscaledSuffix is the label of a coefficient in units of beta*lambda.
const unscaledUnits = "dimensionless: beta*lambda (fitted without beta; beta = 1 is a convention)"

// parseScaleFrom reads --scale-from: "TERM=VALUE[+-ERR]" or
// "beta=B[+-ERR]". TERM is a Pauli string and its sites, separated by
// spaces, commas or a colon ("ZZ 0 1", "ZZ:0,1", "Z:3").
func parseScaleFrom(s string) (fit.Calibration, error) {
	var c fit.Calibration
	const example = `--scale-from "ZZ 0 1=0.25" (a calibrated coefficient) or --scale-from beta=0.35`
	i := strings.LastIndex(s, "=")
	if i < 0 {
		return c, usagef("--scale-from %q: want TERM=VALUE or beta=B, for example %s", s, example)
	}
	left, right := strings.TrimSpace(s[:i]), strings.TrimSpace(s[i+1:])
	v, sv, err := parsePlusMinus(right)
	if err != nil {
		return c, usagef("--scale-from %q: %v", s, err)
	}
	if strings.EqualFold(left, "beta") {
		if !(v > 0) {
			return c, usagef("--scale-from %q: beta must be positive", s)
		}
		c.Beta, c.BetaStderr = v, sv
		return c, nil
	}
	parts := strings.Fields(strings.NewReplacer(":", " ", ",", " ", ";", " ").Replace(left))
	if len(parts) == 1 && left != "" {
		// A group name: resolved against the template (resolveScaleGroup).
		if v == 0 {
			return c, usagef("--scale-from %q: a zero coefficient cannot set a scale", s)
		}
		c.Term, c.Value, c.ValueStderr = groupPrefix+left, v, sv
		return c, nil
	}
	if len(parts) < 2 {
		return c, usagef("--scale-from %q: %q is not a term (a Pauli string and its sites), a group or beta; for example %s", s, left, example)
	}
	sites := make([]int, len(parts)-1)
	for j, p := range parts[1:] {
		n, err := strconv.Atoi(p)
		if err != nil || n < 0 {
			return c, usagef("--scale-from %q: %q is not a site index (a non-negative integer)", s, p)
		}
		sites[j] = n
	}
	pauli, cs, err := lattice.Canonical(strings.ToUpper(parts[0]), sites)
	if err != nil {
		return c, usagef("--scale-from %q: %v", s, err)
	}
	if v == 0 {
		return c, usagef("--scale-from %q: a zero coefficient cannot set a scale", s)
	}
	c.Term, c.Value, c.ValueStderr = lattice.TermKey(pauli, cs), v, sv
	return c, nil
}

// groupPrefix marks a calibration by group name until the template
// resolves it to a member term.
const groupPrefix = "group "

// resolveScaleGroup turns a calibration by group name into one by a
// member term (all members share the coefficient).
func resolveScaleGroup(c fit.Calibration, terms []lattice.Term, spec string) (fit.Calibration, error) {
	name, ok := strings.CutPrefix(c.Term, groupPrefix)
	if !ok {
		return c, nil
	}
	for _, t := range terms {
		if t.Group == name {
			c.Term = t.Key()
			return c, nil
		}
	}
	return c, usagef("--scale-from %q: %q is neither a term (a Pauli string and its sites, like \"ZZ 0 1\") nor a group of the template", spec, name)
}

// parsePlusMinus reads "V", "V+-E" or "V±E".
func parsePlusMinus(s string) (v, e float64, err error) {
	vs, es, found := strings.Cut(strings.ReplaceAll(s, "±", "+-"), "+-")
	if v, err = strconv.ParseFloat(strings.TrimSpace(vs), 64); err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, 0, fmt.Errorf("%q is not a finite number", strings.TrimSpace(vs))
	}
	if found {
		if e, err = strconv.ParseFloat(strings.TrimSpace(es), 64); err != nil || !(e >= 0) || math.IsInf(e, 0) {
			return 0, 0, fmt.Errorf("uncertainty %q is not a non-negative number", strings.TrimSpace(es))
		}
	}
	return v, e, nil
}

// applyEnergyScale fixes the scale of an unknown-temperature fit and
// says so on stderr; with the truth's beta it adds the comparison of beta.
func applyEnergyScale(w io.Writer, res *fit.Result, c fit.Calibration) (*fit.Result, error) {
	scaled, err := fit.ScaleEnergy(res, c)
	if err != nil {
		return nil, fmt.Errorf("--scale-from: %w", err)
	}
	es := scaled.EnergyScale
	se := "no error bar (the fit has none)"
	if !math.IsNaN(es.BetaStderr) {
		se = "+- " + fmtG3(es.BetaStderr)
	}
	fmt.Fprintf(w, "fit: energy scale from %s: beta = %s %s (%s); from here on every coefficient, error and truncation number is in units of lambda\n", c, fmtFloat(es.Beta), se, es.Method)
	return scaled, nil
}

// truthScale is the factor the true coefficients are multiplied by to be
// compared with the fit, with a sentence saying so ("" when 1).
func truthScale(res *fit.Result, truth *model.Model, truthFile string) (float64, string) {
	if res.CoefficientsAreLambda() {
		return 1, ""
	}
	if truth.Beta > 0 {
		return truth.Beta, fmt.Sprintf("the fit learnt beta*lambda: the true coefficients are multiplied by the beta of %s (%s) before the comparison", truthFile, fmtFloat(truth.Beta))
	}
	return 1, fmt.Sprintf("the fit learnt beta*lambda but %s gives no beta: its coefficients are compared as they are (as if beta = 1)", truthFile)
}

// betaAgainstTruth compares a recovered beta with the truth's.
func betaAgainstTruth(w io.Writer, rep *fit.Report, res *fit.Result, truth *model.Model) {
	es := res.EnergyScale
	if es == nil || truth.Beta <= 0 || rep.EnergyScale == nil {
		return
	}
	tb := truth.Beta
	rep.EnergyScale.TrueBeta = &tb
	line := fmt.Sprintf("beta %s against the truth's %s", fmtFloat(es.Beta), fmtFloat(tb))
	if es.BetaStderr > 0 {
		pull := (es.Beta - tb) / es.BetaStderr
		rep.EnergyScale.BetaPull = &pull
		line += fmt.Sprintf(": pull %s", fmtG3(pull))
	}
	fmt.Fprintf(w, "fit: %s\n", line)
}

// fittedWithoutScale reports whether a model file holds the coefficients
// of a fit at unknown temperature (beta*lambda, beta = 1 by convention).
func fittedWithoutScale(m *model.Model) bool {
	var rep struct {
		Coefficients string `json:"coefficients"`
	}
	return len(m.Fit) > 0 && json.Unmarshal(m.Fit, &rep) == nil && rep.Coefficients == "beta*lambda"
}

// unscaledModelWarning is the warning of commands reading such a model.
func unscaledModelWarning(path, consequence string) string {
	return fmt.Sprintf("WARNING: %s was fitted without beta: its coefficients are beta*lambda and its beta = 1 is a convention, not a measured temperature; %s. Fix the energy scale with 'warmfit fit ... --scale-from TERM=VALUE' (one calibrated coefficient) or --scale-from beta=B", path, consequence)
}
