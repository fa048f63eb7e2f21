package bulk

import (
	"math"
	"testing"
)

func expansionChain(t testing.TB) *ExpansionModel {
	t.Helper()
	m, err := NewExpansionModel("chain", 12, ExpansionOptions{})
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
