package main

import (
	"encoding/json"
	"path/filepath"
	"strings"
	"testing"

	"warmfit/lattice/model"
)

// TestFitMethodStationary: model -> sample --bases covering:3 -> fit
// --method stationary recovers a disordered transverse-field Ising chain
// (exact snapshots, dense ED), says how the scale was fixed, and records
// the method in the output file; --method auto says which it chose.
func TestFitMethodStationary(t *testing.T) {
	dir := t.TempDir()
	truth := filepath.Join(dir, "truth.json")
	shots := filepath.Join(dir, "shots.csv")
	out := filepath.Join(dir, "fitted.json")
	steps := [][]string{
		{"model", "--lattice", "chain:6", "--preset", "tfim", "--set", "J=1,hx=0.8,hz=0.3", "--disorder", "0.3", "--seed", "5", "--beta", "0.7", "-o", truth},
		{"sample", "--model", truth, "--shots", "20000", "--bases", "covering:3", "--seed", "3", "-o", shots},
	}
	for _, s := range steps {
		if code, _, stderr := runCmd(s...); code != 0 {
			t.Fatalf("%v: exit %d\n%s", s, code, stderr)
		}
	}
	code, _, stderr := runCmd("fit", "--model", truth, "--data", shots, "--method", "stationary", "--truth", truth, "-o", out)
	if code != 0 {
		t.Fatalf("fit --method stationary: exit %d\n%s", code, stderr)
	}
	for _, want := range []string{"method stationary", "scale fixed by thermal match at known beta 0.7", "against the truth"} {
		if !strings.Contains(stderr, want) {
			t.Errorf("stderr lacks %q:\n%s", want, stderr)
		}
	}
	m, err := model.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	var rep struct {
		Method string `json:"method"`
		Fixed  string `json:"scale_fixed_by"`
	}
	if err := json.Unmarshal(m.Fit, &rep); err != nil || rep.Method != "stationary" || rep.Fixed == "" {
		t.Errorf("report %s: %v", m.Fit, err)
	}
	want, _ := model.ReadFile(truth)
	for k, term := range m.Terms {
		if d := term.Coeff - want.Terms[k].Coeff; d > 0.15 || d < -0.15 {
			t.Errorf("term %s: %g, truth %g", term.Key(), term.Coeff, want.Terms[k].Coeff)
		}
	}
	// A calibrated coupling instead of the known beta.
	tmpl := filepath.Join(dir, "template.json")
	if code, _, stderr := runCmd("model", "--lattice", "chain:6", "--preset", "tfim", "--set", "J=1,hx=1,hz=1", "-o", tmpl); code != 0 {
		t.Fatal(stderr)
	}
	code, _, stderr = runCmd("fit", "--model", tmpl, "--data", shots, "--method", "stationary", "--calibrate", "ZZ:0:1=1", "-o", out)
	if code != 0 || !strings.Contains(stderr, "calibrated ZZ 0 1") {
		t.Errorf("--calibrate: exit %d\n%s", code, stderr)
	}
	// auto says which method it used.
	code, _, stderr = runCmd("fit", "--model", truth, "--data", shots, "--method", "auto", "-o", out)
	if code != 0 || !strings.Contains(stderr, "method auto chose") {
		t.Errorf("--method auto: exit %d\n%s", code, stderr)
	}
	if code, _, _ = runCmd("fit", "--model", truth, "--data", shots, "--method", "bogus"); code != 2 {
		t.Errorf("--method bogus: exit %d, want 2", code)
	}
}
