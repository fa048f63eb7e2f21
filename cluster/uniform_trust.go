package cluster

import (
	"math"
	"slices"
)

// DefaultTrustTolerance is the default agreement asked of a curve, per
// site in the quantity's natural unit (nats, coupling energy units, k_B,
// 1/energy for chi).
const DefaultTrustTolerance = 1e-3

// TrustOptions sets how a curve is resummed and judged.
type TrustOptions struct {
	// Tolerance is the agreement asked for; <= 0 means
	// DefaultTrustTolerance.
	Tolerance float64
	// EulerStart is the first order of the Euler-transformed tail; <= 0
	// means the later half of the orders, order L/2 + 1 on.
	EulerStart int
	// WynnCycles is the number of Wynn epsilon cycles; <= 0 means
	// max(1, (L-1)/4), which extrapolates from about the last half of the
	// partial sums.
	WynnCycles int
	// BareOrders is the number of highest orders whose bare sums must
	// agree; <= 0 means 3 (the last two steps), and 2 is the weakest.
	// Two orders are not enough on bipartite lattices, where a site
	// expansion can add almost nothing at every other order: the Ising
	// model on the square lattice has S_9 within 4e-4 of S_8 at T = 3
	// while both miss Onsager's energy by 1.3e-2.
	BareOrders int
	// Order judges the partial sums up to this order instead of the
	// result's highest (0 means the highest), so that one evaluation
	// gives the curves of every order.
	Order int
}

// Trust says which estimate of a curve point holds.
type Trust int

const (
	// Untrusted: neither the bare sums nor the resummations agree.
	Untrusted Trust = iota
	// TrustBare: the bare sums of the last orders agree.
	TrustBare
	// TrustResummed: the bare sums do not agree, but the Wynn and Euler
	// resummations agree with each other and between the last two orders.
	TrustResummed
)

// String names the trust level.
func (t Trust) String() string {
	switch t {
	case TrustBare:
		return "bare"
	case TrustResummed:
		return "resummed"
	}
	return "untrusted"
}

// Curve is one quantity at one field, resummed and judged on the
// temperature grid at the highest order L.
type Curve struct {
	Quantity     Quantity
	Field        float64
	Temperatures []float64
	Order        int
	Tolerance    float64
	EulerStart   int
	WynnCycles   int
	BareOrders   int

	// Bare and BarePrev are the partial sums at orders L and L-1; Wynn,
	// WynnPrev, Euler, EulerPrev the resummations of the partial sums up
	// to those orders. BareSpread is the largest difference between the
	// bare sums of the last BareOrders orders.
	Bare, BarePrev   []float64
	BareSpread       []float64
	Wynn, WynnPrev   []float64
	Euler, EulerPrev []float64

	// Value is the recommended estimate: the bare sum where it is
	// trusted, the mean of Wynn and Euler where they are, and the bare sum
	// (marked Untrusted) elsewhere.
	Value []float64
	Trust []Trust
	// BareReach is the lowest grid temperature from which upwards every
	// point has trusted bare sums; ResummedReach the same for trusted
	// bare sums or resummations. +Inf when even the highest temperature
	// is not trusted.
	BareReach, ResummedReach float64

	// DValue[p][i] is d Value[i] / d Values[p] (the derivative of the
	// estimate actually chosen); nil when derivatives are not available
	// (see UniformResult.Derivative).
	DValue [][]float64
}

// Curve resums quantity q at field index f and judges it point by point:
// the bare sum is trusted where the bare sums of the last BareOrders
// orders lie within tol of each other (by default |S_L - S_{L-1}| and
// |S_{L-1} - S_{L-2}|, see TrustOptions.BareOrders), the resummation
// where |W_L - W_{L-1}|, |E_L - E_{L-1}| and |W_L - E_L| are all <= tol
// (W Wynn, E Euler). The reaches are the lower ends of the trusted ranges
// contiguous with the highest temperature: a point trusted below an
// untrusted one is left out of the reach but keeps its own mark.
func (r *UniformResult) Curve(q Quantity, f int, opt TrustOptions) Curve {
	L := r.Order
	if opt.Order > 0 {
		L = min(opt.Order, r.Order)
	}
	c := Curve{Quantity: q, Field: r.Fields[f], Temperatures: r.Temperatures, Order: L,
		Tolerance: opt.Tolerance, EulerStart: opt.EulerStart, WynnCycles: opt.WynnCycles, BareOrders: opt.BareOrders}
	if c.BareOrders <= 0 {
		c.BareOrders = 3
	}
	c.BareOrders = max(c.BareOrders, 2)
	if c.Tolerance <= 0 {
		c.Tolerance = DefaultTrustTolerance
	}
	if c.EulerStart <= 0 {
		c.EulerStart = L/2 + 1
	}
	if c.WynnCycles <= 0 {
		c.WynnCycles = max(1, (L-1)/4)
	}
	sums := r.PartialSums(q, f)[:L]
	var derivs [][][]float64
	for p := range r.Couplings {
		d, err := r.Derivative(q, f, p)
		if err != nil {
			derivs = nil
			break
		}
		derivs = append(derivs, d[:L])
	}
	nT := len(r.Temperatures)
	grid := func() []float64 { return make([]float64, nT) }
	c.Bare, c.BarePrev, c.BareSpread = grid(), grid(), grid()
	c.Wynn, c.WynnPrev, c.Euler, c.EulerPrev = grid(), grid(), grid(), grid()
	c.Value, c.Trust = grid(), make([]Trust, nT)
	if derivs != nil {
		c.DValue = make([][]float64, len(derivs))
		for p := range c.DValue {
			c.DValue[p] = grid()
		}
	}
	series := make([]float64, L)
	dseries := make([][]float64, len(derivs))
	for p := range dseries {
		dseries[p] = make([]float64, L)
	}
	eulerD := make([]float64, len(derivs))
	for i := 0; i < nT; i++ {
		for o := 0; o < L; o++ {
			series[o] = sums[o][i]
			for p := range derivs {
				dseries[p][o] = derivs[p][o][i]
			}
		}
		c.Bare[i] = series[L-1]
		c.BareSpread[i] = math.Inf(1)
		if L >= c.BareOrders {
			lo, hi := series[L-1], series[L-1]
			for _, v := range series[L-c.BareOrders:] {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
			c.BareSpread[i] = hi - lo
		}
		c.Wynn[i], _ = wynnTangent(series, nil, c.WynnCycles)
		c.Euler[i] = EulerSum(series, c.EulerStart)
		if L >= 2 {
			c.BarePrev[i] = series[L-2]
			c.WynnPrev[i] = WynnCycles(series[:L-1], c.WynnCycles)
			c.EulerPrev[i] = EulerSum(series[:L-1], c.EulerStart)
		}
		c.Trust[i] = c.judge(i, L)
		c.Value[i] = c.Bare[i]
		for p := range derivs {
			c.DValue[p][i] = dseries[p][L-1]
		}
		if c.Trust[i] == TrustResummed {
			c.Value[i] = (c.Wynn[i] + c.Euler[i]) / 2
			if derivs != nil {
				_, wd := wynnTangent(series, dseries, c.WynnCycles)
				eulerTangent(series, dseries, c.EulerStart, eulerD)
				for p := range derivs {
					c.DValue[p][i] = (wd[p] + eulerD[p]) / 2
				}
			}
		}
	}
	c.BareReach, c.ResummedReach = c.reaches()
	return c
}

// judge returns the trust of grid point i.
func (c *Curve) judge(i, L int) Trust {
	if L < 2 {
		return Untrusted
	}
	tol := c.Tolerance
	near := func(a, b float64) bool { return math.Abs(a-b) <= tol }
	if c.BareSpread[i] <= tol {
		return TrustBare
	}
	if near(c.Wynn[i], c.WynnPrev[i]) && near(c.Euler[i], c.EulerPrev[i]) && near(c.Wynn[i], c.Euler[i]) {
		return TrustResummed
	}
	return Untrusted
}

// reaches walks the grid from the highest temperature down.
func (c *Curve) reaches() (bare, resummed float64) {
	idx := make([]int, len(c.Temperatures))
	for i := range idx {
		idx[i] = i
	}
	slices.SortFunc(idx, func(a, b int) int {
		switch {
		case c.Temperatures[a] > c.Temperatures[b]:
			return -1
		case c.Temperatures[a] < c.Temperatures[b]:
			return 1
		}
		return 0
	})
	bare, resummed = math.Inf(1), math.Inf(1)
	bareOpen, resOpen := true, true
	for _, i := range idx {
		t := c.Temperatures[i]
		bareOpen = bareOpen && c.Trust[i] == TrustBare
		resOpen = resOpen && c.Trust[i] != Untrusted
		if bareOpen {
			bare = t
		}
		if resOpen {
			resummed = t
		}
	}
	return bare, resummed
}
