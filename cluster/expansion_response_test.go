package cluster_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"warmfit/cluster"
)

// An evaluation at order L with ResponseOrder c < L returns the
// expectations of every order and the response of order c: the
// derivative of the order-c expectations, equal to the response of an
// evaluation at order c (to rounding: clusters may be visited in another
// order) and to central finite differences of Expect[c-1] (common
// practice).
func TestExpansionResponseAtLowerOrder(t *testing.T) {
	l := mustLattice(t, "square:4x4")
	rng := rand.New(rand.NewPCG(41, 42))
	terms := randomTerms(l, 0.5, false, rng)
	exp, err := cluster.NewExpansion(l, terms)
	if err != nil {
		t.Fatal(err)
	}
	const beta, L, h = 0.4, 5, 1e-5
	coeffs := coeffsOf(terms)
	for _, c := range []int{2, 3, 4} {
		res, err := exp.Evaluate(coeffs, beta, cluster.Options{Order: L, Response: true, ResponseOrder: c})
		if err != nil {
			t.Fatal(err)
		}
		if res.ResponseOrder != c {
			t.Fatalf("ResponseOrder %d, want %d", res.ResponseOrder, c)
		}
		ref, err := exp.Evaluate(coeffs, beta, cluster.Options{Order: c, Response: true})
		if err != nil {
			t.Fatal(err)
		}
		if res.Response.NNZ() != ref.Response.NNZ() {
			t.Fatalf("order %d: %d stored entries, the order-%d evaluation has %d", c, res.Response.NNZ(), c, ref.Response.NNZ())
		}
		for i := 0; i < len(terms); i++ {
			ref.Response.DoRow(i, func(j int, v float64) {
				if d := math.Abs(res.Response.At(i, j) - v); d > 1e-13 {
					t.Errorf("order %d: response (%d,%d) differs by %.3g from the order-%d evaluation", c, i, j, d, c)
				}
			})
		}
		for _, j := range []int{0, len(terms) / 3, len(terms) - 1} {
			plus := append([]float64(nil), coeffs...)
			minus := append([]float64(nil), coeffs...)
			plus[j] += h
			minus[j] -= h
			rp, err1 := exp.Evaluate(plus, beta, cluster.Options{Order: L})
			rm, err2 := exp.Evaluate(minus, beta, cluster.Options{Order: L})
			if err1 != nil || err2 != nil {
				t.Fatal(err1, err2)
			}
			for k := range terms {
				fd := (rp.Expect[c-1][k] - rm.Expect[c-1][k]) / (2 * h)
				if got := res.Response.At(k, j); math.Abs(got-fd) > 1e-6 {
					t.Errorf("order %d: d<%s>/d lambda(%s) = %.9g, finite difference %.9g", c, terms[k].Key(), terms[j].Key(), got, fd)
				}
			}
		}
	}
	if _, err := exp.Evaluate(coeffs, beta, cluster.Options{Order: 3, Response: true, ResponseOrder: 4}); err == nil {
		t.Error("a response order above the expansion order was accepted")
	}
}
