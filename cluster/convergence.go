package cluster

import (
	"math"

	"warmfit/lattice"
)

// Convergence summarises how a linked-cluster series has settled at its
// highest order.
type Convergence struct {
	Value    float64 // bare partial sum at the highest order
	LastStep float64 // change from the previous order
	// Error estimates the truncation error of Value; see Converge.
	Error    float64
	Resummed float64 // Wynn epsilon acceleration of the partial sums
	Trusted  bool    // Error <= the tolerance asked for
}

// Converge judges the partial sums series[o] (order o+1) of a quantity
// whose first non-trivial order is first (the size of the smallest
// cluster that can hold it; the sum below that order is zero).
//
// The error estimate extrapolates the steps d_o = S_o - S_{o-1} from
// the order first on (d_first = S_first), so that the zero below the
// first order never enters as a step. Orders that add exactly nothing
// (as on bipartite lattices, where one order of a pair can vanish) are
// skipped, so the last steps are the last informative ones. With the
// last step d_L, the estimate is |d_L| exp(y): y is linear in the logs
// of the ratios |d_L/d_{L-1}|, |d_L/d_{L-2}|, |d_L/d_{L-3}| (how fast and
// how regularly the series has been falling, which a geometric tail
// alone misjudges: high-temperature series fall faster than geometric)
// with coefficients that depend on the sign pattern of the last three
// steps (a series whose steps alternate in sign overshoots less than one
// that keeps its sign). The coefficients (truncationFourSteps,
// truncationThreeSteps) are fitted to exact references, the 95th
// percentile of the true error, in TestTruncationCalibration; README.md
// "Truncation estimates against exact results" gives the measured
// coverage. Guards keep the estimate safe: it is never below
// truncationFloor |d_L|; when the ratio of steps is not falling it is at
// least the geometric tail with the last ratio; when the last step falls
// far faster than the one before (likely a step passing through zero) it
// is at least a fraction of the step before at that step's rate; and when
// the last two steps are not much smaller than the two before the series
// is not converging and the estimate is at least the larger of them.
//
// With only two steps the estimate is truncationTwoSteps times the
// larger of |d_L| and a fifth of |d_{L-1}|; with one, or before the first
// order, it is infinite. When every step is zero, or the last two are
// exactly zero (the series has stopped changing), it is zero.
func Converge(series []float64, first int, tol float64) Convergence {
	L := len(series)
	if first < 1 {
		first = 1
	}
	c := Convergence{Value: series[L-1], Resummed: series[L-1], Error: math.Inf(1)}
	if L < first {
		return c
	}
	// s[0] is the zero sum below the first order.
	s := append([]float64{0}, series[first-1:]...)
	n := len(s)
	c.LastStep = s[n-1] - s[n-2]
	c.Error = truncationEstimate(s)
	c.Resummed = Wynn(s[1:])
	c.Trusted = c.Error <= tol
	return c
}

// Coefficients of the truncation estimate (Converge): y = b[0] +
// sum_j b[j] ln|d_L/d_{L-j}| per sign class of the last three steps, in
// the order same-same, alternating-same, same-alternating,
// alternating-alternating (the last step's sign against the one before,
// then that one's against its predecessor). Fitted by least squares of
// ln(true error/|d_L|) on the TFIM chain, square 3x3 and triangular 3x3
// patch references of TestTruncationCalibration, shifted to the
// residuals' 95th percentile (the slopes of three steps are shared by
// the classes); the held-out references there (square 5x2 and 4x3
// patches, an XY chain) check them.
var (
	truncationFourSteps = [4][4]float64{
		{0.962, -0.767, 0.138, 0.498},
		{0.301, -0.148, -0.392, 0.290},
		{1.443, -0.422, 0.276, 0.257},
		{-0.139, -0.584, 0.620, -0.037},
	}
	truncationThreeSteps = [4][3]float64{
		{0.565, 0.144, 0.215},
		{0.967, 0.144, 0.215},
		{3.149, 0.144, 0.215},
		{0.219, 0.144, 0.215},
	}
)

const (
	// truncationTwoSteps multiplies the two-step estimate, fitted like
	// the coefficients above.
	truncationTwoSteps = 0.544
	// truncationFloor bounds the estimate from below, relative to the
	// last step.
	truncationFloor = 0.05
	// truncationEarlier weighs the step before the last in the two-step
	// estimate.
	truncationEarlier = 0.2
	// truncationStalled: when the larger of the last two steps is at
	// least this fraction of the larger of the two before, the series is
	// not converging and the error is at least that step.
	truncationStalled = 0.75
	// truncationRatioCap caps the ratio of the geometric guard (a tail of
	// at most 4 times the last step).
	truncationRatioCap = 0.8
	// truncationDrop and truncationDropWeight: a last step that falls
	// more than truncationDrop times faster than the one before gets at
	// least truncationDropWeight times the step before, at that step's
	// rate of fall.
	truncationDrop       = 5
	truncationDropWeight = 0.2
	// truncationNothing: a step at most this fraction of the one before
	// is an order that adds nothing (the smallest such ratio of genuine
	// steps in the calibration data is 6e-6).
	truncationNothing = 1e-6
)

// truncationEstimate is Converge's error estimate for the partial sums s,
// s[0] = 0 being the sum below the first order.
func truncationEstimate(s []float64) float64 {
	scale := 1.0
	for _, v := range s {
		scale = math.Max(scale, math.Abs(v))
	}
	// Steps at rounding level, or a millionth of the step before, are
	// orders that add nothing (on bipartite lattices whole orders vanish
	// up to the rounding of the cluster sums); they are skipped, which
	// can only raise the estimate.
	negligible := 1e-13 * scale
	var steps []float64
	trailingZeros, prev := 0, 0.0
	for i := 1; i < len(s); i++ {
		d := s[i] - s[i-1]
		tiny := math.Abs(d) <= negligible
		if tiny {
			trailingZeros++
		} else {
			trailingZeros = 0
		}
		skip := tiny || math.Abs(d) <= truncationNothing*math.Abs(prev)
		prev = d
		if !skip {
			steps = append(steps, d)
		}
	}
	k := len(steps)
	switch {
	case k == 0:
		return 0
	case trailingZeros >= 2:
		return 0 // the series has stopped changing
	case k == 1:
		return math.Inf(1)
	}
	a := func(j int) float64 { return math.Abs(steps[k-1-j]) } // |d_{L-j}|
	recent := math.Max(a(0), truncationEarlier*a(1))
	if k == 2 {
		return truncationTwoSteps * recent
	}
	class := 0
	if steps[k-1]*steps[k-2] < 0 {
		class |= 1
	}
	if steps[k-2]*steps[k-3] < 0 {
		class |= 2
	}
	var y float64
	if k == 3 {
		b := truncationThreeSteps[class]
		y = b[0] + b[1]*math.Log(a(0)/a(1)) + b[2]*math.Log(a(0)/a(2))
	} else {
		b := truncationFourSteps[class]
		y = b[0] + b[1]*math.Log(a(0)/a(1)) + b[2]*math.Log(a(0)/a(2)) + b[3]*math.Log(a(0)/a(3))
	}
	e := math.Max(a(0)*math.Exp(y), truncationFloor*a(0))
	// A ratio of steps that is not falling means a tail at least as
	// long as the geometric one with the last ratio (capped: two nearly
	// equal steps after a fast fall are more often a pause than a tail
	// of hundreds of steps).
	if r1, r2 := a(0)/a(1), a(1)/a(2); r1 < 1 && r1 >= r2*(1-1e-9) {
		switch class {
		case 0:
			r := math.Min(r1, truncationRatioCap)
			e = math.Max(e, a(0)*r/(1-r))
		case 3:
			e = math.Max(e, a(0)*r1/(1+r1))
		}
	}
	// A last step that falls far faster than the one before is more
	// likely a step passing through zero (with temperature) than a
	// sudden convergence: the step before, at its own rate of fall,
	// bounds the estimate from below.
	if r1, r2 := a(0)/a(1), a(1)/a(2); r1*truncationDrop < r2 {
		e = math.Max(e, truncationDropWeight*a(1)*math.Min(r2, 1))
	}
	if k >= 4 {
		if last := math.Max(a(0), a(1)); last >= truncationStalled*math.Max(a(2), a(3)) {
			e = math.Max(e, last) // not converging
		}
	}
	if math.IsNaN(e) {
		return math.Inf(1)
	}
	return e
}

// Wynn returns the Wynn epsilon acceleration of the partial sums s:
// eps_{-1}^(n) = 0, eps_0^(n) = s_n, eps_{k+1}^(n) = eps_{k-1}^(n+1) +
// 1/(eps_k^(n+1) - eps_k^(n)), read at the highest even k (Wynn 1956, as
// used for linked-cluster series by Rigol, Bryant, Singh, arXiv 0706.3254).
// Repeated partial sums (orders that add nothing, as on bipartite
// lattices) are dropped first since they make the table singular; where a
// difference still vanishes the sequence has converged and its last value
// is returned.
func Wynn(s []float64) float64 {
	var seq []float64
	for i, v := range s {
		if i > 0 && math.Abs(v-seq[len(seq)-1]) <= 1e-15*math.Max(1, math.Abs(v)) {
			continue
		}
		seq = append(seq, v)
	}
	if len(seq) < 3 {
		return s[len(s)-1]
	}
	prev := make([]float64, len(seq)+1) // eps_{k-1}, zeros for k = 0
	cur := append([]float64(nil), seq...)
	best := cur[len(cur)-1]
	for k := 0; len(cur) > 1; k++ {
		next := make([]float64, len(cur)-1)
		for n := range next {
			d := cur[n+1] - cur[n]
			if d == 0 || math.IsNaN(d) {
				return best
			}
			next[n] = prev[n+1] + 1/d
		}
		prev, cur = cur, next
		if k%2 == 1 { // cur now holds eps_{k+1} with k+1 even
			v := cur[len(cur)-1]
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return best
			}
			best = v
		}
	}
	return best
}

// TermConvergence judges the series of every term expectation at
// tolerance tol (absolute, in units of the expectation value). At an order
// that covers every site the expansion is exact: Error 0, Trusted.
func (r *Result) TermConvergence(terms []lattice.Term, tol float64) []Convergence {
	out := make([]Convergence, len(terms))
	series := make([]float64, r.Order)
	for k, t := range terms {
		for o := range series {
			series[o] = r.Expect[o][k]
		}
		out[k] = Converge(series, len(t.Sites), tol)
		if r.NumSites > 0 && r.Order >= r.NumSites {
			// Clusters up to the whole lattice: the sum is the lattice's
			// own value (inclusion-exclusion), with no truncation left.
			out[k].Error, out[k].Trusted = 0, true
		}
	}
	return out
}

// PerSite returns the partial sums of an extensive series divided by the
// number of sites.
func (r *Result) PerSite(series []float64) []float64 {
	out := make([]float64, len(series))
	for i, v := range series {
		out[i] = v / float64(r.NumSites)
	}
	return out
}
