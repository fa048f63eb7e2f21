package fit

import (
	"math"
	"sort"
)

// Truncation compares the fitted parameters at consecutive expansion
// orders with their statistical error. The change between orders L-1 and
// L estimates what the orders beyond L would still change. Because the
// partial sums of a linked-cluster series can stall for one order (on
// bipartite lattices orders often come in pairs, references.md), the
// error is the larger of the last two changes when three orders are
// available.
type Truncation struct {
	// Known is false when no lower order could be fitted (the order is
	// the smallest that holds every term, or the refits failed).
	Known bool
	// Exact is true when the order covers the whole lattice: the
	// expansion is then the exact log Z and there is no truncation.
	Exact bool
	// Orders lists the orders fitted, increasing; Steps[i] is
	// max_q |theta_q(Orders[i+1]) - theta_q(Orders[i])|.
	Orders []int
	Steps  []float64
	// Error is the truncation estimate, in units of the coefficients.
	Error float64
	// StatError is the median statistical standard error of the
	// parameters (0 for exact data).
	StatError float64
	// Target is the largest acceptable Error: TruncationFraction times
	// StatError, or Options.TruncationTarget.
	Target float64
	// OK reports Error <= Target with Known, or Exact.
	OK bool
	// MaxRatio is the largest per-parameter ratio of the truncation
	// change to the parameter's standard error (0 when unknown).
	MaxRatio float64
	// ParamError is the truncation estimate of every parameter, the
	// larger of its last two changes between orders (nil when unknown
	// or exact, or without error bars).
	ParamError []float64
}

// exactTruncationTarget is the default truncation target for exact data,
// in units of the coefficients (there is no statistical error to compare
// with).
const exactTruncationTarget = 1e-6

// truncation measures the truncation error from fits at increasing orders
// (history is sorted by order and its last entry is the answer), against
// the statistical scale statErr.
func (f *fitter) truncation(history []*orderFit, statErr float64) Truncation {
	t := Truncation{StatError: statErr}
	last := history[len(history)-1]
	t.Target = f.opt.TruncationFraction * statErr
	if f.opt.TruncationTarget > 0 {
		t.Target = f.opt.TruncationTarget
	} else if statErr == 0 {
		t.Target = exactTruncationTarget
	}
	for _, h := range history {
		t.Orders = append(t.Orders, h.order)
	}
	if f.exactOrder(last.order) {
		t.Known, t.Exact, t.OK = true, true, true
		return t
	}
	for i := 1; i < len(history); i++ {
		a, b := history[i-1].out.state.theta, history[i].out.state.theta
		var d float64
		for q := range a {
			d = math.Max(d, math.Abs(b[q]-a[q]))
		}
		t.Steps = append(t.Steps, d)
	}
	switch n := len(t.Steps); {
	case n == 0:
		return t
	case n == 1:
		t.Error = t.Steps[0]
	default:
		t.Error = math.Max(t.Steps[n-1], t.Steps[n-2])
	}
	t.Known = true
	t.OK = t.Error <= t.Target
	return t
}

// perParameterRatio sets MaxRatio from the last step(s) of history and the
// parameters' standard errors.
func (t *Truncation) perParameterRatio(history []*orderFit, stderr []float64) {
	if !t.Known || t.Exact || len(history) < 2 {
		return
	}
	n := len(history)
	from := max(1, n-2)
	t.ParamError = make([]float64, len(stderr))
	for i := from; i < n; i++ {
		a, b := history[i-1].out.state.theta, history[i].out.state.theta
		for q, s := range stderr {
			t.ParamError[q] = math.Max(t.ParamError[q], math.Abs(b[q]-a[q]))
			if s > 0 {
				t.MaxRatio = math.Max(t.MaxRatio, math.Abs(b[q]-a[q])/s)
			}
		}
	}
}

// statisticalScale returns the median standard error of the parameters
// at the solution of one order, 0 for exact data or when the error bars
// cannot be computed there.
func (f *fitter) statisticalScale(of *orderFit) float64 {
	if f.exact {
		return 0
	}
	se, _, err := f.paramStderrAt(of)
	if err != nil {
		return 0
	}
	return median(se)
}

// paramStderrAt is paramStderr at an order's solution, with the response
// evaluated there (errorBarCurvature).
func (f *fitter) paramStderrAt(of *orderFit) ([]float64, string, error) {
	if err := f.errorBarCurvature(of); err != nil {
		return nil, "", err
	}
	return f.paramStderr(of.out)
}

// median returns the median of the positive entries of v, 0 if none.
func median(v []float64) float64 {
	var pos []float64
	for _, x := range v {
		if x > 0 {
			pos = append(pos, x)
		}
	}
	if len(pos) == 0 {
		return 0
	}
	sort.Float64s(pos)
	n := len(pos)
	if n%2 == 1 {
		return pos[n/2]
	}
	return (pos[n/2-1] + pos[n/2]) / 2
}

// paramStderr returns the parameters' standard errors at a solution.
func (f *fitter) paramStderr(out *newtonOutcome) ([]float64, string, error) {
	return f.paramStderrWith(out, f.cov)
}

// paramStderrWith is paramStderr for a given data covariance.
func (f *fitter) paramStderrWith(out *newtonOutcome, cov termMatrix) ([]float64, string, error) {
	b := f.params.project(cov, 1)
	var vars []float64
	var method string
	var err error
	if out.jacobian != nil {
		vars, err = momentVariances(out.jacobian, b)
		method = "dense LU, moment matching"
	} else {
		vars, method, err = paramVariances(out.hessian, b, f.opt.DenseLimit, f.opt.Workers, f.params.spatialOrder(f.prob.Terms))
	}
	if err != nil {
		return nil, method, err
	}
	se := make([]float64, len(vars))
	for q, v := range vars {
		se[q] = math.Sqrt(v)
	}
	return se, method, nil
}
