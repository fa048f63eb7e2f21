package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"warmfit/lattice"
	"warmfit/lattice/model"
)

// fitReportOf reads the fit report of a fitted model file.
func fitReportOf(t *testing.T, path string) (*model.Model, map[string]any) {
	t.Helper()
	m, err := model.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var rep map[string]any
	if err := json.Unmarshal(m.Fit, &rep); err != nil {
		t.Fatal(err)
	}
	return m, rep
}

// unknownBetaTemplate writes the chain template without its beta.
func unknownBetaTemplate(t *testing.T, dir string) string {
	t.Helper()
	tmpl, err := model.ReadFile(fitTemplate)
	if err != nil {
		t.Fatal(err)
	}
	tmpl.Beta = 0
	path := filepath.Join(dir, "template.json")
	writeModelFile(t, tmpl, path)
	return path
}

// Exact data at the exact order: --scale-from with one true coefficient,
// or with the true beta, recovers beta and every lambda exactly (closed
// form beta = theta_r / lambda_r of a noiseless fit; truth from dense
// exact diagonalisation).
func TestFitScaleFromExact(t *testing.T) {
	dir := t.TempDir()
	truth := fitTruth(t) // beta 0.3; ZZ 0 1 has 0.9
	data := filepath.Join(dir, "e.csv")
	writeExactTable(t, truth, 0, data)
	tmpl := unknownBetaTemplate(t, dir)
	for _, spec := range []string{"ZZ 0 1=0.9", "zz:0,1=0.9", "X:2=0.6", "beta=0.3"} {
		out := filepath.Join(dir, "scaled.json")
		code, _, errs := runCmd("fit", "--model", tmpl, "--data", data, "--order", "4", "--scale-from", spec, "-o", out)
		if code != exitOK {
			t.Fatalf("--scale-from %q: exit %d\n%s", spec, code, errs)
		}
		if !strings.Contains(errs, "energy scale from") || !strings.Contains(errs, "beta = 0.3") {
			t.Errorf("--scale-from %q: stderr does not report beta:\n%s", spec, errs)
		}
		m, rep := fitReportOf(t, out)
		if math.Abs(m.Beta-0.3) > 1e-8 || rep["beta_source"] != "energy scale" || rep["coefficients"] != "lambda" || m.Units == unscaledUnits {
			t.Errorf("--scale-from %q: beta %v, beta_source %v, coefficients %v, units %q", spec, m.Beta, rep["beta_source"], rep["coefficients"], m.Units)
		}
		es, _ := rep["energy_scale"].(map[string]any)
		if es == nil || math.Abs(es["beta"].(float64)-0.3) > 1e-8 {
			t.Errorf("--scale-from %q: energy_scale %v", spec, rep["energy_scale"])
		}
		for k, term := range m.Terms {
			if d := math.Abs(term.Coeff - truth.Terms[k].Coeff); d > 1e-8 {
				t.Errorf("--scale-from %q: %s = %v, truth %v", spec, term.Key(), term.Coeff, truth.Terms[k].Coeff)
			}
		}
	}
}

// Noisy data: beta comes with an error bar, and the truth comparison of
// a scaled fit compares lambda with lambda (no silent rescaling) and
// gives the pull of beta.
func TestFitScaleFromNoisy(t *testing.T) {
	dir := t.TempDir()
	_, data, truthPath := noisyChainFiles(t, dir)
	tmpl := unknownBetaTemplate(t, dir)
	out := filepath.Join(dir, "scaled.json")
	code, _, errs := runCmd("fit", "--model", tmpl, "--data", data, "--order", "4", "--scale-from", "ZZ 0 1=0.9", "--truth", truthPath, "-o", out)
	if code != exitOK {
		t.Fatalf("exit %d\n%s", code, errs)
	}
	if strings.Contains(errs, "multiplied by the beta") {
		t.Errorf("a scaled fit must compare lambda with lambda:\n%s", errs)
	}
	_, rep := fitReportOf(t, out)
	es := rep["energy_scale"].(map[string]any)
	b, se := es["beta"].(float64), es["beta_stderr"].(float64)
	pull, _ := es["beta_pull"].(float64)
	if !(se > 0) || math.Abs(b-0.3) > 5*se || math.Abs(pull-(b-0.3)/se) > 1e-9 || es["true_beta"] != 0.3 {
		t.Errorf("beta %v +- %v (truth 0.3), pull %v, energy_scale %v", b, se, pull, es)
	}
	tr := rep["truth"].(map[string]any)
	if _, scaled := tr["truth_scale"]; scaled {
		t.Errorf("the truth was rescaled: %v", tr)
	}
}

// Without --scale-from everything says beta*lambda: CSV columns, model
// units, report; the truth comparison says it multiplies by the truth's
// beta; plan, sweep and model --check warn, --beta on the model is refused.
func TestFitUnknownBetaLabelled(t *testing.T) {
	dir := t.TempDir()
	_, data, truthPath := noisyChainFiles(t, dir)
	tmpl := unknownBetaTemplate(t, dir)
	csvOut := filepath.Join(dir, "un.csv")
	code, _, errs := runCmd("fit", "--model", tmpl, "--data", data, "--order", "4", "--truth", truthPath, "--format", "csv", "-o", csvOut)
	if code != exitOK {
		t.Fatalf("exit %d\n%s", code, errs)
	}
	if got := strings.Join(readCSVFile(t, csvOut)[0], ","); got != "pauli,sites,beta_coeff,beta_coeff_stderr,significant,true_beta_coeff,z" {
		t.Errorf("unscaled CSV header %q", got)
	}
	if !strings.Contains(errs, "multiplied by the beta of") || !strings.Contains(errs, "--scale-from") {
		t.Errorf("stderr does not say how the truth is compared or how to fix the scale:\n%s", errs)
	}
	out := filepath.Join(dir, "un.json")
	if code, _, errs := runCmd("fit", "--model", tmpl, "--data", data, "--order", "4", "--truth", truthPath, "-o", out); code != exitOK {
		t.Fatalf("exit %d\n%s", code, errs)
	}
	m, rep := fitReportOf(t, out)
	if m.Units != unscaledUnits || rep["beta_source"] != "unknown" || rep["coefficients"] != "beta*lambda" {
		t.Errorf("units %q, beta_source %v, coefficients %v", m.Units, rep["beta_source"], rep["coefficients"])
	}
	if tr := rep["truth"].(map[string]any); tr["truth_scale"] != 0.3 {
		t.Errorf("truth_scale %v, want the truth's beta 0.3", tr["truth_scale"])
	}
	for _, args := range [][]string{
		{"plan", "--model", out, "--target", "0.05"},
		{"model", "--check", out},
		{"sweep", "--model", out, "--beta-grid", "from=0.5,to=1,points=2", "--order", "4"},
	} {
		code, _, errs := runCmd(args...)
		if code != exitOK || !strings.Contains(errs, "WARNING: "+out+" was fitted without beta") {
			t.Errorf("%v: exit %d, no warning on stderr:\n%s", args, code, errs)
		}
	}
	// Refitting with the unscaled model as template keeps beta unknown.
	again := filepath.Join(dir, "again.json")
	if code, _, errs := runCmd("fit", "--model", out, "--data", data, "--order", "4", "-o", again); code != exitOK || !strings.Contains(errs, "its beta = 1 is not used") {
		t.Errorf("refit on the unscaled model: exit %d\n%s", code, errs)
	}
	if _, rep := fitReportOf(t, again); rep["beta_source"] != "unknown" {
		t.Errorf("refit on the unscaled model: beta_source %v, want unknown", rep["beta_source"])
	}
	if code, stdout, errs := runCmd("predict", "--model", out, "--order", "4", "--csv-comments"); code != exitOK || !strings.Contains(stdout, "# the model's coefficients are beta*lambda") {
		t.Errorf("predict on the unscaled model: exit %d\n%s\n%s", code, stdout, errs)
	}
	for _, args := range [][]string{
		{"plan", "--model", out, "--target", "0.05", "--beta", "0.3"},
		{"predict", "--model", out, "--beta", "0.3"},
		{"model", "--check", out, "--beta", "0.3"},
	} {
		if code, _, errs := runCmd(args...); code != exitUsage || !strings.Contains(errs, "count the temperature twice") {
			t.Errorf("%v: exit %d, want 2 with a reason:\n%s", args, code, errs)
		}
	}
}

// --scale-from mistakes: usage errors for the syntax and a known beta,
// failure (exit 1) for a calibration the fit contradicts; nothing written.
func TestFitScaleFromErrors(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join(dir, "e.csv")
	writeExactTable(t, fitTruth(t), 2e-3, data)
	tmpl := unknownBetaTemplate(t, dir)
	out := filepath.Join(dir, "never.json")
	for _, tc := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"--model", fitTemplate, "--scale-from", "beta=0.3"}, exitUsage, "fixes the energy scale of a fit without beta"},
		{[]string{"--model", tmpl, "--scale-from", "ZZ 0 1"}, exitUsage, "want TERM=VALUE or beta=B"},
		{[]string{"--model", tmpl, "--scale-from", "ZZ 0 x=1"}, exitUsage, "not a site index"},
		{[]string{"--model", tmpl, "--scale-from", "ZZ 0 1=abc"}, exitUsage, "not a finite number"},
		{[]string{"--model", tmpl, "--scale-from", "ZZ 0 1=0"}, exitUsage, "zero coefficient"},
		{[]string{"--model", tmpl, "--scale-from", "beta=-1"}, exitUsage, "beta must be positive"},
		{[]string{"--model", tmpl, "--scale-from", "ZZ 0 1=-0.9"}, exitFailure, "would not be positive"},
		{[]string{"--model", tmpl, "--scale-from", "ZZ 0 2=0.9"}, exitFailure, "not a term of the template"},
		{[]string{"--model", tmpl, "--scale-from", "J=1"}, exitUsage, `"J" is neither a term`},
		{[]string{"--model", tmpl, "--scale-from", "beta=0.3", "--method", "stationary"}, exitUsage, "--method stationary takes its known coefficients from --calibrate"},
		{[]string{"--model", tmpl, "--calibrate", "ZZ:0:1=0.9"}, exitUsage, "--calibrate is for --method stationary"},
		{[]string{"--model", tmpl, "--method", "stationary"}, exitUsage, "--method stationary fits no expansion"},
	} {
		args := append([]string{"fit", "--data", data, "--order", "4", "-o", out}, tc.args...)
		code, _, errs := runCmd(args...)
		if code != tc.code || !strings.Contains(errs, tc.want) {
			t.Errorf("%v: exit %d, want %d with %q:\n%s", tc.args, code, tc.code, tc.want, errs)
		}
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("a refused fit wrote %s", out)
	}
}

// A group name calibrates through any member (they share one coefficient).
func TestResolveScaleGroup(t *testing.T) {
	c, err := parseScaleFrom("J=0.5+-0.01")
	if err != nil {
		t.Fatal(err)
	}
	terms := []lattice.Term{{Pauli: "X", Sites: []int{0}, Group: "h"}, {Pauli: "ZZ", Sites: []int{0, 1}, Group: "J"}, {Pauli: "ZZ", Sites: []int{1, 2}, Group: "J"}}
	got, err := resolveScaleGroup(c, terms, "J=0.5+-0.01")
	if err != nil || got.Term != "ZZ 0 1" || got.Value != 0.5 || got.ValueStderr != 0.01 {
		t.Errorf("resolved %+v, %v; want ZZ 0 1 = 0.5 +- 0.01", got, err)
	}
	for spec, want := range map[string]string{"ZZ:0:1=0.25": "ZZ 0 1", "zz 1 0=0.25": "ZZ 0 1", "XZ:1,0=0.25": "ZX 0 1", "Z 3=1±0.1": "Z 3"} {
		c, err := parseScaleFrom(spec)
		if err != nil || c.Term != want {
			t.Errorf("%q: term %q (%v), want %q", spec, c.Term, err, want)
		}
	}
}

// With --scale-from, the fit's stderr summary and its WARNING lines quote
// the truncation error, its target and beta in one unit system, lambda
// with the recovered beta (review finding 7): the warning's truncation
// error equals the summary's, the target is 0.1 x its statistical error,
// and the convergence-bound warning names the recovered beta, not the
// convention beta = 1 (common practice: one output, one unit system).
func TestFitScaleFromOneUnitSystem(t *testing.T) {
	dir := t.TempDir()
	// Stderr 2e-5 per value: small enough that order 3's truncation
	// exceeds some coefficients' error bars, so that the warning comes.
	data := filepath.Join(dir, "e.csv")
	writeExactTable(t, fitTruth(t), 2e-5, data)
	tmpl := unknownBetaTemplate(t, dir)
	code, _, errs := runCmd("fit", "--model", tmpl, "--data", data, "--order", "3", "--scale-from", "ZZ 0 1=0.5", "-o", filepath.Join(dir, "o.json"))
	if code != exitOK {
		t.Fatalf("exit %d\n%s", code, errs)
	}
	num := func(re string) float64 {
		t.Helper()
		m := regexp.MustCompile(re).FindStringSubmatch(errs)
		if m == nil {
			t.Fatalf("stderr lacks %s:\n%s", re, errs)
		}
		v, err := strconv.ParseFloat(m[1], 64)
		if err != nil {
			t.Fatal(err)
		}
		return v
	}
	beta := num(`beta = ([0-9.e+-]+) \+-`)
	sumErr := num(`truncation error ([0-9.e+-]+) \(largest of a coefficient`)
	sumTarget := num(`vs target ([0-9.e+-]+)`)
	warnErr := num(`WARNING: truncation error ([0-9.e+-]+) exceeds`)
	warnStat := num(`median statistical error ([0-9.e+-]+)`)
	warnBeta := num(`WARNING: beta ([0-9.e+-]+) is above the sufficient`)
	if math.Abs(warnErr-sumErr) > 1e-3*sumErr || math.Abs(0.1*warnStat-sumTarget) > 1e-2*sumTarget {
		t.Errorf("summary truncation %g vs target %g, warning %g vs 0.1 x %g: two unit systems\n%s", sumErr, sumTarget, warnErr, warnStat, errs)
	}
	if math.Abs(warnBeta-beta) > 1e-3*beta {
		t.Errorf("bound warning beta %g, recovered beta %g\n%s", warnBeta, beta, errs)
	}
}
