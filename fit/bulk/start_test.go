package bulk

import (
	"math"
	"strings"
	"testing"
)

func expansionChain(t testing.TB) *ExpansionModel {
	t.Helper()
	m, err := NewExpansionModel("chain", 10, ExpansionOptions{})
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// A first guess far from the truth (J off by a factor 4 either way, g and
// the impurity fraction off too) must still reach the least-squares
// minimum: the fit recovers the truth within 4 standard errors with an
// acceptable chi^2 (common practice for a fitter's robustness).
func TestFitFromFarStart(t *testing.T) {
	fwd := expansionChain(t)
	truth := map[string]float64{ParamJ: 40, ParamG: 2.1, ParamChi0: 1e-4, ParamImpurity: 0.02}
	gen, err := NewCandidate("truth", fwd, []*Series{{Quantity: Susceptibility}}, nil, false, truth, nil)
	if err != nil {
		t.Fatal(err)
	}
	s := synthSeries(t, gen, Susceptibility, logGrid(20, 300, 40), 0, 0.003, 3)
	for _, j0 := range []float64{10, 160} {
		start := map[string]float64{ParamJ: j0, ParamG: 1.8, ParamChi0: 0, ParamImpurity: 0.1}
		c, err := NewCandidate("chain", fwd, []*Series{s}, nil, false, start, nil)
		if err != nil {
			t.Fatal(err)
		}
		res, err := FitCandidate(c, []*Series{s}, FitOptions{})
		if err != nil {
			t.Errorf("start J = %g K: %v", j0, err)
			continue
		}
		t.Logf("start J = %g K: chi2 %.1f / %d, p %.3g, iterations %d, warnings %q", j0, res.Chi2, res.DOF, res.PValue, res.Iterations, res.Warnings)
		for _, p := range res.Params {
			if math.Abs(p.Value-truth[p.Name]) > 4*p.Stderr {
				t.Errorf("start J = %g K: %s = %.5g +- %.2g, truth %g", j0, p.Name, p.Value, p.Stderr, truth[p.Name])
			}
		}
		if res.PValue < 1e-3 {
			t.Errorf("start J = %g K: p = %.3g, the fit stopped away from the minimum", j0, res.PValue)
		}
	}
}

// A fit that moves the couplings so that the trusted range climbs above
// data it started with must say so and leave those points out (the
// model is never extrapolated): chain data from 5 K with J = 40 K, a
// first guess J = 12 K under which all of them are trusted.
func TestFitSaysWhenTrustedRangeWalksUp(t *testing.T) {
	fwd := expansionChain(t)
	truth := map[string]float64{ParamJ: 40, ParamG: 2.1, ParamImpurity: 0.01}
	fixed := map[string]bool{ParamChi0: true}
	gen, err := NewCandidate("truth", fwd, []*Series{{Quantity: Susceptibility}}, nil, false, truth, fixed)
	if err != nil {
		t.Fatal(err)
	}
	s := synthSeries(t, gen, Susceptibility, logGrid(5, 300, 40), 0, 0.003, 9)
	c, err := NewCandidate("chain", fwd, []*Series{s}, nil, false, map[string]float64{ParamJ: 12, ParamG: 2.1, ParamImpurity: 0.01}, fixed)
	if err != nil {
		t.Fatal(err)
	}
	res, err := FitCandidate(c, []*Series{s}, FitOptions{})
	if err != nil {
		t.Fatal(err)
	}
	sf := res.Series[0]
	first := res.Rounds[0].TrustedFrom[0]
	t.Logf("trusted from %.3g K at the start, %.3g K at the end; %d of %d points used; warnings %q", first, sf.TrustedFrom, sf.Used, len(s.Points), res.Warnings)
	if !(sf.TrustedFrom > first) || sf.Used == len(s.Points) {
		t.Fatalf("the range did not walk up (%.3g K -> %.3g K, %d points used)", first, sf.TrustedFrom, sf.Used)
	}
	walked := false
	for _, w := range res.Warnings {
		walked = walked || strings.Contains(w, "walked the trusted range up")
	}
	if !walked {
		t.Errorf("no warning that the trusted range walked up: %q", res.Warnings)
	}
	for k, pt := range s.Points {
		if sf.UsedPoint[k] && pt.T < sf.TrustedFrom {
			t.Errorf("point at %.3g K used below the trusted range (%.3g K)", pt.T, sf.TrustedFrom)
		}
	}
}
