package stationary

import (
	"errors"
	"fmt"
	"math"
	"os"
	"testing"

	"warmfit/fit"
)

// combinedCase is one scenario of the combination checks: exact Gibbs
// snapshots (validate's exact sampler, dense ED), covering:3 bases, the
// expansion at a fixed order (order = sites is exact; a lower order at a
// low temperature is biased, the regime where it does not converge).
type combinedCase struct {
	sc    scenario
	order int
	shots int
}

// combinedErrors are the largest and rms coefficient errors against the
// truth and the rms pull of one estimator.
type combinedErrors struct{ worst, rms, pull float64 }

// combinedRun is one seed of a case: the three estimators' errors and
// the combination's choice.
type combinedRun struct {
	expansion, stationarity, combined combinedErrors
	choice                            Choice
	comb                              *Combination
}

func errorsOf(got, se, truth []float64) combinedErrors {
	var e combinedErrors
	var z2 float64
	n := 0
	for k := range truth {
		d := got[k] - truth[k]
		e.worst = max(e.worst, math.Abs(d))
		e.rms += d * d
		if se != nil && se[k] > 0 {
			z2 += d * d / (se[k] * se[k])
			n++
		}
	}
	e.rms = math.Sqrt(e.rms / float64(len(truth)))
	if n > 0 {
		e.pull = math.Sqrt(z2 / float64(n))
	}
	return e
}

func (c combinedCase) run(t *testing.T, seed uint64) combinedRun {
	t.Helper()
	nan := combinedErrors{math.NaN(), math.NaN(), math.NaN()}
	sys, est, d, serr := c.sc.run(t, c.shots, seed)
	if serr != nil && !errors.Is(serr, ErrNoInformation) {
		t.Fatalf("%s seed %d: stationarity: %v", c.sc.name, seed, serr)
	}
	truth := coeffs(sys.Terms())
	l, _ := testModel(t, c.sc.spec, c.sc.preset, c.sc.values, c.sc.disorder, 11)
	fr, err := fit.Fit(&fit.Problem{Lattice: l, Terms: sys.Terms(), Data: termEstimates(sys, est), Beta: c.sc.beta}, fit.Options{Order: c.order})
	expOK := err == nil && fr.Converged
	if serr != nil {
		// Stationarity refuses (no information): the combined estimator
		// is the expansion alone.
		if !expOK {
			t.Fatalf("%s seed %d: both fail: %v; %v", c.sc.name, seed, serr, err)
		}
		e := errorsOf(fr.Coeffs, fr.ThetaStderr, truth)
		return combinedRun{expansion: e, stationarity: nan, combined: e, choice: UseExpansion}
	}
	sr, err := Fix(sys, est, d, Gauge{Beta: c.sc.beta, Evaluate: exactEvaluator(sys.NumQubits(), sys.Terms())}, Options{})
	if err != nil {
		t.Fatalf("%s seed %d: stationarity fix: %v", c.sc.name, seed, err)
	}
	stat := errorsOf(sr.Lambda, sr.StdErr, truth)
	if !expOK {
		// The expansion fails (not convex at this order and temperature):
		// the combined estimator is stationarity alone.
		return combinedRun{expansion: nan, stationarity: stat, combined: stat, choice: UseStationary}
	}
	trusted := fr.Truncation.Exact || fr.Truncation.OK && len(fr.Untrusted) == 0
	var systematic []float64
	if !trusted {
		systematic = fr.Truncation.ParamError
	}
	comb, err := Combine(sys, est, d, ExpansionEstimate{Theta: fr.Theta, Propagate: fr.Propagate, Systematic: systematic}, CombineOptions{})
	if err != nil {
		t.Fatalf("%s seed %d: combine: %v", c.sc.name, seed, err)
	}
	choice, _ := comb.Choose(trusted)
	out := combinedRun{
		expansion:    errorsOf(fr.Coeffs, fr.ThetaStderr, truth),
		stationarity: stat,
		choice:       choice,
		comb:         comb,
	}
	switch choice {
	case UseCombined:
		p := sys.Params()
		lambda, se := make([]float64, len(truth)), make([]float64, len(truth))
		p.Expand(lambda, comb.Theta)
		p.Expand(se, comb.StdErr)
		out.combined = errorsOf(lambda, se, truth)
	case UseExpansion:
		out.combined = out.expansion
	default:
		out.combined = out.stationarity
	}
	return out
}

// TestCombinedNeverWorse: on exact Gibbs snapshots (validate's exact
// sampler, dense ED; covering:3 bases), over temperatures where the
// expansion is exact (order = sites), where it is not trusted (order
// below its convergence: kept with its truncation error when the
// consistency test passes, dropped when it fails) and where it fails
// (not convex), the combined estimator's largest and rms errors,
// averaged over seeds, are at most those of the better of the expansion
// and stationarity alone (within 10%, the seeds' scatter), and its pulls
// have rms within issue 12's band 0.8-1.25 (a pull is (estimate -
// truth)/stderr, unit variance for honest error bars: common practice).
// Where the untrusted expansion is combined, its truncation errors (the
// larger of each parameter's last two changes between orders) make the
// error bars conservative: pulls down to 0.6 are accepted there.
// WARMFIT_COMBINED_SEEDS sets the seeds (default 4; 2 with -short, with
// loose bounds); WARMFIT_STATIONARY_HEAVY=1 adds the 3x3 XXZ model of
// review finding 1 at beta 1, a U(1) XXZ chain (total Z invisible to
// stationarity, fixed by the expansion) and the 10-site chain at beta
// 0.3 and 1, exact and at order 7 (minutes to hours under load);
// WARMFIT_COMBINED_ONLY=NAME runs only the cases of that scenario.
func TestCombinedNeverWorse(t *testing.T) {
	tfim := map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}
	xxz := map[string]float64{"Jxy": 0.4, "Jz": 0.3, "hz": 0.2, "hx": 0.1}
	tfimAt := func(beta float64) scenario {
		return scenario{name: fmt.Sprintf("tfim8-b%g", beta), spec: "chain:8", preset: "tfim", values: tfim, disorder: 0.3, beta: beta}
	}
	tfim10At := func(beta float64) scenario {
		return scenario{name: fmt.Sprintf("tfim10-b%g", beta), spec: "chain:10", preset: "tfim", values: tfim, disorder: 0.3, beta: beta}
	}
	cases := []struct {
		combinedCase
		pullLo float64
		heavy  bool
	}{
		{combinedCase{tfimAt(0.1), 8, 20000}, 0.8, false},
		{combinedCase{tfimAt(0.3), 8, 20000}, 0.8, false},
		{combinedCase{tfimAt(0.7), 8, 20000}, 0.8, false},
		{combinedCase{tfimAt(0.7), 6, 20000}, 0.6, false},
		{combinedCase{tfimAt(0.7), 3, 20000}, 0.8, false},
		{combinedCase{tfimAt(1.2), 6, 20000}, 0.8, false},
		// U(1): total Z is invisible to stationarity; the expansion fixes it.
		{combinedCase{scenario{name: "xxzu1-8", spec: "chain:8", preset: "xxz", values: xxz, disorder: 0.1, beta: 0.7, u1: true}, 8, 200000}, 0.8, true},
		{combinedCase{scenario{name: "xxz3x3", spec: "square:3x3", preset: "xxz", values: xxz, disorder: 0.1, beta: 1}, 9, 200000}, 0.8, true},
		{combinedCase{tfim10At(0.3), 10, 20000}, 0.8, true},
		{combinedCase{tfim10At(1), 10, 20000}, 0.8, true},
		{combinedCase{tfim10At(1), 7, 20000}, 0.6, true},
	}
	seeds := 4
	tolerance, lo, hi := 1.1, 1.0, 1.25
	if testing.Short() {
		seeds, tolerance, lo, hi = 2, 1.5, 0.5, 2
		cases = cases[2:3]
	}
	if s := os.Getenv("WARMFIT_COMBINED_SEEDS"); s != "" {
		fmt.Sscan(s, &seeds)
	}
	for _, c := range cases {
		if only := os.Getenv("WARMFIT_COMBINED_ONLY"); only != "" && only != c.sc.name {
			continue
		}
		if c.heavy && os.Getenv("WARMFIT_STATIONARY_HEAVY") == "" {
			t.Logf("%s skipped: set WARMFIT_STATIONARY_HEAVY=1 (minutes)", c.sc.name)
			continue
		}
		var mean [3]combinedErrors
		var pull2 [3]float64
		counts := map[Choice]int{}
		for s := range seeds {
			r := c.run(t, uint64(300+s))
			counts[r.choice]++
			for i, e := range []combinedErrors{r.expansion, r.stationarity, r.combined} {
				mean[i].worst += e.worst / float64(seeds)
				mean[i].rms += e.rms / float64(seeds)
				pull2[i] += e.pull * e.pull / float64(seeds)
			}
			if r.comb == nil {
				t.Logf("%s order %d seed %d: one estimator refused; expansion %.4g/%.4g, stationarity %.4g/%.4g", c.sc.name, c.order, s, r.expansion.worst, r.expansion.rms, r.stationarity.worst, r.stationarity.rms)
				continue
			}
			t.Logf("%s order %d seed %d: chi2 %.3g/%d (p %.3g), variance ratio %.3g, choice %s; expansion %.4g/%.4g, stationarity %.4g/%.4g, combined %.4g/%.4g (pull %.3g)",
				c.sc.name, c.order, s, r.comb.Chi2, r.comb.DOF, r.comb.P, r.comb.VarianceRatio, r.choice,
				r.expansion.worst, r.expansion.rms, r.stationarity.worst, r.stationarity.rms, r.combined.worst, r.combined.rms, r.combined.pull)
		}
		for i := range pull2 {
			mean[i].pull = math.Sqrt(pull2[i])
		}
		t.Logf("%s order %d, %d seeds x %d shots/basis: max/rms error (pull rms): expansion %.4g/%.4g (%.3g), stationarity %.4g/%.4g (%.3g), combined %.4g/%.4g (%.3g); choices %v",
			c.sc.name, c.order, seeds, c.shots, mean[0].worst, mean[0].rms, mean[0].pull, mean[1].worst, mean[1].rms, mean[1].pull, mean[2].worst, mean[2].rms, mean[2].pull, counts)
		// The better of the two alone, over the seeds where each ran
		// (NaN marks a seed where one refused; its mean is then NaN).
		best := func(i func(combinedErrors) float64) float64 {
			a, b := i(mean[0]), i(mean[1])
			switch {
			case math.IsNaN(a):
				return b
			case math.IsNaN(b):
				return a
			}
			return min(a, b)
		}
		if w, b := mean[2].worst, best(func(e combinedErrors) float64 { return e.worst }); w > tolerance*b {
			t.Errorf("%s order %d: combined largest error %.4g above %.2g x the better alone (%.4g)", c.sc.name, c.order, w, tolerance, b)
		}
		if r, b := mean[2].rms, best(func(e combinedErrors) float64 { return e.rms }); r > tolerance*b {
			t.Errorf("%s order %d: combined rms error %.4g above %.2g x the better alone (%.4g)", c.sc.name, c.order, r, tolerance, b)
		}
		// The band applies where the combination was used; where every
		// seed fell back to one estimator alone its own tests check its
		// pulls (stationarity: TestPullsThermalMatch), logged above.
		if p, plo := mean[2].pull, c.pullLo*lo; counts[UseCombined] > 0 && (p < plo || p > hi) {
			t.Errorf("%s order %d: combined pull rms %.3g outside %.3g-%.3g", c.sc.name, c.order, p, plo, hi)
		}
	}
}
