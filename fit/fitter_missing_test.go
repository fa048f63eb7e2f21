package fit_test

import (
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"warmfit/fit"
	"warmfit/lattice"
)

// uniformTFIM returns the open transverse-field Ising chain
// H = J sum ZZ + h sum X on n sites with every ZZ bond in group "J" and
// every X field in group "h".
func uniformTFIM(t *testing.T, n int, J, h float64) (*lattice.Lattice, []lattice.Term) {
	t.Helper()
	lat, err := lattice.Open("chain:" + itoa(n))
	if err != nil {
		t.Fatal(err)
	}
	var terms []lattice.Term
	for i := 0; i+1 < n; i++ {
		terms = append(terms, lattice.Term{Pauli: "ZZ", Sites: []int{i, i + 1}, Coeff: J, Group: "J"})
	}
	for i := 0; i < n; i++ {
		terms = append(terms, lattice.Term{Pauli: "X", Sites: []int{i}, Coeff: h, Group: "h"})
	}
	return lat, terms
}

func itoa(n int) string {
	if n < 10 {
		return string(rune('0' + n))
	}
	return itoa(n/10) + itoa(n%10)
}

// dropTerms marks the listed terms as having no data, as
// EstimatesFromTable does for rows absent from a table.
func dropTerms(est *fit.Estimates, drop []int) {
	for _, k := range drop {
		est.Values[k], est.Stderr[k] = math.NaN(), math.NaN()
	}
	est.Missing = slices.Clone(drop)
}

// Terms without data but tied to a measured group: with exact data from
// dense exact diagonalisation of the whole chain (validate.ExactThermal,
// independent of the expansion) and order 8 = all sites (the expansion is
// then exact), moment matching on the measured members must return the
// true J and h to the Newton tolerance. Measured: errors 4.4e-16 (J) and
// 6.7e-16 (h) in 3 iterations.
func TestFitUnmeasuredGroupedTermsExact(t *testing.T) {
	const J, h = 1.0, -0.7
	lat, truth := uniformTFIM(t, 8, J, h)
	beta := scaleToBeta(truth, 0.3)
	_, vals := exactData(t, 8, truth, beta)
	est := exactEstimates(vals)
	// ZZ bonds 0 (edge) and 3; X fields on sites 0, 4 and 7 (terms 7+i).
	drop := []int{0, 3, 7, 11, 14}
	dropTerms(est, drop)
	prob := &fit.Problem{Lattice: lat, Terms: template(truth), Data: est, Beta: beta}
	res, err := fit.Fit(prob, fit.Options{Order: 8})
	if err != nil {
		t.Fatal(err)
	}
	// The order-7 Jacobian as curvature (used on large lattices) reaches
	// the same answer.
	lower, err := fit.Fit(prob, fit.Options{Order: 8, Curvature: fit.CurvatureLower})
	if err != nil || !lower.Converged {
		t.Fatalf("order-7 curvature: %v %+v", err, lower)
	}
	if e := maxError(lower, truth); e > 1e-8 {
		t.Errorf("order-7 curvature: max coefficient error %.3g, want <= 1e-8", e)
	}
	if !res.Converged {
		t.Fatalf("not converged: %s", res.Reason)
	}
	if e := maxError(res, truth); e > 1e-8 {
		t.Errorf("max coefficient error %.3g, want <= 1e-8 (exact data, exact expansion)", e)
	}
	t.Logf("J error %.2g, h error %.2g, %d iterations", res.Theta[0]-J, res.Theta[1]-h, res.Iterations)
	if !slices.Equal(res.Unmeasured, drop) {
		t.Errorf("Unmeasured = %v, want %v", res.Unmeasured, drop)
	}
	if !slices.ContainsFunc(res.Notes, func(s string) bool {
		return strings.Contains(s, "5 terms had no data and were fitted through their group")
	}) {
		t.Errorf("no note on the unmeasured terms: %q", res.Notes)
	}
	if rep := fit.NewReport(res, "fixed", fit.KindTable, "", 1e-3); rep.Unmeasured != 5 {
		t.Errorf("report counts %d unmeasured terms, want 5", rep.Unmeasured)
	}
}

// With Gaussian noise on the measured values, the pulls
// (theta - truth)/stderr of J and h must look standard normal (common
// practice: |pull| < 4 each, rms within [0.4, 1.8] over the seeds). The
// fit runs at the exact order, so there is no truncation bias.
// Measured over seeds 1..6: rms pull 0.89, max |pull| 1.55.
func TestFitUnmeasuredGroupedTermsPulls(t *testing.T) {
	if testing.Short() {
		t.Skip("six fits at order 8")
	}
	const J, h, sigma = 1.0, -0.7, 2e-3
	lat, truth := uniformTFIM(t, 8, J, h)
	beta := scaleToBeta(truth, 0.3)
	_, vals := exactData(t, 8, truth, beta)
	drop := []int{2, 5, 8, 12}
	var sum2, maxPull float64
	n := 0
	for seed := uint64(1); seed <= 6; seed++ {
		rng := rand.New(rand.NewPCG(seed, 7))
		est := exactEstimates(slices.Clone(vals))
		for k := range est.Values {
			est.Values[k] += sigma * rng.NormFloat64()
			est.Stderr[k] = sigma
		}
		dropTerms(est, drop)
		res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(truth), Data: est, Beta: beta}, fit.Options{Order: 8})
		if err != nil {
			t.Fatal(err)
		}
		if !res.Converged || res.ThetaStderr == nil {
			t.Fatalf("seed %d: converged %t, stderr %v, warnings %q", seed, res.Converged, res.ThetaStderr, res.Warnings)
		}
		for q, want := range []float64{J, h} {
			p := (res.Theta[q] - want) / res.ThetaStderr[q]
			sum2 += p * p
			maxPull = math.Max(maxPull, math.Abs(p))
			n++
		}
	}
	rms := math.Sqrt(sum2 / float64(n))
	t.Logf("rms pull %.3g, max |pull| %.3g over %d parameters", rms, maxPull, n)
	if maxPull > 4 || rms < 0.4 || rms > 1.8 {
		t.Errorf("pulls not standard normal: rms %.3g, max |pull| %.3g", rms, maxPull)
	}
}

// The automatic order selection, the truncation check, series convergence
// and significance run through the moment-matching solver too; the result
// must lie within four error bars plus the truncation error of the truth
// (common practice). Measured: orders 2..5, stderr 3.1e-3 and 2.8e-3.
func TestFitUnmeasuredGroupedTermsAutoOrder(t *testing.T) {
	const J, h, sigma = 1.0, -0.7, 2e-3
	lat, truth := uniformTFIM(t, 8, J, h)
	beta := scaleToBeta(truth, 0.3)
	_, vals := exactData(t, 8, truth, beta)
	rng := rand.New(rand.NewPCG(3, 7))
	est := exactEstimates(slices.Clone(vals))
	for k := range est.Values {
		est.Values[k] += sigma * rng.NormFloat64()
		est.Stderr[k] = sigma
	}
	dropTerms(est, []int{1, 9})
	res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(truth), Data: est, Beta: beta}, fit.Options{MaxOrder: 6})
	if err != nil {
		t.Fatal(err)
	}
	if !res.Converged || !res.Truncation.Known || len(res.Truncation.Orders) < 2 {
		t.Fatalf("converged %t, truncation %+v", res.Converged, res.Truncation)
	}
	if res.Series == nil || res.Significance == nil || res.ThetaStderr == nil {
		t.Fatalf("missing outputs: series %v, significance %v, stderr %v", res.Series != nil, res.Significance != nil, res.ThetaStderr)
	}
	// Four statistical errors: common-practice bound.
	for q, want := range []float64{J, h} {
		if d := math.Abs(res.Theta[q] - want); d > 4*res.ThetaStderr[q]+res.Truncation.Error {
			t.Errorf("parameter %d: error %.3g against stderr %.3g", q, d, res.ThetaStderr[q])
		}
	}
	t.Logf("orders %v, truncation %.3g, stderr %v", res.Truncation.Orders, res.Truncation.Error, res.ThetaStderr)
}

// Terms without data that share no coefficient with a measured term are
// refused, and the error names them.
func TestFitUnmeasuredTermsRefused(t *testing.T) {
	lat, truth := uniformTFIM(t, 4, 1, -0.7)
	truth = append(truth, lattice.Term{Pauli: "Z", Sites: []int{2}, Coeff: 0.1})
	truth[3].Group = "" // X on site 0, ungrouped
	beta := 0.3
	_, vals := exactData(t, 4, truth, beta)
	for _, tc := range []struct {
		name string
		drop []int
		want []string
	}{
		{"ungrouped", []int{0, 3, 7}, []string{"2 template terms", "X 0 (ungrouped)", "Z 2 (ungrouped)"}},
		{"whole group", []int{0, 1, 2}, []string{"3 template terms", `group "J" has no measured member`}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			est := exactEstimates(slices.Clone(vals))
			dropTerms(est, tc.drop)
			_, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(truth), Data: est, Beta: beta}, fit.Options{Order: 4})
			if err == nil {
				t.Fatal("no error")
			}
			for _, w := range tc.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q does not mention %q", err, w)
				}
			}
		})
	}
}
