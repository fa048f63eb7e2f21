package cluster_test

import (
	"math"
	"strings"
	"testing"
	"time"

	"warmfit/cluster"
)

// The automatic order on a transverse-field Ising ring at high
// temperature: the first order tried already converges, and its energy
// per site agrees with the free-fermion solution (Pfeuty 1970) to the
// reported truncation error.
func TestChooseOrderConvergedChain(t *testing.T) {
	l := mustLattice(t, "chain:20:periodic")
	terms := transverseIsingTerms(l, 1)
	exp, err := cluster.NewExpansion(l, terms)
	if err != nil {
		t.Fatal(err)
	}
	p := cluster.NewOrderPolicy(l, terms)
	if p.Start != 6 || p.Ceiling != 12 {
		t.Fatalf("chain policy %+v, want start 6, ceiling 12", p)
	}
	res, choice, err := exp.ChooseOrder(coeffsOf(terms), 0.5, 1e-6, p, cluster.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if choice.ByBudget || !strings.Contains(choice.Reason, "every value is trusted") {
		t.Fatalf("choice %+v", choice)
	}
	got := res.LogZTotal() / float64(l.NumSites())
	if want := pfeutyLogZ(0.5, 1, 1); math.Abs(got-want) > 1e-6 {
		t.Errorf("order %d: ln Z/N = %.12f, Pfeuty %.12f", choice.Order, got, want)
	}
}

// Too cold for the expansion: the rise stops at the work limit, with a
// reason that names the flag to go further, the same on every run and
// machine (common practice for reproducible defaults); a tiny wall-clock
// budget stops it earlier and says so.
func TestChooseOrderStopsByWorkAndBudget(t *testing.T) {
	l := mustLattice(t, "square:5x5")
	terms := transverseIsingTerms(l, 1)
	exp, err := cluster.NewExpansion(l, terms)
	if err != nil {
		t.Fatal(err)
	}
	p := cluster.NewOrderPolicy(l, terms)
	_, w5 := exp.EstimateWork(5)
	p.MaxWork = w5
	coeffs := coeffsOf(terms)
	_, a, err := exp.ChooseOrder(coeffs, 1, 1e-6, p, cluster.Options{})
	if err != nil {
		t.Fatal(err)
	}
	_, b, err := exp.ChooseOrder(coeffs, 1, 1e-6, p, cluster.Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	if a.Order != 5 || b.Order != 5 || a.ByBudget || !strings.Contains(a.Reason, "--order 6") {
		t.Fatalf("choices %+v and %+v, want order 5 stopped by the work limit", a, b)
	}
	if got := p.Highest(exp); got != 5 {
		t.Errorf("Highest = %d, want 5", got)
	}
	p.Budget = time.Nanosecond
	_, c, err := exp.ChooseOrder(coeffs, 1, 1e-6, p, cluster.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if c.Order != p.Start || !c.ByBudget || !strings.Contains(c.Reason, "depends on the machine") {
		t.Errorf("budget choice %+v", c)
	}
}
