package fit_test

import (
	"math"
	"testing"

	"warmfit/fit"
	"warmfit/lattice"
)

// CompareTruth by hand: two fitted terms and a true term the template
// lacks.
func TestCompareTruth(t *testing.T) {
	res := &fit.Result{Terms: []lattice.Term{
		{Pauli: "Z", Sites: []int{0}, Coeff: 1.1, Stderr: 0.05, HasStderr: true},
		{Pauli: "X", Sites: []int{1}, Coeff: -0.2, Stderr: 0.1, HasStderr: true},
	}}
	truth := []lattice.Term{
		{Pauli: "Z", Sites: []int{0}, Coeff: 1},
		{Pauli: "Y", Sites: []int{1}, Coeff: 0.3},
	}
	c, err := fit.CompareTruth(res, truth, 1)
	if err != nil {
		t.Fatal(err)
	}
	// Errors 0.1 and -0.2 (X 1 is absent from the truth: true value 0),
	// missing 0.3: L2 = sqrt(0.01 + 0.04 + 0.09), Linf = 0.3; z = 2 and -2.
	if math.Abs(c.L2-math.Sqrt(0.14)) > 1e-12 || math.Abs(c.Linf-0.3) > 1e-12 || c.Missing != 1 {
		t.Errorf("L2 %v, Linf %v, missing %d", c.L2, c.Linf, c.Missing)
	}
	if math.Abs(c.Z[0]-2) > 1e-12 || math.Abs(c.Z[1]+2) > 1e-12 || math.Abs(c.RMSZ-2) > 1e-12 || c.LargestErrorTerm != 1 {
		t.Errorf("z %v, rms %v, largest error %d", c.Z, c.RMSZ, c.LargestErrorTerm)
	}
	if c.True[0] != 1 || c.True[1] != 0 {
		t.Errorf("true values %v, want [1 0]", c.True)
	}
	// The largest error and the largest pull are different terms when
	// the error bars differ: errors 0.1 (stderr 0.02, pull 5) and -0.2
	// (stderr 0.1, pull -2).
	res.Terms[0].Stderr = 0.02
	c, _ = fit.CompareTruth(res, truth, 1)
	if c.LargestErrorTerm != 1 || c.LargestPullTerm != 0 || math.Abs(c.MaxAbsZ-5) > 1e-9 {
		t.Errorf("largest error term %d (want 1), largest pull term %d (want 0), max |z| %v", c.LargestErrorTerm, c.LargestPullTerm, c.MaxAbsZ)
	}
	res.Terms[0].Stderr = 0.05
	// With beta unknown the truth is scaled by its beta.
	c, _ = fit.CompareTruth(res, truth[:1], 1.1)
	if math.Abs(c.Z[0]) > 1e-12 {
		t.Errorf("scaled truth: z %v, want 0", c.Z[0])
	}
}

// A report must always be valid JSON, even for a fit that did not
// converge (encoding/json refuses NaN and infinities).
func TestReportOfUnconvergedFitIsJSON(t *testing.T) {
	lat, terms := tiedXXZ(t, "square:3x3", 0)
	data := gaussianData(expansionData(t, lat, terms, 0.5, 4), 1e-3, 2)
	res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(terms), Data: data, Beta: 0.5}, fit.Options{Order: 4, MaxIter: 1})
	if err != nil {
		t.Fatal(err)
	}
	raw, err := fit.NewReport(res, "fixed", "table", "x.csv", 1e-3).JSON()
	if err != nil || len(raw) == 0 {
		t.Errorf("report: %v", err)
	}
}
