package cluster

import (
	"fmt"
	"time"

	"warmfit/lattice"
)

// OrderPolicy is the one rule by which every command chooses the
// expansion order when the user does not fix it. The choice rests on
// machine-independent quantities — the convergence of the series and the
// estimated work in D^3 units — so the same data give the same order on
// any machine; the wall-clock Budget only guards against a run far
// slower than predicted, and when it acts the choice says so.
type OrderPolicy struct {
	// Start is the first order tried.
	Start int
	// Ceiling is the highest order chosen automatically, except that on a
	// lattice of at most MaxDenseQubits sites the order may rise past it
	// to the number of sites, where the expansion is exact, when that
	// order's work is at most ExactReachWork (and MaxWork).
	Ceiling int
	// MaxWork is the largest estimated work (units of D^3, see
	// EstimateWork) of one evaluation chosen automatically.
	MaxWork float64
	// Budget, when positive, stops the rise once the predicted time of
	// the next order exceeds what is left of it.
	Budget time.Duration
	// Clock reads the time for the Budget; nil means time.Now. Without a
	// Budget the clock is never read: the choice cannot depend on it.
	Clock func() time.Time
}

func (p OrderPolicy) now() time.Time {
	if p.Clock != nil {
		return p.Clock()
	}
	return time.Now()
}

// DefaultAutoWork is the automatic choice's work limit per evaluation:
// about a minute on the reference 2-core machine (SecondsPerWorkUnit).
const DefaultAutoWork = 5e10

// ExactReachWork is the largest work (D^3 units) of an evaluation at the
// order that covers a whole small lattice for which the automatic order
// rises past its ceiling: about 3 s on the reference 2-core machine
// (SecondsPerWorkUnit), so a fit's several evaluations stay within its
// default minute.
const ExactReachWork = DefaultAutoWork / 20

// NewOrderPolicy returns the default policy for terms on lat: it starts
// at an order that covers every term's support and costs little (6 on a
// chain, 5 on a ladder, 4 in two dimensions, 3 in three), and rises to at
// most the number of sites, MaxDenseQubits and a ceiling by dimension
// (12, 9, 8, 6), within DefaultAutoWork. On a small lattice Allows lets
// the order reach the number of sites past that ceiling when it is cheap
// (ExactReachWork): there the expansion is exact.
func NewOrderPolicy(lat *lattice.Lattice, terms []lattice.Term) OrderPolicy {
	start, ceiling := 4, 8
	switch {
	case lat.Spec.Kind == "chain":
		start, ceiling = 6, 12
	case lat.Spec.Kind == "ladder":
		start, ceiling = 5, 9
	case lat.Dim() >= 3 && lat.Spec.Kind != "graph":
		start, ceiling = 3, 6
	}
	support := 1
	for _, t := range terms {
		support = max(support, len(t.Sites))
	}
	ceiling = min(ceiling, lat.NumSites(), MaxDenseQubits)
	start = min(max(start, support), ceiling)
	return OrderPolicy{Start: start, Ceiling: ceiling, MaxWork: DefaultAutoWork}
}

// Allows reports whether order L may be chosen automatically for e, and
// if not, why, in words that say how to go further.
func (p OrderPolicy) Allows(e *Expansion, L int) (bool, string) {
	if L > p.Ceiling {
		if n := e.lat.NumSites(); L > n || n > MaxDenseQubits {
			return false, fmt.Sprintf("order %d is above the automatic ceiling %d for this lattice (set --order to go further)", L, p.Ceiling)
		} else if _, work := e.EstimateWork(n); work > ExactReachWork {
			return false, fmt.Sprintf("order %d is above the automatic ceiling %d for this lattice, and order %d (all %d sites, where the expansion is exact) would cost %.3g units of work (about %s on a 2-core machine), above %.3g (set --order to go further)",
				L, p.Ceiling, n, n, work, describeDuration(e.PredictEvaluation(n, false)), ExactReachWork)
		}
	}
	if _, work := e.EstimateWork(L); p.MaxWork > 0 && work > p.MaxWork {
		return false, fmt.Sprintf("order %d would cost %.3g units of work (about %s on a 2-core machine), above the automatic limit %.3g (set --order %d to go further)",
			L, work, describeDuration(e.PredictEvaluation(L, false)), p.MaxWork, L)
	}
	return true, ""
}

// OrderChoice records how an automatic order was chosen.
type OrderChoice struct {
	Order int
	// Reason says in words why the rise stopped at Order.
	Reason string
	// ByBudget is true when the wall-clock budget, not the series or the
	// work limit, stopped the rise: the choice may then differ between
	// machines.
	ByBudget bool
	// Steps has one line per order tried.
	Steps []string
}

// ChooseOrder evaluates the expansion at orders p.Start, p.Start+1, ...
// while some term's value is untrusted at tolerance tol (see
// Result.TermConvergence) and p allows the next order. It returns the
// last evaluation. opt.Order is ignored.
func (e *Expansion) ChooseOrder(coeffs []float64, beta, tol float64, p OrderPolicy, opt Options) (*Result, OrderChoice, error) {
	var t0 time.Time
	if p.Budget > 0 {
		t0 = p.now()
	}
	var (
		prev   *Result
		choice OrderChoice
	)
	for L := p.Start; ; L++ {
		opt.Order = L
		res, err := e.Evaluate(coeffs, beta, opt)
		if err != nil {
			if prev == nil {
				return nil, choice, err
			}
			choice.Reason = fmt.Sprintf("order %d could not be evaluated (%v)", L, err)
			return prev, choice, nil
		}
		prev, choice.Order = res, L
		untrusted := 0
		for _, c := range res.TermConvergence(e.terms, tol) {
			if !c.Trusted {
				untrusted++
			}
		}
		if untrusted == 0 {
			choice.Reason = fmt.Sprintf("every value is trusted at order %d (estimated truncation error <= %.2g)", L, tol)
			return res, choice, nil
		}
		choice.Steps = append(choice.Steps, fmt.Sprintf("order %d: %d of %d values untrusted", L, untrusted, len(e.terms)))
		if ok, why := p.Allows(e, L+1); !ok {
			choice.Reason = fmt.Sprintf("%d values are still untrusted at order %d; %s", untrusted, L, why)
			return res, choice, nil
		}
		if p.Budget > 0 {
			if need, left := e.PredictEvaluation(L+1, opt.Response), p.Budget-p.now().Sub(t0); need > left {
				choice.Reason = fmt.Sprintf("%d values are still untrusted at order %d; order %d would take about %s, more than the %s left of the time budget (this stop depends on the machine)",
					untrusted, L, L+1, describeDuration(need), describeDuration(max(left, 0)))
				choice.ByBudget = true
				return res, choice, nil
			}
		}
	}
}

// Highest returns the highest order p allows for e (at least p.Start):
// the automatic order of computations whose cost does not depend on
// convergence, such as a temperature sweep, where one diagonalisation
// per cluster serves every temperature.
func (p OrderPolicy) Highest(e *Expansion) int {
	L := p.Start
	for {
		if ok, _ := p.Allows(e, L+1); !ok {
			return L
		}
		L++
	}
}
