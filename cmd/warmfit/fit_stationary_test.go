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

// TestFitStationaryMissingCorrelators: snapshots in the plain covering
// bases measure the terms but not the correlators of the stationarity
// constraints; fit says which strings are missing and which --bases
// scheme provides them (review finding 5).
func TestFitStationaryMissingCorrelators(t *testing.T) {
	dir := t.TempDir()
	truth := filepath.Join(dir, "truth.json")
	shots := filepath.Join(dir, "shots.csv")
	for _, s := range [][]string{
		{"model", "--lattice", "chain:6", "--preset", "tfim", "--set", "J=1,hx=0.8,hz=0.3", "--beta", "0.7", "-o", truth},
		{"sample", "--model", truth, "--shots", "2000", "--bases", "covering", "--seed", "3", "-o", shots},
	} {
		if code, _, stderr := runCmd(s...); code != 0 {
			t.Fatalf("%v: exit %d\n%s", s, code, stderr)
		}
	}
	code, _, stderr := runCmd("fit", "--model", truth, "--data", shots, "--method", "stationary", "-o", filepath.Join(dir, "out.json"))
	if code != 1 {
		t.Errorf("exit %d, want 1\n%s", code, stderr)
	}
	for _, want := range []string{"the data have no values for", "3-local", "--bases covering:3", " more)"} {
		if !strings.Contains(stderr, want) {
			t.Errorf("stderr lacks %q:\n%s", want, stderr)
		}
	}
}

// TestFitAutoPrefersExactExpansion: on a lattice small enough for the
// expansion to cover it whole, --method auto keeps the expansion (exact
// at the lattice's order) and says why, instead of the stationarity
// method whose errors are larger (review finding 1: order 9 on the 3x3
// model, largest error 0.0037 against 0.1).
func TestFitAutoPrefersExactExpansion(t *testing.T) {
	dir := t.TempDir()
	truth := filepath.Join(dir, "truth.json")
	shots := filepath.Join(dir, "shots.csv")
	out := filepath.Join(dir, "out.json")
	for _, s := range [][]string{
		{"model", "--lattice", "chain:6", "--preset", "xxz", "--set", "Jxy=0.4,Jz=0.3,hz=0.2,hx=0.1", "--disorder", "0.1", "--seed", "3", "--beta", "1", "-o", truth},
		{"sample", "--model", truth, "--shots", "20000", "--bases", "covering:3", "--seed", "5", "-o", shots},
	} {
		if code, _, stderr := runCmd(s...); code != 0 {
			t.Fatalf("%v: exit %d\n%s", s, code, stderr)
		}
	}
	code, _, stderr := runCmd("fit", "--model", truth, "--data", shots, "--method", "auto", "--max-order", "4", "-o", out)
	if code != 0 {
		t.Fatalf("exit %d\n%s", code, stderr)
	}
	if !strings.Contains(stderr, "method auto chose the expansion: order 6 covers all 6 sites") {
		t.Errorf("auto did not keep the exact expansion:\n%s", stderr)
	}
	m, err := model.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	var rep struct {
		Method string `json:"method"`
	}
	if err := json.Unmarshal(m.Fit, &rep); err != nil || rep.Method == "stationary" {
		t.Errorf("report %s: %v", m.Fit, err)
	}
}
