package stationary

import (
	"math"
	"os"
	"testing"
)

// pullStats repeats a scenario over seeds and returns the rms pull of
// every coefficient and the mean direction error. The pull rms of honest
// error bars is 1; 0.8-1.25 is the acceptance band of issue 12.
func pullStats(t *testing.T, sc scenario, shots, seeds int, gauge func(*System) Gauge) (pullRMS, dirErr float64) {
	t.Helper()
	p, _, e, _ := pullStatsBoth(t, sc, shots, seeds, gauge)
	return p, e
}

// pullStatsBoth is pullStats that also returns the pull rms with the
// other sandwich (sandwichCorrected toggled: the measurement of
// sandwichParts) and the rms coefficient error.
func pullStatsBoth(t *testing.T, sc scenario, shots, seeds int, gauge func(*System) Gauge) (pullRMS, otherRMS, dirErr, coefRMS float64) {
	t.Helper()
	var sum2, other2, e2 float64
	var count, otherN, used int
	for s := range seeds {
		sys, est, d, err := sc.run(t, shots, uint64(100+s))
		var res *Result
		if err == nil {
			res, err = Fix(sys, est, d, gauge(sys), Options{})
		}
		if err != nil {
			// An error, but the other seeds still run: the heavy checks
			// report every refusal.
			t.Errorf("%s seed %d: %v", sc.name, s, err)
			continue
		}
		used++
		truth := coeffs(sys.Terms())
		dirErr += directionError(d.Theta, truthTheta(sys))
		for k := range truth {
			if res.StdErr[k] > 0 {
				z := (res.Lambda[k] - truth[k]) / res.StdErr[k]
				sum2 += z * z
				e2 += (res.Lambda[k] - truth[k]) * (res.Lambda[k] - truth[k])
				count++
			}
		}
		sandwichCorrected = !sandwichCorrected
		if ro, err := Fix(sys, est, d, gauge(sys), Options{}); err == nil {
			for k := range truth {
				if ro.StdErr[k] > 0 {
					z := (ro.Lambda[k] - truth[k]) / ro.StdErr[k]
					other2 += z * z
					otherN++
				}
			}
		}
		sandwichCorrected = !sandwichCorrected
	}
	if used == 0 {
		t.Fatalf("%s: every seed refused", sc.name)
	}
	return math.Sqrt(sum2 / float64(count)), math.Sqrt(other2 / float64(max(otherN, 1))), dirErr / float64(used), math.Sqrt(e2 / float64(count))
}

func calibrateFirst(sys *System) Gauge {
	return Gauge{Calibrated: map[string]float64{sys.Params().Names[0]: sys.Terms()[0].Coeff}}
}

// TestPullsAndShotScaling: seeded repetitions of exact snapshots
// (validate's exact sampler; dense ED) give pull rms within 0.8-1.25 and
// a direction error that shrinks like 1/sqrt(shots) (central limit
// theorem: the estimator is smooth in the sampled means).
func TestPullsAndShotScaling(t *testing.T) {
	sc := scenario{name: "tfim8", spec: "chain:8", preset: "tfim", values: map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}, disorder: 0.3, beta: 0.7}
	seeds := 16
	if testing.Short() {
		seeds = 4
	}
	pull1, e1 := pullStats(t, sc, 16000, seeds, calibrateFirst)
	pull2, e2 := pullStats(t, sc, 256000, seeds, calibrateFirst)
	t.Logf("16000 shots/basis: pull rms %.3g, direction error %.4g; 256000: pull rms %.3g, direction error %.4g (ratio %.3g, 1/sqrt scaling says 4)",
		pull1, e1, pull2, e2, e1/e2)
	if r := e1 / e2; r < 2.5 || r > 6 {
		t.Errorf("direction error ratio %.3g for 16x the shots, want about 4", r)
	}
	// With -short's 4 seeds the rms of about 90 correlated pulls scatters
	// by tens of percent; only gross failures are caught there.
	lo, hi := 0.8, 1.25
	if testing.Short() {
		lo, hi = 0.45, 2
	}
	for _, p := range []float64{pull1, pull2} {
		if p < lo || p > hi {
			t.Errorf("pull rms %.3g outside %.2g-%.2g", p, lo, hi)
		}
	}
}

// matchedAtBeta fixes the scale by the thermal match at the scenario's
// known beta (exact evaluator): the CLI's default gauge.
func matchedAtBeta(beta float64) func(*System) Gauge {
	return func(sys *System) Gauge {
		return Gauge{Beta: beta, Evaluate: exactEvaluator(sys.NumQubits(), sys.Terms())}
	}
}

// TestPullsThermalMatch: with the scale from the thermal match, error
// bars (the direction's noise propagated through the match,
// directionNoise) are as large as the seeded-repetition spread: pull rms
// within 0.8-1.25 (issue 12's acceptance band) on a disordered TFIM chain
// and, with WARMFIT_STATIONARY_HEAVY=1 (minutes), on the 3x3 XXZ model
// of review finding 1 (its couplings and disorder width, the tests'
// disorder seed) at beta 1 with exact snapshots (dense ED sampler), where
// nearest-pair probes alone gave pull rms about 2 and errors of 0.4-0.5.
func TestPullsThermalMatch(t *testing.T) {
	cases := []struct {
		sc    scenario
		shots int
		seeds int
		heavy bool
	}{
		{scenario{name: "tfim8", spec: "chain:8", preset: "tfim", values: map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}, disorder: 0.3, beta: 0.7}, 20000, 8, false},
		{scenario{name: "xxz3x3", spec: "square:3x3", preset: "xxz", values: map[string]float64{"Jxy": 0.4, "Jz": 0.3, "hz": 0.2, "hx": 0.1}, disorder: 0.1, beta: 1}, 200000, 8, true},
	}
	for _, c := range cases {
		if c.heavy && os.Getenv("WARMFIT_STATIONARY_HEAVY") == "" {
			t.Logf("%s skipped: set WARMFIT_STATIONARY_HEAVY=1 (minutes)", c.sc.name)
			continue
		}
		seeds := c.seeds
		lo, hi := 0.8, 1.25
		if testing.Short() {
			// 4 seeds scatter the rms of ~90 correlated pulls by tens of
			// percent; only gross failures are caught.
			seeds, lo, hi = 4, 0.5, 1.8
		}
		pull, e := pullStats(t, c.sc, c.shots, seeds, matchedAtBeta(c.sc.beta))
		t.Logf("%s: %d seeds x %d shots/basis: pull rms %.3g, direction error %.4g", c.sc.name, seeds, c.shots, pull, e)
		if pull < lo || pull > hi {
			t.Errorf("%s: pull rms %.3g outside %.2g-%.2g", c.sc.name, pull, lo, hi)
		}
	}
}
