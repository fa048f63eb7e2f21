package bulk

import (
	"math"
	"math/rand/v2"
	"testing"
)

// synthSeries returns a series of quantity q at temperatures temps (or,
// for M, fields at temperature t0) with relative errors rel, values from c
// at its parameter values plus Gaussian noise from seed.
func synthSeries(t testing.TB, c *Candidate, q Quantity, xs []float64, t0, rel float64, seed uint64) *Series {
	t.Helper()
	s := &Series{Quantity: q, File: "synthetic", Column: q.String()}
	for i, x := range xs {
		pt := Point{T: x, Line: i + 2}
		if q == Magnetization {
			pt = Point{T: t0, H: x, Line: i + 2}
		}
		s.Points = append(s.Points, pt)
	}
	vals, _, err := c.Predict([]*Series{s})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(seed, 7))
	for i := range s.Points {
		sd := rel * math.Abs(vals[0][i])
		s.Points[i].Value = vals[0][i] + sd*rng.NormFloat64()
		s.Points[i].Stderr = sd
	}
	return s
}

func logGrid(lo, hi float64, n int) []float64 {
	out := make([]float64, n)
	for i := range out {
		out[i] = lo * math.Pow(hi/lo, float64(i)/float64(n-1))
	}
	return out
}

func mustCandidate(t testing.TB, name, lattice string, data []*Series, extra []string, start map[string]float64, fixed map[string]bool) *Candidate {
	t.Helper()
	fwd, err := NewPeriodicClusterModel(lattice, PeriodicClusterOptions{})
	if err != nil {
		t.Fatal(err)
	}
	c, err := NewCandidate(name, fwd, data, extra, false, start, fixed)
	if err != nil {
		t.Fatal(err)
	}
	return c
}

func TestFitRecoversChainSusceptibility(t *testing.T) {
	truth := map[string]float64{ParamJ: 100, ParamG: 2.1, ParamChi0: 1e-4, ParamImpurity: 0.01}
	proto := &Series{Quantity: Susceptibility}
	gen := mustCandidate(t, "truth", "chain", []*Series{proto}, nil, truth, nil)
	s := synthSeries(t, gen, Susceptibility, logGrid(40, 400, 40), 0, 0.005, 1)
	start := map[string]float64{ParamJ: 80, ParamG: 2, ParamChi0: 0, ParamImpurity: 0.001}
	c := mustCandidate(t, "chain", "chain", []*Series{s}, nil, start, nil)
	res, err := FitCandidate(c, []*Series{s}, FitOptions{})
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range res.Params {
		t.Logf("%s = %.6g +- %.3g (truth %g)", p.Name, p.Value, p.Stderr, truth[p.Name])
		if math.Abs(p.Value-truth[p.Name]) > 4*p.Stderr {
			t.Errorf("%s = %g +- %g, truth %g", p.Name, p.Value, p.Stderr, truth[p.Name])
		}
	}
	t.Logf("chi2 %.2f dof %d p %.3f iterations %d rounds %d warnings %q", res.Chi2, res.DOF, res.PValue, res.Iterations, len(res.Rounds), res.Warnings)
}
