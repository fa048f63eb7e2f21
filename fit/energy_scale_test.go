package fit_test

import (
	"math"
	"strings"
	"testing"

	"warmfit/fit"
)

// Noiseless data at the exact order: the fit of beta*lambda is exact, so
// one true coefficient gives back beta = theta_r / lambda_r and every
// lambda exactly (closed form of the rescaling), and so does the true
// beta.
func TestScaleEnergyExact(t *testing.T) {
	lat, terms := randomModel(t, "chain:6", "xxz", map[string]float64{"Jxy": 1, "Jz": 0.5, "hz": 0.4, "hx": 0.2}, 0, 7)
	beta := scaleToBeta(terms, 0.3)
	_, vals := exactData(t, lat.NumSites(), terms, beta)
	res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(terms), Data: exactEstimates(vals)}, fit.Options{Order: 6})
	if err != nil || !res.Converged {
		t.Fatalf("err %v, result %+v", err, res)
	}
	for _, c := range []fit.Calibration{
		{Term: terms[0].Key(), Value: terms[0].Coeff},
		{Term: terms[len(terms)-1].Key(), Value: terms[len(terms)-1].Coeff},
		{Beta: beta},
	} {
		scaled, err := fit.ScaleEnergy(res, c)
		if err != nil {
			t.Fatalf("%s: %v", c, err)
		}
		es := scaled.EnergyScale
		if es == nil || math.Abs(es.Beta-beta) > 1e-8*beta || scaled.Beta != es.Beta {
			t.Errorf("%s: beta %v, want %v", c, scaled.Beta, beta)
		}
		if es.BetaStderr != 0 && c.Term != "" {
			t.Errorf("%s: exact data, beta stderr %v, want 0", c, es.BetaStderr)
		}
		if d := maxError(scaled, terms); d > 1e-8 {
			t.Errorf("%s: max |lambda - truth| = %v", c, d)
		}
		if !scaled.CoefficientsAreLambda() || res.CoefficientsAreLambda() {
			t.Errorf("%s: CoefficientsAreLambda %v (scaled), %v (original)", c, scaled.CoefficientsAreLambda(), res.CoefficientsAreLambda())
		}
		rep := fit.NewReport(scaled, "fixed", "table", "", 1e-3)
		if rep.CoeffMeaning != "lambda" || rep.BetaSource != "energy scale" || rep.EnergyScale == nil {
			t.Errorf("%s: report coefficients %q, beta source %q", c, rep.CoeffMeaning, rep.BetaSource)
		}
	}
	if res.Coeffs[0] == terms[0].Coeff || res.Beta != 1 {
		t.Errorf("ScaleEnergy modified its input")
	}
	if rep := fit.NewReport(res, "fixed", "table", "", 1e-3); rep.BetaSource != "unknown" || rep.CoeffMeaning != "beta*lambda" {
		t.Errorf("unscaled report: beta source %q, coefficients %q", rep.BetaSource, rep.CoeffMeaning)
	}

	// Refusals: the wrong sign, a term not in the template, a scaled
	// result, a fit at known beta.
	bad := []struct {
		c    fit.Calibration
		want string
	}{
		{fit.Calibration{Term: terms[0].Key(), Value: -terms[0].Coeff}, "would not be positive"},
		{fit.Calibration{Term: "ZZ 0 5", Value: 1}, "not a term of the template"},
		{fit.Calibration{Beta: -1}, "must be positive"},
		{fit.Calibration{Term: terms[0].Key(), Value: math.NaN()}, "not a finite number"},
	}
	for _, b := range bad {
		if _, err := fit.ScaleEnergy(res, b.c); err == nil || !strings.Contains(err.Error(), b.want) {
			t.Errorf("%s: error %v, want %q", b.c, err, b.want)
		}
	}
	scaled, _ := fit.ScaleEnergy(res, fit.Calibration{Beta: beta})
	if _, err := fit.ScaleEnergy(scaled, fit.Calibration{Beta: beta}); err == nil {
		t.Error("scaling twice: no error")
	}
	known, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(terms), Data: exactEstimates(vals), Beta: beta}, fit.Options{Order: 6})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := fit.ScaleEnergy(known, fit.Calibration{Beta: beta}); err == nil {
		t.Error("scaling a fit at known beta: no error")
	}
}

// The error bar of beta and of the rescaled coefficients matches the
// scatter over seeded repetitions: Gaussian noise on exact data, the fit
// at the exact order (so all error is statistical), calibrated on the
// largest coefficient. The pulls (beta_hat - beta)/stderr and
// (lambda_hat - lambda)/stderr must have rms within [0.8, 1.25] (common
// practice for pull tests; with 200 repetitions the rms of unit-variance
// pulls has a standard deviation of about 0.05) and the spread of beta_hat
// must agree with the mean reported error bar to the same tolerance.
// Measured: see the log line.
func TestScaleEnergyErrorBarMatchesRepetitions(t *testing.T) {
	lat, terms := randomModel(t, "chain:5", "xxz", map[string]float64{"Jxy": 1, "Jz": 0.6, "hz": 0.5, "hx": 0.3}, 0, 11)
	beta := scaleToBeta(terms, 0.3)
	_, vals := exactData(t, lat.NumSites(), terms, beta)
	ref := 0
	for k, term := range terms {
		if math.Abs(term.Coeff) > math.Abs(terms[ref].Coeff) {
			ref = k
		}
	}
	other := (ref + 1) % len(terms)
	reps := 200
	if testing.Short() {
		reps = 60
	}
	const sigma = 2e-3
	var sumBeta, sumBeta2, sumSE, pb2, pl2 float64
	for r := 0; r < reps; r++ {
		data := gaussianData(vals, sigma, uint64(1000+r))
		res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(terms), Data: data}, fit.Options{Order: 5})
		if err != nil || !res.Converged {
			t.Fatalf("rep %d: err %v, converged %v", r, err, res != nil && res.Converged)
		}
		scaled, err := fit.ScaleEnergy(res, fit.Calibration{Term: terms[ref].Key(), Value: terms[ref].Coeff})
		if err != nil {
			t.Fatalf("rep %d: %v", r, err)
		}
		es := scaled.EnergyScale
		sumBeta += es.Beta
		sumBeta2 += es.Beta * es.Beta
		sumSE += es.BetaStderr
		pb2 += sq((es.Beta - beta) / es.BetaStderr)
		tm := scaled.Terms[other]
		pl2 += sq((tm.Coeff - terms[other].Coeff) / tm.Stderr)
		if scaled.Terms[ref].Coeff != terms[ref].Coeff || scaled.Terms[ref].Stderr != 0 {
			t.Fatalf("the calibrated term is %v +- %v, want exactly %v", scaled.Terms[ref].Coeff, scaled.Terms[ref].Stderr, terms[ref].Coeff)
		}
	}
	n := float64(reps)
	mean := sumBeta / n
	spread := math.Sqrt((sumBeta2 - n*mean*mean) / (n - 1))
	meanSE := sumSE / n
	rmsBeta, rmsLambda := math.Sqrt(pb2/n), math.Sqrt(pl2/n)
	t.Logf("%d repetitions: beta %.5g (true %.5g), spread %.3g, mean stderr %.3g (ratio %.3f); pull rms beta %.3f, %s %.3f",
		reps, mean, beta, spread, meanSE, spread/meanSE, rmsBeta, terms[other].Key(), rmsLambda)
	for name, v := range map[string]float64{"spread/stderr of beta": spread / meanSE, "pull rms of beta": rmsBeta, "pull rms of " + terms[other].Key(): rmsLambda} {
		if v < 0.8 || v > 1.25 {
			t.Errorf("%s = %.3f, want within [0.8, 1.25]", name, v)
		}
	}
}

func sq(x float64) float64 { return x * x }
