package stationary

import (
	"fmt"
	"math"
	"testing"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/lattice"
	"warmfit/validate"
)

// exactEvaluator evaluates term expectations by dense exact
// diagonalisation of the whole system (validate.ExactThermal).
func exactEvaluator(n int, terms []lattice.Term) Evaluator {
	ops, err := cluster.TermPaulis(terms)
	if err != nil {
		panic(err)
	}
	return func(lambda []float64, beta float64) ([]float64, error) {
		tt := make([]lattice.Term, len(terms))
		for k, t := range terms {
			t.Coeff = lambda[k]
			tt[k] = t
		}
		th, err := validate.ExactThermal(n, tt, beta)
		if err != nil {
			return nil, err
		}
		out := make([]float64, len(ops))
		th.ExpectAll(ops, out)
		return out, nil
	}
}

type scenario struct {
	name         string
	spec, preset string
	values       map[string]float64
	disorder     float64
	beta         float64
	// u1 sets every YY coupling to its bond's XX coupling after the
	// disorder, so that total Z is conserved.
	u1 bool
	// tied makes the couplings uniform and tied (groups Jxy for XX and
	// YY, Jz for ZZ), values from the preset.
	tied bool
	// far adds the probes on pairs at distance two.
	far bool
	// pairDist probes every pair within that distance (SystemOptions.PairDistance).
	pairDist int
}

// run samples shots per basis (covering:3 bases) and solves.
func (sc scenario) run(t testing.TB, shots int, seed uint64) (*System, *fit.Estimates, *Direction, error) {
	t.Helper()
	l, terms := testModel(t, sc.spec, sc.preset, sc.values, sc.disorder, 11)
	if sc.u1 {
		tieXY(terms)
	}
	if sc.tied {
		for k := range terms {
			switch terms[k].Pauli {
			case "XX", "YY":
				terms[k].Coeff, terms[k].Group = sc.values["Jxy"], "Jxy"
			case "ZZ":
				terms[k].Coeff, terms[k].Group = sc.values["Jz"], "Jz"
			}
		}
	}
	n := l.NumSites()
	sys, err := NewSystemWith(n, terms, SystemOptions{FarPairs: sc.far, PairDistance: sc.pairDist})
	if err != nil {
		t.Fatal(err)
	}
	bases, _, err := fit.SchemeBases("covering:3", n, terms, 1)
	if err != nil {
		t.Fatal(err)
	}
	sampler := cachedSampler(t, sc, n, terms)
	est := sampleEstimates(t, sampler, sys, bases, shots, seed)
	d, err := Solve(sys, est, Options{})
	return sys, est, d, err
}

var (
	samplers = map[string]*validate.Sampler{}
	spectra  = map[string]*cluster.Spectrum{}
)

// cachedSampler samples the scenario's Gibbs state; the spectrum (dense
// ED, minutes at 12 qubits) is shared by scenarios that differ only in
// beta.
func cachedSampler(t testing.TB, sc scenario, n int, terms []lattice.Term) *validate.Sampler {
	key := sc.name
	if s, ok := samplers[key]; ok {
		return s
	}
	th, err := cluster.NewThermal(cachedSpectrum(t, fmt.Sprintf("%s %s %v %g %v %v", sc.spec, sc.preset, sc.values, sc.disorder, sc.u1, sc.tied), n, terms), sc.beta)
	if err != nil {
		t.Fatal(err)
	}
	s := validate.NewSamplerFromThermal(th)
	samplers[key] = s
	return s
}

// cachedSpectrum diagonalises the Hamiltonian of terms once per key.
func cachedSpectrum(t testing.TB, key string, n int, terms []lattice.Term) *cluster.Spectrum {
	if s, ok := spectra[key]; ok {
		return s
	}
	h, err := cluster.NewHamiltonian(n, terms)
	if err != nil {
		t.Fatal(err)
	}
	s, err := cluster.Diagonalize(h)
	if err != nil {
		t.Fatal(err)
	}
	spectra[key] = s
	return s
}

// TestFixCalibratedAndMatched: one calibrated coefficient, or the known
// beta with a thermal match (exact evaluator), both recover the
// coefficients; the output says which was used.
func TestFixCalibratedAndMatched(t *testing.T) {
	sc := scenario{name: "tfim8", spec: "chain:8", preset: "tfim", values: map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}, disorder: 0.3, beta: 0.7}
	sys, est, d, err := sc.run(t, 20000, 1)
	if err != nil {
		t.Fatal(err)
	}
	truth := coeffs(sys.Terms())
	name := sys.Params().Names[0]
	for _, g := range []Gauge{
		{Calibrated: map[string]float64{name: truth[0]}},
		{Beta: sc.beta, Evaluate: exactEvaluator(sys.NumQubits(), sys.Terms())},
	} {
		res, err := Fix(sys, est, d, g, Options{})
		if err != nil {
			t.Fatal(err)
		}
		var worst, pull2 float64
		for k := range truth {
			diff := res.Lambda[k] - truth[k]
			worst = max(worst, math.Abs(diff))
			if res.StdErr[k] > 0 {
				pull2 += diff * diff / (res.StdErr[k] * res.StdErr[k])
			}
		}
		t.Logf("%s: largest error %.3g, pull rms %.3g", res.Fixed, worst, math.Sqrt(pull2/float64(len(truth))))
		if worst > 0.1 {
			t.Errorf("%s: largest coefficient error %g", res.Fixed, worst)
		}
		if res.Fixed == "" {
			t.Errorf("the result does not say how the scale was fixed")
		}
	}
}

// tieXY sets the YY coefficient of every bond to its XX coefficient.
func tieXY(terms []lattice.Term) {
	xx := map[[2]int]float64{}
	for _, t := range terms {
		if t.Pauli == "XX" {
			xx[[2]int{t.Sites[0], t.Sites[1]}] = t.Coeff
		}
	}
	for k, t := range terms {
		if c, ok := xx[[2]int{t.Sites[0], t.Sites[len(t.Sites)-1]}]; ok && t.Pauli == "YY" {
			terms[k].Coeff = c
		}
	}
}
