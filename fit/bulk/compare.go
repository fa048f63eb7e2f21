package bulk

import (
	"fmt"
	"math"
	"runtime"
	"slices"

	"golang.org/x/sync/errgroup"
)

// Comparison is the outcome of Compare.
type Comparison struct {
	Candidates []*Candidate
	// Own[i] is candidate i fitted over its own trusted range; nil when it
	// could not be fitted, with the reason in Errors[i].
	Own    []*FitResult
	Errors []error
	// Common[i] is candidate i refitted on the points every fitted
	// candidate trusts, so that chi^2 and AIC compare like with like
	// (nil for a single candidate or a failed one).
	Common []*FitResult
	// Rejected[i] says that candidate i failed its goodness-of-fit test
	// on its own trusted range: p-value below RejectBelow. (Candidates
	// whose errors were estimated from the scatter are never rejected.)
	Rejected    []bool
	RejectBelow float64
	// Ranking orders the fitted candidates: those not rejected first, each
	// group by AIC on the common points (their own AIC when only one was
	// fitted); Ranking[0] is the best.
	Ranking []int
	// DeltaAIC[i] is candidate i's AIC minus the best one's (NaN when not
	// fitted).
	DeltaAIC []float64
}

// DefaultRejectBelow is the p-value below which Compare rejects a
// candidate: a strict threshold, because real curves carry systematic
// errors that a 5% test would punish.
const DefaultRejectBelow = 1e-3

// Compare fits every candidate to the same data, in parallel. Each is
// tested on its own trusted range (chi^2 p-value against rejectBelow, 0
// for DefaultRejectBelow), since that is where its forward model can be
// held to the data; the survivors are ranked by the Akaike information
// criterion on a common set of points, those trusted by every candidate at
// its own fitted parameters, so that they are compared like with like. A
// candidate whose own fit fails (for example a TrustError) is reported and
// left out of the ranking; Compare fails only when none can be fitted.
// Results are the same for any number of workers.
func Compare(cands []*Candidate, data []*Series, opt FitOptions, rejectBelow float64) (*Comparison, error) {
	n := len(cands)
	if rejectBelow == 0 {
		rejectBelow = DefaultRejectBelow
	}
	cmp := &Comparison{Candidates: cands, Own: make([]*FitResult, n), Errors: make([]error, n),
		Common: make([]*FitResult, n), DeltaAIC: make([]float64, n), Rejected: make([]bool, n), RejectBelow: rejectBelow}
	if err := parallel(n, func(i int) error {
		cmp.Own[i], cmp.Errors[i] = FitCandidate(cands[i], data, opt)
		return nil
	}); err != nil {
		return nil, err
	}
	var ok []int
	for i, r := range cmp.Own {
		if r != nil {
			ok = append(ok, i)
			cmp.Rejected[i] = r.PValue < rejectBelow
		}
	}
	if len(ok) == 0 {
		return nil, fmt.Errorf("no candidate could be fitted: %w", cmp.Errors[0])
	}
	aic := func(i int) float64 { return cmp.Own[i].AIC }
	if len(ok) > 1 {
		common := commonCut(cmp.Own, ok)
		if countTrue(common) == 0 {
			return nil, fmt.Errorf("the candidates trust no data point in common; compare them one by one")
		}
		if err := parallel(len(ok), func(j int) error {
			i := ok[j]
			refit := withStart(cands[i], cmp.Own[i])
			r, err := FitCandidate(refit, data, FitOptions{Cut: common, Progress: opt.Progress})
			if err != nil {
				return fmt.Errorf("candidate %s on the common range: %w", cands[i].Name, err)
			}
			cmp.Common[i] = r
			return nil
		}); err != nil {
			return nil, err
		}
		aic = func(i int) float64 { return cmp.Common[i].AIC }
	}
	cmp.Ranking = slices.Clone(ok)
	slices.SortStableFunc(cmp.Ranking, func(a, b int) int {
		if cmp.Rejected[a] != cmp.Rejected[b] {
			if cmp.Rejected[b] {
				return -1
			}
			return 1
		}
		switch {
		case aic(a) < aic(b):
			return -1
		case aic(a) > aic(b):
			return 1
		}
		return 0
	})
	for i := range cmp.DeltaAIC {
		cmp.DeltaAIC[i] = math.NaN()
	}
	for _, i := range ok {
		cmp.DeltaAIC[i] = aic(i) - aic(cmp.Ranking[0])
	}
	return cmp, nil
}

// Best returns the fit of the best-ranked candidate: its own-range fit,
// whose parameters are the ones to quote.
func (c *Comparison) Best() *FitResult { return c.Own[c.Ranking[0]] }

// commonCut marks the points fitted by every candidate in ok.
func commonCut(fits []*FitResult, ok []int) [][]bool {
	first := fits[ok[0]]
	out := make([][]bool, len(first.Series))
	for s := range out {
		out[s] = slices.Clone(first.Series[s].UsedPoint)
		for _, i := range ok[1:] {
			for k, u := range fits[i].Series[s].UsedPoint {
				out[s][k] = out[s][k] && u
			}
		}
	}
	return out
}

// withStart returns a copy of c starting from the fitted values of r.
func withStart(c *Candidate, r *FitResult) *Candidate {
	cp := *c
	cp.Params = slices.Clone(c.Params)
	for i := range cp.Params {
		cp.Params[i].Value = r.Params[i].Value
	}
	return &cp
}

// parallel runs task(0..n-1) on up to GOMAXPROCS workers; each task
// writes only its own slot, so results do not depend on scheduling.
func parallel(n int, task func(i int) error) error {
	var g errgroup.Group
	g.SetLimit(runtime.GOMAXPROCS(0))
	for i := range n {
		g.Go(func() error { return task(i) })
	}
	return g.Wait()
}

// Fitted returns the candidate of the fit with its parameters at the
// fitted values, for evaluating the fitted curves elsewhere (Predict).
func (r *FitResult) Fitted() *Candidate { return withStart(r.Candidate, r) }
