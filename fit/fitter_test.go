package fit_test

import (
	"time"

	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/lattice"
	"warmfit/lattice/model"
)

// expansionData returns the order-L expansion expectations of the model:
// a fit at the same order has the model's coefficients as exact solution,
// so only the noise added to the data remains.
func expansionData(t testing.TB, lat *lattice.Lattice, terms []lattice.Term, beta float64, order int) []float64 {
	t.Helper()
	exp, err := cluster.NewExpansion(lat, terms)
	if err != nil {
		t.Fatal(err)
	}
	coeffs := make([]float64, len(terms))
	for k, term := range terms {
		coeffs[k] = term.Coeff
	}
	res, err := exp.Evaluate(coeffs, beta, cluster.Options{Order: order})
	if err != nil {
		t.Fatal(err)
	}
	return res.Expect[order-1]
}

// gaussianData adds independent N(0, sigma^2) noise (seeded) to values and
// reports sigma as their standard error.
func gaussianData(values []float64, sigma float64, seed uint64) *fit.Estimates {
	rng := rand.New(rand.NewPCG(seed, 5))
	est := &fit.Estimates{Values: make([]float64, len(values)), Stderr: make([]float64, len(values)), Shots: make([]int64, len(values))}
	for k, v := range values {
		est.Values[k] = v + sigma*rng.NormFloat64()
		est.Stderr[k] = sigma
	}
	return est
}

func tiedXXZ(t testing.TB, spec string, disorder float64) (*lattice.Lattice, []lattice.Term) {
	t.Helper()
	lat, err := lattice.Open(spec)
	if err != nil {
		t.Fatal(err)
	}
	terms, params, err := model.PresetTerms(lat, "xxz", map[string]float64{"Jxy": 0.5, "Jz": 0.35, "hz": 0.25, "hx": 0.15})
	if err != nil {
		t.Fatal(err)
	}
	model.AddDisorder(terms, disorder, 3)
	model.TieUniform(terms, params)
	return lat, terms
}

// Goodness of fit of tied groups: with data from a uniform model the
// residual chi-square follows chi^2(#terms - #params) (Pearson; the fit
// is linear to first order in the noise), so its p-value is not tiny; with
// disordered truth the uniform model is wrong and the chi-square must say
// so, with a warning.
func TestFitTiedChiSquare(t *testing.T) {
	const beta, order, sigma = 0.5, 4, 2e-3
	for _, tt := range []struct {
		disorder float64
		wrong    bool
	}{{0, false}, {0.2, true}} {
		lat, terms := tiedXXZ(t, "square:4x4", tt.disorder)
		data := gaussianData(expansionData(t, lat, terms, beta, order), sigma, 9)
		res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(terms), Data: data, Beta: beta}, fit.Options{Order: order, SkipTruncation: true})
		if err != nil || !res.Converged {
			t.Fatalf("disorder %v: %v %+v", tt.disorder, err, res)
		}
		if want := len(terms) - 4; res.Dof != want {
			t.Errorf("dof %d, want %d terms - 4 groups = %d", res.Dof, len(terms), want)
		}
		warned := slices.ContainsFunc(res.Warnings, func(w string) bool { return strings.Contains(w, "chi2/dof") })
		t.Logf("disorder %v: chi2/dof = %.3g over %d, p = %.3g", tt.disorder, res.Chi2/float64(res.Dof), res.Dof, res.Chi2P)
		if tt.wrong != (res.Chi2P < 1e-3) || tt.wrong != warned {
			t.Errorf("disorder %v: p = %v, warning %v; want a wrong model detected: %v", tt.disorder, res.Chi2P, warned, tt.wrong)
		}
	}
}

// Structure learning: a template of every 2-local Pauli string on a 2x3
// lattice (81 terms), data from an XXZ model with fields (33 non-zero
// terms) by exact diagonalisation plus Gaussian noise. Every true term
// lies tens of standard errors from zero and must be flagged; among the
// 48 zero terms the Benjamini–Hochberg rule at q = 0.05 allows on average
// about q x 33 / (1 - q) ~ 2 false flags; more than 5 would be a 1-in-100
// event (Poisson tail, common practice).
func TestFitStructureLearning(t *testing.T) {
	lat, truth := randomModel(t, "square:2x3", "xxz", map[string]float64{"Jxy": 1, "Jz": 0.7, "hz": 0.5, "hx": 0.4}, 0, 41)
	beta := scaleToBeta(truth, 0.3)
	all, err := model.Preset(lat, "all2local", nil)
	if err != nil {
		t.Fatal(err)
	}
	full := template(all)
	index := map[string]int{}
	for k, term := range truth {
		index[term.Key()] = k
	}
	for k := range full {
		if j, ok := index[full[k].Key()]; ok {
			full[k].Coeff = truth[j].Coeff
		}
	}
	_, vals := exactData(t, lat.NumSites(), full, beta)
	res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(all), Data: gaussianData(vals, 2e-3, 17), Beta: beta}, fit.Options{Order: lat.NumSites()})
	if err != nil || !res.Converged || res.Significance == nil {
		t.Fatalf("%v %+v", err, res)
	}
	falseFlags, missed := 0, 0
	for k, term := range full {
		sig := res.Significance.Significant[res.Params.Of[k]]
		switch {
		case term.Coeff != 0 && !sig:
			missed++
		case term.Coeff == 0 && sig:
			falseFlags++
		}
	}
	t.Logf("%d flagged, %d false, %d missed", res.Significance.Count, falseFlags, missed)
	if missed > 0 || falseFlags > 5 {
		t.Errorf("%d true terms missed, %d false flags (want 0 and <= 5)", missed, falseFlags)
	}
}

// Bad input is refused with an error naming the problem.
func TestFitBadInput(t *testing.T) {
	lat, terms := randomModel(t, "chain:4", "xxz", map[string]float64{"Jxy": 1, "Jz": 0.5, "hz": 0.3}, 0, 1)
	good := func() *fit.Estimates { return exactEstimates(make([]float64, len(terms))) }
	tests := []struct {
		name string
		prob func() *fit.Problem
		opt  fit.Options
		want string
	}{
		{"short data", func() *fit.Problem {
			d := good()
			d.Values = d.Values[1:]
			return &fit.Problem{Lattice: lat, Terms: terms, Data: d, Beta: 1}
		}, fit.Options{Order: 3}, "do not match"},
		{"missing term", func() *fit.Problem {
			d := good()
			d.Missing = []int{2}
			return &fit.Problem{Lattice: lat, Terms: terms, Data: d, Beta: 1}
		}, fit.Options{Order: 3}, "have no data"},
		{"value at the edge", func() *fit.Problem {
			d := good()
			d.Values[0] = 1
			return &fit.Problem{Lattice: lat, Terms: terms, Data: d, Beta: 1}
		}, fit.Options{Order: 3}, "not inside (-1, 1)"},
		{"NaN value", func() *fit.Problem {
			d := good()
			d.Values[1] = math.NaN()
			return &fit.Problem{Lattice: lat, Terms: terms, Data: d, Beta: 1}
		}, fit.Options{Order: 3}, "not usable"},
		{"negative beta", func() *fit.Problem { return &fit.Problem{Lattice: lat, Terms: terms, Data: good(), Beta: -1} }, fit.Options{Order: 3}, "beta"},
		{"order too small", func() *fit.Problem { return &fit.Problem{Lattice: lat, Terms: terms, Data: good(), Beta: 1} }, fit.Options{Order: 1}, "at least 2"},
	}
	for _, tt := range tests {
		_, err := fit.Fit(tt.prob(), tt.opt)
		if err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("%s: err = %v, want mention of %q", tt.name, err, tt.want)
		}
	}
}

// A fit stopped early is not an error but must never claim success.
func TestFitNotConverged(t *testing.T) {
	lat, terms := tiedXXZ(t, "square:3x3", 0)
	data := gaussianData(expansionData(t, lat, terms, 0.5, 4), 1e-3, 2)
	res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(terms), Data: data, Beta: 0.5}, fit.Options{Order: 4, MaxIter: 1})
	if err != nil {
		t.Fatal(err)
	}
	if res.Converged || !strings.Contains(res.Reason, "Newton iterations") || res.ThetaStderr != nil {
		t.Errorf("converged %v, reason %q, stderr %v", res.Converged, res.Reason, res.ThetaStderr)
	}
	if len(res.Warnings) == 0 || !strings.Contains(res.Warnings[0], "did NOT converge") {
		t.Errorf("warnings %q", res.Warnings)
	}
}

// Results must not depend on the number of workers, bit for bit, on both
// error-bar paths (dense Cholesky and conjugate gradients).
func TestFitWorkerIndependence(t *testing.T) {
	lat, terms := randomModel(t, "square:4x4", "xxz", map[string]float64{"Jxy": 1, "Jz": 0.7, "hz": 0.5, "hx": 0.4}, 0, 8)
	beta := scaleToBeta(terms, 0.25)
	data := gaussianData(expansionData(t, lat, terms, beta, 4), 1e-3, 4)
	for _, dense := range []int{0, 1} {
		var first *fit.Result
		for _, w := range []int{1, 2} {
			res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(terms), Data: data, Beta: beta}, fit.Options{Order: 4, Workers: w, DenseLimit: dense, SkipTruncation: true})
			if err != nil || !res.Converged {
				t.Fatalf("%v %+v", err, res)
			}
			if first == nil {
				first = res
				continue
			}
			if !slices.Equal(first.Coeffs, res.Coeffs) || !slices.Equal(first.ThetaStderr, res.ThetaStderr) {
				t.Errorf("dense limit %d: results differ between 1 and 2 workers", dense)
			}
		}
	}
}

// Automatic order selection at high temperature: orders rise until the
// change between orders is below 0.1 x the statistical error, and the
// answer is then consistent with the truth within its error bars
// (Bonferroni over the terms at 1%: the normal quantile from
// gonum's distuv).
func TestFitAutoOrder(t *testing.T) {
	lat, terms := randomModel(t, "square:3x3", "xxz", map[string]float64{"Jxy": 1, "Jz": 0.7, "hz": 0.5, "hx": 0.4}, 0, 12)
	beta := scaleToBeta(terms, 0.15)
	_, vals := exactData(t, lat.NumSites(), terms, beta)
	res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(terms), Data: gaussianData(vals, 1e-3, 6), Beta: beta}, fit.Options{Budget: time.Hour})
	if err != nil || !res.Converged {
		t.Fatalf("%v %+v", err, res)
	}
	t.Logf("orders %v, steps %v, truncation %.3g vs target %.3g", res.Truncation.Orders, res.Truncation.Steps, res.Truncation.Error, res.Truncation.Target)
	if !res.Truncation.OK {
		t.Fatalf("truncation not reached: %+v, warnings %q", res.Truncation, res.Warnings)
	}
	zc := distuv.UnitNormal.Quantile(1 - 0.01/(2*float64(len(terms))))
	for k, term := range terms {
		if z := (res.Coeffs[k] - term.Coeff) / res.Terms[k].Stderr; math.Abs(z) > zc {
			t.Errorf("%s: z = %.2f beyond %.2f", term.Key(), z, zc)
		}
	}
}
