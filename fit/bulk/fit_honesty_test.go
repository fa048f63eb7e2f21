package bulk

import (
	"math"
	"testing"
)

// Fit honesty (common practice for validating a least-squares fitter):
// curves drawn from a known model with Gaussian noise of known size must
// give pulls (fitted - true)/stderr whose rms over many seeds is 1 within
// sampling error. With 60 seeds the rms of a unit normal has a standard
// deviation of about 0.09, so 0.8-1.25 is a two- to three-sigma window.
func TestFitPullsOverSeeds(t *testing.T) {
	seeds := 60
	if testing.Short() {
		seeds = 20
	}
	truth := map[string]float64{ParamJ: 40, ParamG: 2.05, ParamChi0: 2e-4, ParamImpurity: 0.02, ParamPhononA: 2e-6}
	fwd, err := NewPeriodicClusterModel("chain", PeriodicClusterOptions{})
	if err != nil {
		t.Fatal(err)
	}
	protos := []*Series{{Quantity: Susceptibility}, {Quantity: HeatCapacity}}
	gen, err := NewCandidate("truth", fwd, protos, nil, false, truth, nil)
	if err != nil {
		t.Fatal(err)
	}
	start := map[string]float64{ParamJ: 35, ParamG: 2, ParamChi0: 0, ParamImpurity: 0.01, ParamPhononA: 0}
	names := []string{ParamJ, ParamG, ParamChi0, ParamImpurity, ParamPhononA}
	sum2 := map[string]float64{}
	for seed := range seeds {
		chi := synthSeries(t, gen, Susceptibility, logGrid(25, 300, 30), 0, 0.003, uint64(2*seed+1))
		c := synthSeries(t, gen, HeatCapacity, logGrid(36, 150, 20), 0, 0.01, uint64(2*seed+2))
		data := []*Series{chi, c}
		cand, err := NewCandidate("chain", fwd, data, nil, false, start, nil)
		if err != nil {
			t.Fatal(err)
		}
		res, err := FitCandidate(cand, data, FitOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if !res.Converged || len(res.Warnings) > 0 {
			t.Fatalf("seed %d: converged %v, warnings %q", seed, res.Converged, res.Warnings)
		}
		for _, p := range res.Params {
			pull := (p.Value - truth[p.Name]) / p.Stderr
			sum2[p.Name] += pull * pull
		}
	}
	for _, n := range names {
		rms := math.Sqrt(sum2[n] / float64(seeds))
		t.Logf("%s: pull rms %.3f over %d seeds", n, rms, seeds)
		if !testing.Short() && (rms < 0.8 || rms > 1.25) {
			t.Errorf("%s: pull rms %.3f outside 0.8-1.25", n, rms)
		}
	}
}

// The wrong lattice is rejected by chi^2 once the data reach T ~ J
// (common practice: a p-value below 1e-6 rejects the model); the right
// one is accepted. Data: chain (z = 2) or square (z = 4) Heisenberg model
// with J = 50 K, 0.1% errors (a good SQUID curve), T from 0.6 J to 6 J.
// Each candidate is judged where its forward model is trusted: the square
// periodic clusters (12 and 10 sites, both with wrapping loops of length
// 4) agree only from about 3 J, so the comparison runs there.
func TestWrongLatticeRejected(t *testing.T) {
	models := map[string]ForwardModel{}
	for _, lat := range []string{"chain", "square"} {
		m, err := NewPeriodicClusterModel(lat, PeriodicClusterOptions{})
		if err != nil {
			t.Fatal(err)
		}
		models[lat] = m
	}
	truth := map[string]float64{ParamJ: 50, ParamG: 2.1, ParamChi0: 0, ParamImpurity: 0.005}
	fixed := map[string]bool{ParamChi0: true}
	for _, tc := range []struct{ truth, wrong string }{{"chain", "square"}, {"square", "chain"}} {
		proto := []*Series{{Quantity: Susceptibility}}
		gen, err := NewCandidate("truth", models[tc.truth], proto, nil, false, truth, nil)
		if err != nil {
			t.Fatal(err)
		}
		s := synthSeries(t, gen, Susceptibility, logGrid(30, 300, 40), 0, 0.001, 11)
		data := []*Series{s}
		var cands []*Candidate
		for _, lat := range []string{tc.truth, tc.wrong} {
			start := map[string]float64{ParamJ: 50, ParamG: 2, ParamImpurity: 0.01}
			c, err := NewCandidate(lat, models[lat], data, nil, false, start, fixed)
			if err != nil {
				t.Fatal(err)
			}
			cands = append(cands, c)
		}
		cmp, err := Compare(cands, data, FitOptions{}, 0)
		if err != nil {
			t.Fatal(err)
		}
		if cmp.Common[0] == nil || cmp.Common[1] == nil {
			t.Fatalf("truth %s: a candidate was not fitted: %v", tc.truth, cmp.Errors)
		}
		for i, r := range cmp.Common {
			o := cmp.Own[i]
			t.Logf("truth %s, candidate %s: own range from %.3g K: chi2 %.1f / %d, p %.3g, J %.2f; common range: chi2 %.1f / %d, AIC %.1f",
				tc.truth, cands[i].Name, o.Series[0].TrustedFrom, o.Chi2, o.DOF, o.PValue, o.Params[0].Value, r.Chi2, r.DOF, r.AIC)
		}
		if cmp.Ranking[0] != 0 {
			t.Errorf("truth %s: AIC prefers %s", tc.truth, cands[cmp.Ranking[0]].Name)
		}
		if p := cmp.Own[0].PValue; p < 1e-3 || cmp.Rejected[0] {
			t.Errorf("truth %s: right lattice rejected, p = %.3g", tc.truth, p)
		}
		if p := cmp.Own[1].PValue; p > 1e-6 || !cmp.Rejected[1] {
			t.Errorf("truth %s: wrong lattice %s not rejected, p = %.3g on its trusted range", tc.truth, tc.wrong, p)
		}
	}
}
