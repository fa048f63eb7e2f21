package stationary

import (
	"errors"
	"testing"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/validate"
)

// truthTheta is the parameter vector of the true coefficients.
func truthTheta(sys *System) []float64 {
	p := sys.Params()
	theta := make([]float64, p.NumParams())
	p.Average(theta, coeffs(sys.Terms()))
	return theta
}

// TestSolveExactData checks that exact expectations (dense ED) give the
// true direction to rounding and a spectrum gap (stationarity identity,
// Bairey, Arad, Lindner 2019); tiny variances stand in for noise.
func TestSolveExactData(t *testing.T) {
	l, terms := testModel(t, "chain:8", "tfim", map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}, 0.3, 5)
	sys, err := NewSystem(l.NumSites(), terms)
	if err != nil {
		t.Fatal(err)
	}
	th, err := validate.ExactThermal(l.NumSites(), terms, 0.7)
	if err != nil {
		t.Fatal(err)
	}
	vals := exactStrings(t, th, sys.Strings)
	est := &fit.Estimates{Values: vals, Stderr: make([]float64, len(vals)), Shots: make([]int64, len(vals)), Cov: cluster.NewSparseSym(len(vals))}
	for j := range vals {
		est.Cov.Set(j, j, 1e-8)
		est.Stderr[j] = 1e-4
	}
	d, err := Solve(sys, est, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if e := directionError(d.Theta, truthTheta(sys)); e > 1e-6 {
		t.Errorf("direction error %g from exact data", e)
	}
	if len(d.Invisible) != 0 {
		t.Errorf("invisible directions in a model without conserved local quantity: %v", d.Summary())
	}
	t.Log(d.Summary())
}

// TestSolveSnapshots: exact snapshots of a disordered TFIM chain.
func TestSolveSnapshots(t *testing.T) {
	l, terms := testModel(t, "chain:8", "tfim", map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}, 0.3, 5)
	n := l.NumSites()
	sys, err := NewSystem(n, terms)
	if err != nil {
		t.Fatal(err)
	}
	bases, _, err := fit.SchemeBases("covering:3", n, terms, 1)
	if err != nil {
		t.Fatal(err)
	}
	sampler, err := validate.NewSampler(n, terms, 0.7)
	if err != nil {
		t.Fatal(err)
	}
	est := sampleEstimates(t, sampler, sys, bases, 20000, 1)
	d, err := Solve(sys, est, Options{})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("direction error %.4g\n%s", directionError(d.Theta, truthTheta(sys)), d.Summary())
}

// TestSolveInfiniteTemperature: at beta = 0 every constraint vanishes
// (rho is the identity, every traceless expectation is 0), so Solve must
// report no information (issue 12).
func TestSolveInfiniteTemperature(t *testing.T) {
	l, terms := testModel(t, "chain:6", "tfim", map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}, 0.3, 5)
	n := l.NumSites()
	sys, _ := NewSystem(n, terms)
	bases, _, _ := fit.SchemeBases("covering:3", n, terms, 1)
	sampler, err := validate.NewSampler(n, terms, 0)
	if err != nil {
		t.Fatal(err)
	}
	est := sampleEstimates(t, sampler, sys, bases, 5000, 2)
	d, err := Solve(sys, est, Options{})
	if !errors.Is(err, ErrNoInformation) {
		t.Fatalf("beta = 0: err %v, want ErrNoInformation\n%s", err, d.Summary())
	}
	t.Log(err, "\n", d.Summary())
}
