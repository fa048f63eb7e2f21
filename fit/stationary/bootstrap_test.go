package stationary

import (
	"math"
	"testing"
)

// TestBootstrapAgreesWithDeltaMethod: where the delta method is valid
// (a disordered TFIM chain at beta 0.7, exact snapshots from the dense
// ED sampler), the parametric bootstrap's standard errors agree with it
// within the scatter of a few resamples (common practice: both estimate
// the same first-order spread; Efron and Tibshirani 1993, ch. 6).
func TestBootstrapAgreesWithDeltaMethod(t *testing.T) {
	sc := scenario{name: "tfim6", spec: "chain:6", preset: "tfim", values: map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}, disorder: 0.3, beta: 0.7}
	sys, est, d, err := sc.run(t, 20000, 3)
	if err != nil {
		t.Fatal(err)
	}
	g := calibrateFirst(sys)
	res, err := Fix(sys, est, d, g, Options{})
	if err != nil {
		t.Fatal(err)
	}
	boot, refused, err := Bootstrap(sys, est, g, Options{}, 12, 1)
	if err != nil {
		t.Fatal(err)
	}
	if refused > 0 {
		t.Errorf("%d resamples refused on a well-resolved system", refused)
	}
	var logRatio float64
	n := 0
	for p, se := range res.StdErr {
		if se == 0 {
			continue // calibrated
		}
		if boot[p] <= 0 || math.IsNaN(boot[p]) {
			t.Fatalf("bootstrap standard error %v for parameter %d", boot[p], p)
		}
		logRatio += math.Log(boot[p] / se)
		n++
	}
	ratio := math.Exp(logRatio / float64(n))
	t.Logf("geometric mean bootstrap/delta-method standard error: %.3g over %d parameters", ratio, n)
	if ratio < 0.6 || ratio > 1.6 {
		t.Errorf("bootstrap/delta-method ratio %.3g, want about 1", ratio)
	}
}
