package fit_test

import (
	"strings"
	"testing"
	"time"

	"warmfit/cluster"
	"warmfit/fit"
)

// When the order policy's ceiling stops the automatic ladder before the
// truncation target is met, the result says so in a note (review finding
// 6: the fit stopped "without saying why"). Data: the order-8 expansion
// of a 14-site chain (common practice: a converged higher order stands
// in for the truth), too many sites to pass the ceiling to the exact
// order.
func TestFitAutoOrderSaysWhenCeilingStops(t *testing.T) {
	lat, terms := randomModel(t, "chain:14", "xxz", map[string]float64{"Jxy": 1, "Jz": 0.7, "hz": 0.5, "hx": 0.4}, 0, 3)
	beta := scaleToBeta(terms, 0.6)
	exp, err := cluster.NewExpansion(lat, terms)
	if err != nil {
		t.Fatal(err)
	}
	coeffs := make([]float64, len(terms))
	for k, term := range terms {
		coeffs[k] = term.Coeff
	}
	ref, err := exp.Evaluate(coeffs, beta, cluster.Options{Order: 8})
	if err != nil {
		t.Fatal(err)
	}
	policy := cluster.OrderPolicy{Start: 2, Ceiling: 4, MaxWork: cluster.DefaultAutoWork}
	res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(terms), Data: gaussianData(ref.Expect[7], 1e-5, 4), Beta: beta},
		fit.Options{Budget: time.Hour, Policy: policy})
	if err != nil || !res.Converged {
		t.Fatalf("%v %+v", err, res)
	}
	if res.Truncation.OK {
		t.Skipf("the truncation target was met at order %d: the ceiling did not act", res.Order)
	}
	notes := strings.Join(res.Notes, "\n")
	if res.Order != 4 || !strings.Contains(notes, "stopped at order 4") || !strings.Contains(notes, "above the automatic ceiling 4") {
		t.Errorf("order %d, notes:\n%s", res.Order, notes)
	}
}
