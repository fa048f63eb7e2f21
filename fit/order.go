package fit

import (
	"math"
	"sort"
)

// Truncation estimates how far the fitted parameters still are from
// their infinite-order values, from the fits at consecutive expansion
// orders (the answer's order L and up to four below it).
//
// The estimate extrapolates the changes d_j = theta(j) - theta(j-1) of
// each parameter. On bipartite lattices even and odd cluster sizes
// contribute very unequally (references.md): an XX coupling of a square
// lattice moves mostly at even orders, a field at every order, so one
// step's ratio to the step before says little. Each parity is therefore
// extrapolated on its own: its decay rate over two orders is
//
//	rho_L = ||d_L|| / ||d_{L-2}||,  rho_{L-1} = ||d_{L-1}|| / ||d_{L-3}||
//
// (root mean square over the parameters; one parity's rate stands for
// the other's when an order is missing), floored by the squared ratio
// of the last two steps (||d_L|| / ||d_{L-1}||)^2, which is the rate
// when only d_L and d_{L-1} are known and guards series whose decay
// slows down, and capped at truncationRateCeiling. The tail of
// parameter q is bounded by the geometric sum of both channels times a
// safety factor:
//
//	e_q = truncationSafety * (rho_L |d_L,q| + rho_{L-1} |d_{L-1},q|) / (1 - max rho).
//
// Calibrated against exact references (TestFitTruncationCalibration,
// table in README "The fit's truncation estimate against exact
// results"): e_q bounds the true truncation bias of >= 95% of the
// coefficients and its median is about 2-3 times it, where the plain
// largest change of the last two orders was 20-500 times it. With a
// single lower order there is nothing to extrapolate and e_q = |d_L,q|.
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
	// Rates are the two-order decay rates of the last two steps'
	// parities, rho_L and rho_{L-1} (nil when not extrapolated).
	Rates []float64
	// ParamError is the truncation estimate e_q of each parameter, in
	// units of the coefficients (nil when unknown or exact); Combine
	// (package stationary) carries it as a systematic error.
	ParamError []float64
	// Error is the largest e_q, in units of the coefficients.
	Error float64
	// StatError is the median statistical standard error of the
	// parameters (0 for exact data).
	StatError float64
	// Target is the largest acceptable Error: TruncationFraction times
	// StatError, or Options.TruncationTarget. The automatic order rises
	// until it is met.
	Target float64
	// OK reports Error <= Target with Known, or Exact.
	OK bool
	// MaxRatio is the largest e_q over the parameter's standard error,
	// and OverStderr the number of parameters with e_q above it (0 when
	// unknown). The warning that truncation matters rests on these: a
	// bias below the error bar barely moves the pulls.
	MaxRatio   float64
	OverStderr int
}

// truncationSafety multiplies the extrapolated tail (calibrated, see
// Truncation), and truncationRateCeiling caps the decay rates: a rate
// near 1 means the series does not converge at this order, and the
// estimate is then a few times the last changes rather than infinite.
const (
	truncationSafety      = 2
	truncationRateCeiling = 0.8
)

// truncationOrdersBelow is how many orders below L a fixed-order fit
// refits for the estimate: two per parity.
const truncationOrdersBelow = 4

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
	thetas := make([][]float64, len(history))
	for i, h := range history {
		thetas[i] = h.out.state.theta
		if i > 0 {
			var d float64
			for q, x := range thetas[i] {
				d = math.Max(d, math.Abs(x-thetas[i-1][q]))
			}
			t.Steps = append(t.Steps, d)
		}
	}
	if len(t.Steps) == 0 {
		return t
	}
	t.ParamError, t.Rates = parameterTruncation(thetas)
	for _, e := range t.ParamError {
		t.Error = math.Max(t.Error, e)
	}
	t.Known = true
	t.OK = t.Error <= t.Target
	return t
}

// parameterTruncation returns the truncation estimate of every parameter
// from the parameters fitted at consecutive orders (thetas[i] at the
// i-th order, the answer last; at least two), and the decay rates used
// (nil without extrapolation). See Truncation.
func parameterTruncation(thetas [][]float64) (est, rates []float64) {
	n := len(thetas)
	step := func(j int) []float64 { // d_{L-j}, j = 0 the last step
		a, b := thetas[n-2-j], thetas[n-1-j]
		d := make([]float64, len(a))
		for q := range a {
			d[q] = b[q] - a[q]
		}
		return d
	}
	dL := step(0)
	est = make([]float64, len(dL))
	if n < 3 {
		for q, d := range dL {
			est[q] = math.Abs(d)
		}
		return est, nil
	}
	steps := []float64{rms(dL)}
	for j := 1; j < min(n-1, 4); j++ {
		steps = append(steps, rms(step(j)))
	}
	dL1 := step(1)
	// rate returns ||d_{L-j}|| / ||d_{L-j-2}||, ok false when that step
	// is not available or zero.
	rate := func(j int) (float64, bool) {
		if j+2 >= len(steps) || steps[j+2] == 0 {
			return 0, false
		}
		return steps[j] / steps[j+2], true
	}
	// single is the squared ratio of the last two steps: a floor on
	// both rates, for series whose decay slows down (seen on chains).
	var single float64
	if steps[1] > 0 {
		single = math.Pow(steps[0]/steps[1], 2)
	}
	rhoL, okL := rate(0)
	rhoL1, okL1 := rate(1)
	switch {
	case !okL && !okL1 && steps[1] == 0 && steps[0] > 0:
		// Nothing moved at order L-1 but something at L: no rate to
		// extrapolate with.
		rhoL, rhoL1 = truncationRateCeiling, truncationRateCeiling
	case !okL && !okL1:
		rhoL, rhoL1 = single, single
	case !okL1:
		rhoL1 = rhoL
	case !okL:
		rhoL = rhoL1
	}
	rhoL = math.Max(rhoL, single)
	rhoL1 = math.Max(rhoL1, single)
	rhoL = math.Min(rhoL, truncationRateCeiling)
	rhoL1 = math.Min(rhoL1, truncationRateCeiling)
	tail := truncationSafety / (1 - math.Max(rhoL, rhoL1))
	for q := range est {
		est[q] = tail * (rhoL*math.Abs(dL[q]) + rhoL1*math.Abs(dL1[q]))
	}
	return est, []float64{rhoL, rhoL1}
}

// rms returns the root mean square of v (0 for an empty v).
func rms(v []float64) float64 {
	if len(v) == 0 {
		return 0
	}
	var s float64
	for _, x := range v {
		s += x * x
	}
	return math.Sqrt(s / float64(len(v)))
}

// perParameterRatio sets MaxRatio and OverStderr from the per-parameter
// estimates and the parameters' standard errors.
func (t *Truncation) perParameterRatio(stderr []float64) {
	if !t.Known || t.Exact || t.ParamError == nil {
		return
	}
	for q, s := range stderr {
		if s > 0 {
			r := t.ParamError[q] / s
			t.MaxRatio = math.Max(t.MaxRatio, r)
			if r > 1 {
				t.OverStderr++
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
