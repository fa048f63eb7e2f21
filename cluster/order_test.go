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

// The automatic order rests on the series and the work estimate only: a
// clock running a thousand times slow (each reading an hour later) gives
// the same order as the real one when no Budget is set, and the clock is
// not even read; with a Budget it stops the rise and says that the stop
// depends on the machine (common practice for reproducible defaults).
func TestChooseOrderIndependentOfClock(t *testing.T) {
	l := mustLattice(t, "square:5x5")
	terms := transverseIsingTerms(l, 1)
	exp, err := cluster.NewExpansion(l, terms)
	if err != nil {
		t.Fatal(err)
	}
	coeffs := coeffsOf(terms)
	p := cluster.NewOrderPolicy(l, terms)
	_, p.MaxWork = exp.EstimateWork(6)
	_, quick, err := exp.ChooseOrder(coeffs, 0.4, 1e-5, p, cluster.Options{})
	if err != nil {
		t.Fatal(err)
	}
	reads := 0
	fake := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
	p.Clock = func() time.Time { reads++; fake = fake.Add(time.Hour); return fake }
	_, slow, err := exp.ChooseOrder(coeffs, 0.4, 1e-5, p, cluster.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if slow.Order != quick.Order || slow.Reason != quick.Reason || slow.ByBudget || reads != 0 {
		t.Errorf("slow clock: order %d (%s), real clock: order %d (%s); clock read %d times", slow.Order, slow.Reason, quick.Order, quick.Reason, reads)
	}
	if quick.Order <= p.Start {
		t.Fatalf("the test needs a rise: order %d from start %d (%s)", quick.Order, p.Start, quick.Reason)
	}
	p.Budget = 10 * time.Minute
	_, guarded, err := exp.ChooseOrder(coeffs, 0.4, 1e-5, p, cluster.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if guarded.Order != p.Start || !guarded.ByBudget || !strings.Contains(guarded.Reason, "depends on the machine") {
		t.Errorf("budget with a slow clock: %+v", guarded)
	}
}

// The prediction is positive, grows with the order (about 8-fold per
// order once the eigensolver dominates) and costs the response about
// 4.5 times more (the measured ratio; common practice for a calibrated
// cost model: monotone in the work).
func TestPredictEvaluationGrows(t *testing.T) {
	l := mustLattice(t, "square:6x6")
	terms := transverseIsingTerms(l, 1)
	exp, err := cluster.NewExpansion(l, terms)
	if err != nil {
		t.Fatal(err)
	}
	prev := time.Duration(0)
	for L := 2; L <= 8; L++ {
		p := exp.PredictEvaluation(L, false)
		if p <= prev {
			t.Errorf("order %d: predicted %v, not above order %d's %v", L, p, L-1, prev)
		}
		if r := float64(exp.PredictEvaluation(L, true)) / float64(p); math.Abs(r-4.5) > 1e-4 {
			t.Errorf("order %d: response costs %.3g times the forward pass, want 4.5", L, r)
		}
		prev = p
	}
}
