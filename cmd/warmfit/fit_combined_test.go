package main

import (
	"encoding/json"
	"math"
	"path/filepath"
	"strings"
	"testing"

	"warmfit/lattice/model"
)

// TestFitMethodCombined: model -> sample --bases covering:3 (exact
// snapshots, dense ED) -> fit --method combined and auto on a
// disordered transverse-field Ising chain. Where the expansion is exact
// (order = sites) the two agree and the combination is used, its
// coefficients within 4 standard errors of the truth (a Gaussian bound,
// common practice); at order 3 the expansion is biased, the consistency
// test fails and stationarity alone is written, saying why. stderr and
// the report's estimator object say which estimator was used.
func TestFitMethodCombined(t *testing.T) {
	dir := t.TempDir()
	truth := filepath.Join(dir, "truth.json")
	shots := filepath.Join(dir, "shots.csv")
	out := filepath.Join(dir, "fitted.json")
	for _, s := range [][]string{
		{"model", "--lattice", "chain:6", "--preset", "tfim", "--set", "J=1,hx=0.8,hz=0.3", "--disorder", "0.3", "--seed", "5", "--beta", "0.7", "-o", truth},
		{"sample", "--model", truth, "--shots", "20000", "--bases", "covering:3", "--seed", "3", "-o", shots},
	} {
		if code, _, stderr := runCmd(s...); code != 0 {
			t.Fatalf("%v: exit %d\n%s", s, code, stderr)
		}
	}
	want, err := model.ReadFile(truth)
	if err != nil {
		t.Fatal(err)
	}
	type estimator struct {
		Method      string `json:"method"`
		Reason      string `json:"reason"`
		Combination *struct {
			Chi2       float64 `json:"consistency_chi2"`
			DOF        int     `json:"consistency_dof"`
			Consistent bool    `json:"consistent"`
		} `json:"combination"`
	}
	for _, method := range []string{"combined", "auto"} {
		code, _, stderr := runCmd("fit", "--model", truth, "--data", shots, "--method", method, "-o", out)
		if code != 0 {
			t.Fatalf("--method %s: exit %d\n%s", method, code, stderr)
		}
		if !strings.Contains(stderr, "method "+method+" chose the combination") {
			t.Errorf("--method %s: stderr does not say it chose the combination:\n%s", method, stderr)
		}
		m, err := model.ReadFile(out)
		if err != nil {
			t.Fatal(err)
		}
		var rep struct {
			Estimator *estimator `json:"estimator"`
		}
		if err := json.Unmarshal(m.Fit, &rep); err != nil || rep.Estimator == nil || rep.Estimator.Method != "combined" ||
			rep.Estimator.Reason == "" || rep.Estimator.Combination == nil || !rep.Estimator.Combination.Consistent || rep.Estimator.Combination.DOF == 0 {
			t.Fatalf("--method %s: report estimator %+v (%v)", method, rep.Estimator, err)
		}
		for k, term := range m.Terms {
			if d := math.Abs(term.Coeff - want.Terms[k].Coeff); !term.HasStderr || d > 4*term.Stderr {
				t.Errorf("--method %s: term %s: %g +- %g, truth %g", method, term.Key(), term.Coeff, term.Stderr, want.Terms[k].Coeff)
			}
		}
	}
	// Order 3 at beta 0.7: the expansion is biased and dropped.
	code, _, stderr := runCmd("fit", "--model", truth, "--data", shots, "--method", "combined", "--order", "3", "-o", out)
	if code != 0 {
		t.Fatalf("--order 3: exit %d\n%s", code, stderr)
	}
	if !strings.Contains(stderr, "method combined chose stationary") || !strings.Contains(stderr, "biased (not converged) and dropped") {
		t.Errorf("--order 3: stderr does not say the expansion was dropped:\n%s", stderr)
	}
	m, err := model.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	var rep struct {
		Method string `json:"method"`
		Reason string `json:"method_reason"`
	}
	if err := json.Unmarshal(m.Fit, &rep); err != nil || rep.Method != "stationary" || !strings.Contains(rep.Reason, "consistency chi2") {
		t.Errorf("--order 3: report %s: %v", m.Fit, err)
	}
}
