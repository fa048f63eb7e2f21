package fit

import (
	"fmt"
	"time"

	"warmfit/cluster"
)

// The automatic order of a fit rises by the convergence of the fitted
// coefficients and stops, at the latest, where the work of the next order
// would take the fit past a machine-independent limit. Work is counted in
// the units of cluster.EstimateWork (one D^3 of the eigensolver) as the
// cluster cost model prices a whole evaluation on the reference machine
// (Expansion.PredictEvaluation divided by cluster.SecondsPerWorkUnit), so
// the terms' expectations and the response are priced too. The Newton
// iteration counts that multiply it depend only on the data, so the same
// data give the same order on any machine and under any load. The
// wall-clock Options.Budget is a guard on top: when it stops the rise
// first, the result says the order depends on the machine.

// DefaultFitWork is the default Options.MaxFitWork: the work of every
// evaluation of the automatic ladder together, cluster.DefaultAutoWork
// (one evaluation of about a minute) scaled by 1.2 so that it is the
// default 60 s --budget on the reference 2-core machine.
const DefaultFitWork = 1.2 * cluster.DefaultAutoWork

// evaluationWork returns the work units of one evaluation at order L,
// with the response of order respOrder when response is set (the
// response of a lower order is priced as an evaluation of that order
// with the response on top of the forward pass at L).
func (f *fitter) evaluationWork(L int, response bool, respOrder int) float64 {
	if !response {
		return f.predictedWork(L, false)
	}
	if respOrder <= 0 || respOrder >= L {
		return f.predictedWork(L, true)
	}
	return f.predictedWork(L, false) + f.predictedWork(respOrder, true)
}

// predictedWork is PredictEvaluation in work units, cached: the cluster
// size estimate behind it enumerates the lattice.
func (f *fitter) predictedWork(L int, response bool) float64 {
	f.workMu.Lock()
	defer f.workMu.Unlock()
	key := workKey{L, response}
	if w, ok := f.workCache[key]; ok {
		return w
	}
	if f.workCache == nil {
		f.workCache = make(map[workKey]float64)
	}
	w := f.exp.PredictEvaluation(L, response).Seconds() / cluster.SecondsPerWorkUnit
	f.workCache[key] = w
	return w
}

type workKey struct {
	order    int
	response bool
}

// addWork counts one evaluation's work; fitOrderUntil reads the total.
func (f *fitter) addWork(w float64) {
	f.workMu.Lock()
	f.spentWork += w
	f.workMu.Unlock()
}

func (f *fitter) workSpent() float64 {
	f.workMu.Lock()
	defer f.workMu.Unlock()
	return f.spentWork
}

// nextOrderWork predicts the work of fitting order L+1 from the fit at L:
// it starts from L's solution and so needs about as many evaluations as L
// did (at least 2: a step and its check), each dearer by the ratio of the
// predicted evaluations.
func (f *fitter) nextOrderWork(of *orderFit) float64 {
	evals := max(of.out.evaluations, 1)
	ratio := f.predictedWork(of.order+1, true) / max(f.predictedWork(of.order, true), 1)
	return of.work / float64(evals) * float64(max(evals, 2)) * ratio
}

// nextOrderTime predicts the wall time of fitting order L+1 on this
// machine from the measured time of L, by the same rule: it is what the
// budget guard compares with the time left, and depends on the machine.
func (f *fitter) nextOrderTime(of *orderFit) time.Duration {
	evals := max(of.out.evaluations, 1)
	ratio := f.predictedWork(of.order+1, true) / max(f.predictedWork(of.order, true), 1)
	return time.Duration(float64(of.elapsed) / float64(evals) * float64(max(evals, 2)) * ratio)
}

// now reads Options.Clock.
func (o Options) now() time.Time {
	if o.Clock != nil {
		return o.Clock()
	}
	return time.Now()
}

// describeWork writes work units with the time they take on the
// reference machine.
func describeWork(w float64) string {
	return fmt.Sprintf("%.3g units of work (about %s on the reference 2-core machine)", w, roundDuration(cluster.PredictDuration(w)))
}

// roundDuration rounds a duration for a message.
func roundDuration(d time.Duration) time.Duration {
	switch {
	case d >= time.Minute:
		return d.Round(time.Second)
	case d >= time.Second:
		return d.Round(100 * time.Millisecond)
	default:
		return d.Round(time.Millisecond)
	}
}

// describeBudget writes a budget as the flag's user thinks of it: "60 s",
// "10 min".
func describeBudget(d time.Duration) string {
	switch {
	case d%time.Minute == 0 && d >= 2*time.Minute:
		return fmt.Sprintf("%d min", d/time.Minute)
	case d%time.Second == 0:
		return fmt.Sprintf("%d s", d/time.Second)
	}
	return d.String()
}

// limitName names the machine-independent limit of the automatic order
// for messages: the work limit, or MaxOrder, which replaces it.
func (f *fitter) limitName() string {
	if f.opt.MaxOrder > 0 {
		return fmt.Sprintf("the maximum order %d", f.opt.MaxOrder)
	}
	return "the work limit"
}
