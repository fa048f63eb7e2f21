package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/lattice/model"
	"warmfit/validate"
)

func runCmd(args ...string) (code int, stdout, stderr string) {
	var out, errb bytes.Buffer
	env := &runEnv{Stdout: &out, Stderr: &errb, Stdin: strings.NewReader("")}
	code = run(env, args)
	return code, out.String(), errb.String()
}

const fitTemplate = "../../testdata/fit/template_chain4.json"

// fitTruth is a transverse-field Ising chain on the template's terms.
func fitTruth(t *testing.T) *model.Model {
	t.Helper()
	m, err := model.ReadFile(fitTemplate)
	if err != nil {
		t.Fatal(err)
	}
	for k := range m.Terms {
		m.Terms[k].Coeff = []float64{0.9, 1.1, 0.8, 0.5, 0.7, 0.6, 0.4}[k]
	}
	return m
}

// writeExactTable writes the exact expectations of the model (dense exact
// diagonalisation of the whole chain), optionally with Gaussian noise of
// standard error sigma, as an expectation table.
func writeExactTable(t *testing.T, m *model.Model, sigma float64, path string) {
	t.Helper()
	writeExactTableSkipping(t, m, sigma, nil, path)
}

// writeExactTableSkipping is writeExactTable without the rows of the
// terms whose keys are in skip.
func writeExactTableSkipping(t *testing.T, m *model.Model, sigma float64, skip []string, path string) {
	t.Helper()
	th, err := validate.ExactThermal(m.Lattice.NumSites(), m.Terms, m.Beta)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	tab := &fit.Table{}
	for _, term := range m.Terms {
		if slices.Contains(skip, term.Key()) {
			continue
		}
		op, _ := cluster.ParsePauli(term.Pauli, term.Sites)
		row := fit.Row{Pauli: term.Pauli, Sites: term.Sites, Value: th.Expect(op)}
		if sigma > 0 {
			row.Value += sigma * rng.NormFloat64()
			row.Stderr, row.HasStderr = sigma, true
		}
		tab.Rows = append(tab.Rows, row)
	}
	var buf bytes.Buffer
	if err := fit.WriteTable(&buf, tab); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
}

// noisyChainFiles writes, in dir, the truth (fitTruth) as truth.json and
// its exact expectations with noise of standard error 2e-3 as e.csv.
func noisyChainFiles(t *testing.T, dir string) (truth *model.Model, data, truthPath string) {
	t.Helper()
	truth = fitTruth(t)
	data = filepath.Join(dir, "e.csv")
	writeExactTable(t, truth, 2e-3, data)
	truthPath = filepath.Join(dir, "truth.json")
	writeModelFile(t, truth, truthPath)
	return truth, data, truthPath
}

func writeModelFile(t *testing.T, m *model.Model, path string) {
	t.Helper()
	var buf bytes.Buffer
	if err := model.Write(&buf, m); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
}

// Exact data, order 4 = the whole chain: the fit must return the true
// coefficients (exact expansion, exact diagonalisation as reference), the
// model must carry the report, and it must feed straight back into predict.
func TestFitCommandExactRoundTrip(t *testing.T) {
	dir := t.TempDir()
	truth := fitTruth(t)
	data := filepath.Join(dir, "e.csv")
	writeExactTable(t, truth, 0, data)
	truthPath := filepath.Join(dir, "truth.json")
	writeModelFile(t, truth, truthPath)
	out := filepath.Join(dir, "fitted.json")
	code, _, errs := runCmd("fit", "--model", fitTemplate, "--data", data, "--order", "4", "--truth", truthPath, "-o", out)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, w := range []string{"converged at order 4", "truncation: none", "against the truth"} {
		if !strings.Contains(errs, w) {
			t.Errorf("summary lacks %q:\n%s", w, errs)
		}
	}
	m, err := model.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	for k, term := range m.Terms {
		if d := math.Abs(term.Coeff - truth.Terms[k].Coeff); d > 1e-8 || !term.HasStderr {
			t.Errorf("%s: coeff %v (truth %v), stderr given %v", term.Key(), term.Coeff, truth.Terms[k].Coeff, term.HasStderr)
		}
	}
	var rep struct {
		Converged bool `json:"converged"`
		Order     int  `json:"order"`
		Truth     *struct {
			Linf float64 `json:"linf"`
		} `json:"truth"`
	}
	if err := json.Unmarshal(m.Fit, &rep); err != nil || !rep.Converged || rep.Order != 4 || rep.Truth == nil || rep.Truth.Linf > 1e-8 {
		t.Errorf("report %s (err %v)", m.Fit, err)
	}
	if code, _, errs := runCmd("predict", "--model", out, "--method", "exact"); code != exitOK {
		t.Errorf("predict on the fitted model: exit %d: %s", code, errs)
	}

	// CSV output.
	code, stdout, errs := runCmd("fit", "--model", fitTemplate, "--data", data, "--order", "4", "--format", "csv")
	if code != exitOK || !strings.Contains(stdout, "pauli,sites,coeff,stderr,significant\n") || !strings.Contains(stdout, "\nZZ,0 1,") {
		t.Errorf("csv: exit %d, stdout %q, stderr %s", code, stdout, errs)
	}
}

// Noisy snapshots from the exact Gibbs state (validate.Sampler), automatic
// order, unknown beta: the products beta*lambda are fitted and the model
// is written with beta 1; every term gets a significance flag.
func TestFitCommandSnapshotsUnknownBeta(t *testing.T) {
	dir := t.TempDir()
	truth := fitTruth(t)
	data := filepath.Join(dir, "shots.csv")
	writeExactShots(t, data, truth, []string{"ZZZZ", "XXXX"}, 20000, rand.NewPCG(3, 4))
	tmpl, err := model.ReadFile(fitTemplate)
	if err != nil {
		t.Fatal(err)
	}
	tmpl.Beta = 0
	tmplPath := filepath.Join(dir, "template.json")
	writeModelFile(t, tmpl, tmplPath)
	out := filepath.Join(dir, "fitted.json")
	code, _, errs := runCmd("fit", "--model", tmplPath, "--data", data, "-o", out)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(errs, "beta unknown") {
		t.Errorf("summary does not say beta is unknown:\n%s", errs)
	}
	raw, _ := os.ReadFile(out)
	var doc struct {
		Beta  float64 `json:"beta"`
		Terms []struct {
			Coeff       float64 `json:"coeff"`
			Stderr      float64 `json:"stderr"`
			Significant *bool   `json:"significant"`
		} `json:"terms"`
		Fit struct {
			Coefficients string `json:"coefficients"`
		} `json:"fit"`
	}
	if err := json.Unmarshal(raw, &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Beta != 1 || doc.Fit.Coefficients != "beta*lambda" {
		t.Errorf("beta %v, coefficients %q; want 1 and beta*lambda", doc.Beta, doc.Fit.Coefficients)
	}
	for k, term := range doc.Terms {
		// beta*lambda within 5 standard errors of the truth (20000 shots).
		want := truth.Beta * truth.Terms[k].Coeff
		if term.Significant == nil || math.Abs(term.Coeff-want) > 5*term.Stderr {
			t.Errorf("term %d: %v +- %v, want %v; significant %v", k, term.Coeff, term.Stderr, want, term.Significant)
		}
	}
}

// Bad input: exit 1 with a clear message, and an existing output file is
// left untouched.
func TestFitCommandBadInput(t *testing.T) {
	dir := t.TempDir()
	noisy := filepath.Join(dir, "noisy.csv")
	writeExactTable(t, fitTruth(t), 1e-3, noisy)
	tests := []struct {
		name string
		args []string
		want string
	}{
		{"term not in template", []string{"--data", "../../testdata/fit/extra_term.csv"}, "line 10: Z 2 is not a term of the template"},
		{"value beyond 5 sigma", []string{"--data", "../../testdata/fit/out_of_range.csv"}, `out_of_range.csv:7: field "value"`},
		{"basis length", []string{"--data", "../../testdata/fit/bad_basis.csv"}, "bad_basis.csv:4"},
		{"no such data", []string{"--data", filepath.Join(dir, "missing.csv")}, "missing.csv"},
		{"not converged", []string{"--data", noisy, "--order", "4", "--max-iter", "1"}, "did not converge"},
	}
	for _, tt := range tests {
		out := filepath.Join(dir, "keep.json")
		if err := os.WriteFile(out, []byte("keep"), 0o644); err != nil {
			t.Fatal(err)
		}
		args := append([]string{"fit", "--model", fitTemplate, "-o", out}, tt.args...)
		code, _, errs := runCmd(args...)
		if code != exitFailure || !strings.Contains(errs, tt.want) {
			t.Errorf("%s: exit %d, stderr %q; want 1 and %q", tt.name, code, errs, tt.want)
		}
		if b, _ := os.ReadFile(out); string(b) != "keep" {
			t.Errorf("%s: -o file changed to %q", tt.name, b)
		}
	}
	// The unconverged iterate went beside -o, never over it.
	raw, err := os.ReadFile(filepath.Join(dir, "keep.unconverged.json"))
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Fit struct {
			Converged bool   `json:"converged"`
			Reason    string `json:"reason"`
		} `json:"fit"`
	}
	if err := json.Unmarshal(raw, &doc); err != nil || doc.Fit.Converged || doc.Fit.Reason == "" {
		t.Errorf("unconverged file: %v %+v", err, doc.Fit)
	}
}

func TestFitCommandUsage(t *testing.T) {
	for _, args := range [][]string{
		{"fit", "--data", "x.csv"},
		{"fit", "--model", fitTemplate},
		{"fit", "--model", fitTemplate, "--data", "x.csv", "--order", "zero"},
		{"fit", "--model", fitTemplate, "--data", "x.csv", "--format", "xml"},
		{"fit", "--model", fitTemplate, "--data", "x.csv", "--beta", "-1"},
		{"fit", "--model", fitTemplate, "--data", "x.csv", "extra"},
	} {
		if code, _, errs := runCmd(args...); code != exitUsage {
			t.Errorf("%v: exit %d (%s), want 2", args, code, errs)
		}
	}
	if code, out, _ := runCmd("fit", "--help"); code != exitOK || !strings.Contains(out, "Benjamini-Hochberg") || !strings.Contains(out, "Example") {
		t.Errorf("help: exit %d\n%s", code, out)
	}
}

func TestPlanCommand(t *testing.T) {
	dir := t.TempDir()
	model := filepath.Join(dir, "m.json")
	writeModelFile(t, fitTruth(t), model)
	code, out, errs := runCmd("plan", "--model", model, "--target", "0.02")
	if code != exitOK || !strings.Contains(out, "shots per basis") || !strings.Contains(out, "total shots") || !strings.Contains(out, "Bonferroni") {
		t.Fatalf("exit %d, stdout %s, stderr %s", code, out, errs)
	}
	code, out, errs = runCmd("plan", "--model", model, "--target", "0.02", "--norm", "l2", "--bases", "random:60", "--format", "json")
	var p struct {
		Bases         []string `json:"bases"`
		ShotsPerBasis int64    `json:"shots_per_basis"`
		TotalShots    int64    `json:"total_shots"`
		Terms         []struct {
			Stderr float64 `json:"stderr"`
		} `json:"terms"`
	}
	if code != exitOK || json.Unmarshal([]byte(out), &p) != nil {
		t.Fatalf("json: exit %d, %s %s", code, out, errs)
	}
	if len(p.Bases) != 60 || p.TotalShots != 60*p.ShotsPerBasis || len(p.Terms) != 7 {
		t.Errorf("plan %+v", p)
	}
	// l2: the predicted root-sum-square error is at most the target.
	var ss float64
	for _, term := range p.Terms {
		ss += term.Stderr * term.Stderr
	}
	if math.Sqrt(ss) > 0.02 {
		t.Errorf("predicted L2 error %v above the target", math.Sqrt(ss))
	}
	for _, args := range [][]string{
		{"plan", "--target", "0.1"},
		{"plan", "--model", model},
		{"plan", "--model", model, "--target", "0.1", "--norm", "l1"},
		{"plan", "--model", model, "--target", "0.1", "--bases", "random:x"},
	} {
		if code, _, errs := runCmd(args...); code != exitUsage {
			t.Errorf("%v: exit %d (%s), want 2", args, code, errs)
		}
	}
}

// writeExactShots writes a snapshot file of shots per basis drawn from
// the exact Gibbs state of the four-site truth (validate.Sampler).
func writeExactShots(t *testing.T, path string, truth *model.Model, bases []string, shots int, src rand.Source) {
	t.Helper()
	sampler, err := validate.NewSampler(4, truth.Terms, truth.Beta)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(src)
	var buf bytes.Buffer
	buf.WriteString("basis,outcome,count\n")
	for _, b := range bases {
		counts, err := sampler.Sample(b, shots, rng)
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range counts {
			fmt.Fprintf(&buf, "%s,%s,%d\n", b, c.Outcome, c.Count)
		}
	}
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
}
