package main

import (
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"warmfit/fit"
	"warmfit/lattice/model"
)

// writeTestModel writes a small XXZ model with fields on a 3x2 lattice.
func writeTestModel(t *testing.T, dir string) string {
	t.Helper()
	path := filepath.Join(dir, "m.json")
	code, _, stderr := runCmd("model", "--lattice", "square:3x2", "--preset", "xxz",
		"--set", "Jxy=0.4,Jz=0.9,hz=0.3,hx=0.2", "--disorder", "0.1", "--seed", "5", "--beta", "0.5", "-o", path)
	if code != 0 {
		t.Fatalf("model: exit %d: %s", code, stderr)
	}
	return path
}

func readTable(t *testing.T, text string) *fit.Table {
	t.Helper()
	tab, err := fit.ReadTable(strings.NewReader(text), "stdout")
	if err != nil {
		t.Fatalf("%v\n%s", err, text)
	}
	return tab
}

// With the order equal to the number of sites the expansion is exact, so
// `predict --method expansion` must agree with dense diagonalisation
// (`--method exact`) to rounding (inclusion–exclusion identity; Rigol,
// Bryant, Singh, arXiv 0706.3254).
func TestExpectExpansionMatchesExact(t *testing.T) {
	modelPath := writeTestModel(t, t.TempDir())
	code, exact, stderr := runCmd("predict", "--model", modelPath, "--method", "exact")
	if code != 0 {
		t.Fatalf("exact: exit %d: %s", code, stderr)
	}
	code, expanded, stderr := runCmd("predict", "--model", modelPath, "--order", "6")
	if code != 0 {
		t.Fatalf("expansion: exit %d: %s", code, stderr)
	}
	if !strings.Contains(stderr, "converged") {
		t.Errorf("expansion verdict missing from stderr:\n%s", stderr)
	}
	a, b := readTable(t, exact), readTable(t, expanded)
	if got := strings.Join(b.ExtraHeader, ","); got != "step,trunc_error,resummed,trusted" {
		t.Errorf("extra columns %q", got)
	}
	if len(a.Rows) != len(b.Rows) || len(a.Rows) == 0 {
		t.Fatalf("%d exact rows, %d expansion rows", len(a.Rows), len(b.Rows))
	}
	for i := range a.Rows {
		if a.Rows[i].Key() != b.Rows[i].Key() || math.Abs(a.Rows[i].Value-b.Rows[i].Value) > 1e-10 {
			t.Errorf("row %d: exact %s = %.12g, expansion %s = %.12g", i, a.Rows[i].Key(), a.Rows[i].Value, b.Rows[i].Key(), b.Rows[i].Value)
		}
	}
}

// At a temperature far too low for the order, the output must say so in
// the file and on stderr, not only in the trusted column.
func TestExpectWarnsWhenNotConverged(t *testing.T) {
	dir := t.TempDir()
	modelPath := writeTestModel(t, dir)
	code, out, stderr := runCmd("predict", "--model", modelPath, "--order", "3", "--beta", "1")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if !strings.Contains(stderr, "WARNING") {
		t.Errorf("no plain warning at beta = 1, order 3:\nstderr:\n%s", stderr)
	}
	// In the file: the sidecar's warnings, or a '#' line with --csv-comments.
	table := filepath.Join(dir, "cold.csv")
	if code, _, stderr := runCmd("predict", "--model", modelPath, "--order", "3", "--beta", "1", "-o", table); code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if meta := readSidecar(t, table+".meta.json"); len(meta["warnings"].([]any)) == 0 || meta["converged"] != false {
		t.Errorf("the sidecar does not record the warning: %v", meta)
	}
	if _, commented, _ := runCmd("predict", "--model", modelPath, "--order", "3", "--beta", "1", "--csv-comments"); !strings.Contains(commented, "# WARNING") {
		t.Errorf("--csv-comments: no '# WARNING' line:\n%s", commented)
	}
	if !strings.Contains(out, ",false\n") {
		t.Errorf("no row marked untrusted:\n%s", out)
	}
}

func TestExpectBadInput(t *testing.T) {
	dir := t.TempDir()
	modelPath := writeTestModel(t, dir)
	keep := filepath.Join(dir, "keep.csv")
	if err := os.WriteFile(keep, []byte("precious\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		args []string
		code int
	}{
		{[]string{"predict"}, 2},
		{[]string{"predict", "--model", modelPath, "--beta", "-1"}, 2},
		{[]string{"predict", "--model", modelPath, "--order", "0"}, 2},
		{[]string{"predict", "--model", modelPath, "--method", "guess"}, 2},
		{[]string{"predict", "--model", filepath.Join(dir, "missing.json")}, 1},
		{[]string{"predict", "--model", modelPath, "--order", "13", "-o", keep}, 2},
		{[]string{"predict", "--model", modelPath, "--beta", "0", "-o", keep}, 2},
		{[]string{"sweep", "--model", modelPath, "--beta-grid", "from=1,to=0.5,points=3"}, 2},
		{[]string{"sweep", "--model", modelPath, "--beta-range", "0.1:1:3"}, 2},
		{[]string{"sweep", "--model", modelPath, "--beta-grid", "0.1:1:3"}, 2},
		{[]string{"sweep", "--model", modelPath, "--beta-grid", "from=0.1,to=1"}, 2},
		{[]string{"sweep", "--model", modelPath}, 2},
		{[]string{"sample", "--model", modelPath}, 2},
		{[]string{"sample", "--model", modelPath, "--shots", "10", "--bases", "random:x"}, 2},
	}
	for _, c := range cases {
		code, _, stderr := runCmd(c.args...)
		if code != c.code {
			t.Errorf("%v: exit %d, want %d (%s)", c.args, code, c.code, stderr)
		}
		if stderr == "" {
			t.Errorf("%v: no message on stderr", c.args)
		}
	}
	if b, _ := os.ReadFile(keep); string(b) != "precious\n" {
		t.Errorf("a failed run changed an existing output file: %q", b)
	}
}

// With too few orders to judge a value, the table says so: its
// truncation error is n/a and it is not trusted.
func TestExpectUnknownTruncationIsNotTrusted(t *testing.T) {
	modelPath := writeTestModel(t, t.TempDir())
	code, out, stderr := runCmd("predict", "--model", modelPath, "--order", "2")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if !strings.Contains(stderr, "cannot be judged") {
		t.Errorf("no warning about unjudged values:\n%s", stderr)
	}
	tab := readTable(t, out)
	errCol := slices.Index(tab.ExtraHeader, "trunc_error")
	trustCol := slices.Index(tab.ExtraHeader, "trusted")
	for _, r := range tab.Rows {
		if r.Extra[errCol] == "n/a" && r.Extra[trustCol] != "false" {
			t.Errorf("%s: unjudged value marked trusted", r.Key())
		}
	}
}

// A prediction fits back to the model that made it (the round trip a
// user expects; common practice): the table's values are exact
// predictions, so the fit reaches its exact-data tolerance.
func TestExpectFitRoundTrip(t *testing.T) {
	dir := t.TempDir()
	modelPath := writeTestModel(t, dir)
	table := filepath.Join(dir, "e.csv")
	if code, _, stderr := runCmd("predict", "--model", modelPath, "--order", "6", "-o", table); code != 0 {
		t.Fatalf("predict: exit %d: %s", code, stderr)
	}
	fitted := filepath.Join(dir, "fitted.json")
	code, _, stderr := runCmd("fit", "--model", modelPath, "--data", table, "--order", "6", "-o", fitted)
	if code != 0 {
		t.Fatalf("fit: exit %d: %s", code, stderr)
	}
	want, err := model.ReadFile(modelPath)
	if err != nil {
		t.Fatal(err)
	}
	got, err := model.ReadFile(fitted)
	if err != nil {
		t.Fatal(err)
	}
	for k := range want.Terms {
		if d := math.Abs(got.Terms[k].Coeff - want.Terms[k].Coeff); d > 1e-8 {
			t.Errorf("%s: fitted %v, model %v", want.Terms[k].Key(), got.Terms[k].Coeff, want.Terms[k].Coeff)
		}
	}
}

func TestThermoTable(t *testing.T) {
	modelPath := writeTestModel(t, t.TempDir())
	code, out, stderr := runCmd("sweep", "--model", modelPath, "--beta-grid", "from=0.01,to=2,points=4", "--order", "4")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if len(lines) != 5 || lines[0] != "beta,T,log_z,energy,entropy,heat_capacity,energy_error,heat_capacity_error,trusted" {
		t.Fatalf("unexpected table:\n%s", out)
	}
	// High-temperature expansion for orthonormal traceless Paulis:
	// tr H^2 / 2^N = sum_k c_k^2, so S/N = ln 2 - beta^2 sum_k c_k^2 / (2N)
	// + O(beta^3) (derived closed form: second cumulant of H at beta = 0).
	m, err := model.ReadFile(modelPath)
	if err != nil {
		t.Fatal(err)
	}
	var sum2 float64
	for _, term := range m.Terms {
		sum2 += term.Coeff * term.Coeff
	}
	n := float64(m.Lattice.NumSites())
	want := math.Ln2 - 0.01*0.01*sum2/(2*n)
	got, err := strconv.ParseFloat(strings.Split(lines[1], ",")[4], 64)
	if err != nil || math.Abs(got-want) > 1e-5 {
		t.Errorf("entropy per site at beta = 0.01: %v, high-temperature series %.8f", got, want)
	}
	if !strings.Contains(stderr, "WARNING") {
		t.Errorf("beta = 2 at order 4 should be flagged:\n%s", stderr)
	}
}

func TestSampleExactSnapshots(t *testing.T) {
	modelPath := writeTestModel(t, t.TempDir())
	code, out, stderr := runCmd("sample", "--model", modelPath, "--shots", "500", "--seed", "3")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if !strings.HasPrefix(out, "basis,outcome,count\n") {
		t.Fatalf("not a snapshot file:\n%.200s", out)
	}
	_, again, _ := runCmd("sample", "--model", modelPath, "--shots", "500", "--seed", "3")
	if again != out {
		t.Error("same seed, different snapshots")
	}
}

// A prediction table whose rows are marked trusted=false holds unconverged
// expansion values under stderr "exact": fit must refuse it rather than
// fit those values as exact Gibbs data (review finding 3), and accept the
// same rows once their stderr carries the truncation error.
func TestFitRefusesUntrustedExactRows(t *testing.T) {
	dir := t.TempDir()
	modelPath := writeTestModel(t, dir)
	cold := filepath.Join(dir, "cold.csv")
	if code, _, stderr := runCmd("predict", "--model", modelPath, "--order", "3", "--beta", "1", "-o", cold); code != 0 {
		t.Fatalf("predict: exit %d: %s", code, stderr)
	}
	out := filepath.Join(dir, "never.json")
	code, _, stderr := runCmd("fit", "--model", modelPath, "--data", cold, "--order", "3", "-o", out)
	if code != exitFailure || !strings.Contains(stderr, `field "trusted"`) || !strings.Contains(stderr, "not an exact Gibbs value") {
		t.Errorf("exit %d, want %d and a refusal naming the trusted field:\n%s", code, exitFailure, stderr)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("a refused fit wrote %s", out)
	}
	_, help, _ := runCmd("help", "predict")
	if !strings.Contains(help, "trusted=false are NOT exact Gibbs values") || strings.Contains(help, "repeats trunc_error") {
		t.Errorf("help predict does not say untrusted rows are not exact:\n%s", help)
	}
}

// help fit describes the stderr column as the reader treats it: "exact"
// marks an exact value, a blank one is refused (review finding 4).
func TestFitHelpStderrMatchesReader(t *testing.T) {
	_, help, _ := runCmd("help", "fit")
	if strings.Contains(help, "empty stderr marks") || !strings.Contains(help, "a blank stderr is refused") {
		t.Errorf("help fit misdescribes a blank stderr:\n%s", help)
	}
	dir := t.TempDir()
	data := filepath.Join(dir, "blank.csv")
	if err := os.WriteFile(data, []byte("pauli,sites,value,stderr\nZZ,0 1,0.1,\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr := runCmd("fit", "--model", fitTemplate, "--data", data, "--order", "4")
	if code != exitFailure || !strings.Contains(stderr, `field "stderr": empty`) {
		t.Errorf("blank stderr: exit %d:\n%s", code, stderr)
	}
}

// On a 9-site lattice at a temperature where order 8 has not converged,
// the automatic order passes the two-dimensional ceiling 8 to order 9,
// which covers every site and is exact (review finding 6;
// inclusion-exclusion, Rigol, Bryant, Singh, arXiv 0706.3254), and stderr
// says so instead of warning about truncation.
func TestExpectAutoOrderReachesWholeSmallLattice(t *testing.T) {
	if testing.Short() {
		t.Skip("order 9 on 3x3: a few seconds")
	}
	dir := t.TempDir()
	path := filepath.Join(dir, "x3.json")
	if code, _, stderr := runCmd("model", "--lattice", "square:3x3", "--preset", "xxz", "--set", "Jxy=0.4,Jz=0.3,hz=0.2,hx=0.1",
		"--disorder", "0.1", "--seed", "3", "--beta", "1.0", "-o", path); code != 0 {
		t.Fatalf("model: exit %d: %s", code, stderr)
	}
	code, out, stderr := runCmd("predict", "--model", path)
	if code != 0 {
		t.Fatalf("predict: exit %d: %s", code, stderr)
	}
	if !strings.Contains(stderr, "order 9 chosen automatically") || !strings.Contains(stderr, "exactly: order 9 covers all 9 sites") || strings.Contains(stderr, "WARNING") {
		t.Errorf("the automatic order did not reach the exact order 9:\n%s", stderr)
	}
	if strings.Contains(out, ",false\n") {
		t.Errorf("rows of the exact order marked untrusted:\n%s", out)
	}
}
