package stationary

import (
	"testing"

	"warmfit/fit"
	"warmfit/validate"
)

// TestNonThermalStationaryState: a mixture of two Gibbs states (weights
// (w(beta1) + w(beta2))/2 on the eigenvectors) commutes with H, so the
// constraints still give the direction (Qi and Ranard, Quantum 3, 159
// (2019): stationarity needs [rho, H] = 0 only), while no single Gibbs
// state of that direction reproduces its expectations, which the
// maximum-entropy consistency chi² must flag. The thermal state of the
// same model must pass.
func TestNonThermalStationaryState(t *testing.T) {
	l, terms := testModel(t, "chain:8", "tfim", map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}, 0.3, 5)
	n := l.NumSites()
	sys, _ := NewSystem(n, terms)
	bases, _, _ := fit.SchemeBases("covering:3", n, terms, 1)
	hot, err := validate.ExactThermal(n, terms, 0.2)
	if err != nil {
		t.Fatal(err)
	}
	cold, _ := validate.ExactThermal(n, terms, 1.5)
	wh, wc := hot.Weights(nil), cold.Weights(nil)
	mixed := make([]float64, len(wh))
	for k := range mixed {
		mixed[k] = (wh[k] + wc[k]) / 2
	}
	mix, err := validate.NewMixtureSampler(hot.Spectrum(), mixed)
	if err != nil {
		t.Fatal(err)
	}
	thermal, _ := validate.NewSampler(n, terms, 0.7)
	eval := exactEvaluator(n, terms)
	for _, c := range []struct {
		name       string
		s          *validate.Sampler
		notThermal bool
	}{{"thermal beta 0.7", thermal, false}, {"mixture of beta 0.2 and 1.5", mix, true}} {
		est := sampleEstimates(t, c.s, sys, bases, 20000, 3)
		d, err := Solve(sys, est, Options{})
		if err != nil {
			t.Fatal(err)
		}
		e := directionError(d.Theta, truthTheta(sys))
		m, err := CheckThermal(sys, est, d, eval)
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("%s: direction error %.4g, consistency chi2/dof %.4g (%d dof)", c.name, e, m.Chi2/float64(m.DOF), m.DOF)
		if e > 0.05 {
			t.Errorf("%s: direction error %g", c.name, e)
		}
		if m.NotThermal() != c.notThermal {
			t.Errorf("%s: NotThermal = %v, want %v", c.name, m.NotThermal(), c.notThermal)
		}
	}
}
