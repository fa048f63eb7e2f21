package stationary

import (
	"math"
	"math/rand/v2"
	"testing"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/lattice"
	"warmfit/lattice/model"
	"warmfit/validate"
)

// testModel builds a preset on a lattice spec with seeded disorder.
func testModel(t testing.TB, spec, preset string, values map[string]float64, disorder float64, seed uint64) (*lattice.Lattice, []lattice.Term) {
	t.Helper()
	l, err := lattice.Open(spec)
	if err != nil {
		t.Fatal(err)
	}
	terms, err := model.Preset(l, preset, values)
	if err != nil {
		t.Fatal(err)
	}
	if disorder > 0 {
		model.AddDisorder(terms, disorder, seed)
	}
	return l, terms
}

func coeffs(terms []lattice.Term) []float64 {
	out := make([]float64, len(terms))
	for k, t := range terms {
		out[k] = t.Coeff
	}
	return out
}

// exactStrings returns tr(rho P) for every string of sys in the state th.
func exactStrings(t testing.TB, th *cluster.Thermal, strs []lattice.Term) []float64 {
	t.Helper()
	out := make([]float64, len(strs))
	for j, s := range strs {
		p, err := cluster.TermPauli(s)
		if err != nil {
			t.Fatal(err)
		}
		out[j] = th.Expect(p)
	}
	return out
}

// sampleEstimates draws shots per basis from sampler in the given bases
// and returns the estimates of sys.Strings with all covariances.
func sampleEstimates(t testing.TB, sampler *validate.Sampler, sys *System, bases []string, shots int, seed uint64) *fit.Estimates {
	t.Helper()
	est, err := NewEstimator(sys, fit.CovarianceOptions{AllPairs: true})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(seed, 17))
	for _, b := range bases {
		counts, err := sampler.Sample(b, shots, rng)
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range counts {
			if err := est.Add(b, c.Outcome, int64(c.Count)); err != nil {
				t.Fatal(err)
			}
		}
	}
	res, err := est.Result()
	if err != nil {
		t.Fatal(err)
	}
	return res
}

// directionError is |d/|d| - truth/|truth|| with the sign of d chosen to
// match (parameter space).
func directionError(d, truth []float64) float64 {
	var nd, nt, dot float64
	for i := range d {
		nd += d[i] * d[i]
		nt += truth[i] * truth[i]
		dot += d[i] * truth[i]
	}
	nd, nt = math.Sqrt(nd), math.Sqrt(nt)
	sign := 1.0
	if dot < 0 {
		sign = -1
	}
	var e float64
	for i := range d {
		x := sign*d[i]/nd - truth[i]/nt
		e += x * x
	}
	return math.Sqrt(e)
}
