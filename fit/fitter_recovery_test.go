package fit_test

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

// randomModel returns a preset model whose coefficients are each scaled
// by an independent factor in [0.5, 1.5) (seeded), plus single-site Y
// terms with coefficient y (0 for none) to make H complex.
func randomModel(t testing.TB, spec, preset string, values map[string]float64, y float64, seed uint64) (*lattice.Lattice, []lattice.Term) {
	t.Helper()
	lat, err := lattice.Open(spec)
	if err != nil {
		t.Fatal(err)
	}
	terms, err := model.Preset(lat, preset, values)
	if err != nil {
		t.Fatal(err)
	}
	if y != 0 {
		for s := 0; s < lat.NumSites(); s++ {
			terms = append(terms, lattice.Term{Pauli: "Y", Sites: []int{s}, Coeff: y})
		}
	}
	rng := rand.New(rand.NewPCG(seed, 99))
	for k := range terms {
		terms[k].Coeff *= 0.5 + rng.Float64()
	}
	return lat, terms
}

// scaleToBeta returns beta with beta*max|lambda| = target.
func scaleToBeta(terms []lattice.Term, target float64) float64 {
	var m float64
	for _, t := range terms {
		m = math.Max(m, math.Abs(t.Coeff))
	}
	return target / m
}

// exactData returns the exact expectations of every term in the Gibbs
// state of the whole system (dense exact diagonalisation, package
// validate: an independent computation that uses no cluster expansion).
func exactData(t testing.TB, n int, terms []lattice.Term, beta float64) (*cluster.Thermal, []float64) {
	t.Helper()
	th, err := validate.ExactThermal(n, terms, beta)
	if err != nil {
		t.Fatal(err)
	}
	ops := make([]cluster.PauliString, len(terms))
	for k, term := range terms {
		if ops[k], err = cluster.ParsePauli(term.Pauli, term.Sites); err != nil {
			t.Fatal(err)
		}
	}
	vals := make([]float64, len(terms))
	th.ExpectAll(ops, vals)
	return th, vals
}

func exactEstimates(vals []float64) *fit.Estimates {
	return &fit.Estimates{Values: vals, Stderr: make([]float64, len(vals)), Shots: make([]int64, len(vals))}
}

// template returns the terms with zero coefficients.
func template(terms []lattice.Term) []lattice.Term {
	out := make([]lattice.Term, len(terms))
	for k, t := range terms {
		t.Coeff = 0
		out[k] = t
	}
	return out
}

func maxError(res *fit.Result, truth []lattice.Term) float64 {
	var m float64
	for k, t := range truth {
		m = math.Max(m, math.Abs(res.Coeffs[k]-t.Coeff))
	}
	return m
}

// Noiseless recovery: data are exact expectations from dense exact
// diagonalisation of the whole lattice (validate.ExactThermal), so the
// only error left is the truncation of the expansion. When the order
// reaches the number of sites the expansion is exact and the fit must
// return the true coefficients to the Newton tolerance; below, the error
// must not exceed the truncation error the fit itself reports.
//
// Measured (seeds as below): 2x3 square at order 6 recovers to 4.8e-10
// (real and complex H), chain of 8 at order 8 to 1.7e-11; 3x3 square at
// order 6, beta max|lambda| = 0.3: max error 8.9e-4 (XXZ+fields) and
// 1.1e-3 (with Y fields), against reported truncation errors 2.2e-2 and
// 2.8e-2 (the larger of the changes 4->5 and 5->6: conservative).
func TestFitRecoversExactData(t *testing.T) {
	xxz := map[string]float64{"Jxy": 1, "Jz": 0.7, "hz": 0.5, "hx": 0.3}
	tests := []struct {
		name   string
		spec   string
		y      float64
		order  int
		seed   uint64
		exact  bool    // order covers the lattice
		maxErr float64 // bound on the recovery error when not exact
	}{
		{"square 2x3 XXZ+fields, exact order", "square:2x3", 0, 6, 1, true, 0},
		{"square 2x3 with Y fields, exact order", "square:2x3", 0.4, 6, 2, true, 0},
		{"chain 8, exact order", "chain:8", 0.2, 8, 3, true, 0},
		{"square 3x3 XXZ+fields, order 6", "square:3x3", 0, 6, 4, false, 5e-3},
		{"square 3x3 with Y fields, order 6", "square:3x3", 0.4, 6, 5, false, 5e-3},
	}
	for _, tt := range tests {
		// The order-(L-1) curvature (used on large lattices) must reach
		// the same answers to the same tolerance.
		for _, curv := range []fit.Curvature{fit.CurvatureAuto, fit.CurvatureLower} {
			t.Run(tt.name+", curvature "+curv.String(), func(t *testing.T) {
				lat, terms := randomModel(t, tt.spec, "xxz", xxz, tt.y, tt.seed)
				beta := scaleToBeta(terms, 0.3)
				_, vals := exactData(t, lat.NumSites(), terms, beta)
				res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(terms), Data: exactEstimates(vals), Beta: beta}, fit.Options{Order: tt.order, Curvature: curv})
				if err != nil {
					t.Fatal(err)
				}
				if !res.Converged {
					t.Fatalf("not converged: %s", res.Reason)
				}
				got := maxError(res, terms)
				t.Logf("max error %.3g, truncation estimate %.3g (orders %v), %d evaluations", got, res.Truncation.Error, res.Truncation.Orders, res.Evaluations)
				if tt.exact {
					if !res.Truncation.Exact || got > 1e-8 {
						t.Errorf("exact order: max error %v (want <= 1e-8), truncation exact %v", got, res.Truncation.Exact)
					}
					return
				}
				if !res.Truncation.Known || got > res.Truncation.Error || got > tt.maxErr {
					t.Errorf("max error %v; want <= reported truncation error %v and <= %v", got, res.Truncation.Error, tt.maxErr)
				}
			})
		}
	}
}

// Without beta the fit determines beta*lambda: the products must come out
// as the true beta times the true coefficients (exact order, exact data).
func TestFitUnknownBeta(t *testing.T) {
	lat, terms := randomModel(t, "chain:6", "xxz", map[string]float64{"Jxy": 1, "Jz": 0.5, "hz": 0.4, "hx": 0.2}, 0, 7)
	beta := scaleToBeta(terms, 0.3)
	_, vals := exactData(t, lat.NumSites(), terms, beta)
	res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(terms), Data: exactEstimates(vals)}, fit.Options{Order: 6})
	if err != nil || !res.Converged {
		t.Fatalf("err %v, result %+v", err, res)
	}
	if res.BetaKnown || res.Beta != 1 {
		t.Errorf("BetaKnown %v, Beta %v; want false, 1", res.BetaKnown, res.Beta)
	}
	for k, term := range terms {
		if d := math.Abs(res.Coeffs[k] - beta*term.Coeff); d > 1e-8 {
			t.Errorf("%s: fitted %v, want beta*lambda = %v", term.Key(), res.Coeffs[k], beta*term.Coeff)
		}
	}
}

// A 12-site open chain with random XY couplings and Z fields, a free-
// fermion model: its exact expectations come from the Jordan–Wigner
// solution (validate.FreeFermionChain; Lieb, Schultz, Mattis 1961), an
// independent method that needs neither diagonalisation of 2^12 states nor
// clusters. In one dimension the expansion converges fast (measured at
// the true coefficients: <E> off by 1e-8 at order 5, 7e-11 at order 6), so
// at order 5 the recovery error must be below the reported truncation
// error and small.
func TestFitRecoversFreeFermionChain(t *testing.T) {
	lat, terms := randomModel(t, "chain:12", "xy", map[string]float64{"Jx": 1, "Jy": 0.6, "hz": 0.5}, 0, 11)
	beta := scaleToBeta(terms, 0.3)
	ff, err := validate.NewFreeFermionChain(lat.NumSites(), terms, beta)
	if err != nil {
		t.Fatal(err)
	}
	vals := make([]float64, len(terms))
	for k, term := range terms {
		op, err := cluster.ParsePauli(term.Pauli, term.Sites)
		if err != nil {
			t.Fatal(err)
		}
		if vals[k], err = ff.Expect(op); err != nil {
			t.Fatal(err)
		}
	}
	res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(terms), Data: exactEstimates(vals), Beta: beta}, fit.Options{Order: 5})
	if err != nil {
		t.Fatal(err)
	}
	if !res.Converged {
		t.Fatalf("not converged: %s", res.Reason)
	}
	got := maxError(res, terms)
	t.Logf("max error %.3g, truncation estimate %.3g (orders %v)", got, res.Truncation.Error, res.Truncation.Orders)
	if !res.Truncation.Known || got > res.Truncation.Error || got > 1e-6 {
		t.Errorf("max error %v; want <= reported truncation error %v and <= 1e-6", got, res.Truncation.Error)
	}
}
