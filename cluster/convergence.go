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

// tailSafety multiplies the geometric tail estimate: the ratio of two
// pair steps is itself uncertain.
const tailSafety = 2

// Converge judges the partial sums series[o] (order o+1) of a quantity
// whose first non-trivial order is first (the size of the smallest
// cluster that can hold it; the sum below that order is zero).
//
// The error estimate works on steps over two orders, D1 = S_L - S_{L-2}
// and D2 = S_{L-2} - S_{L-4}, because on bipartite lattices odd and even
// orders contribute very unequally (often one of each pair adds nothing),
// so single steps alternate between large and tiny. With r = |D1|/|D2| < 1
// the remaining tail is estimated as geometric, |D1| r/(1-r), times a
// safety factor of 2. (The last single step is no floor: in a pair
// pattern it is a whole large step that the pair ratio already discounts.)
// With r >= 1
// the series is not converging: the error is |D1| and the value is
// untrusted. When the two single steps inside the last pair largely
// cancel (|D1| below half the larger of them) the series oscillates and
// the error is that larger single step. With fewer than four orders past first there is not enough
// evidence; the error is then the largest of the last two single steps
// (infinite when there is only one order).
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
	allZero := true
	for _, v := range s {
		allZero = allZero && v == 0
	}
	switch {
	case allZero:
		c.Error = 0
	case n >= 5:
		d1 := math.Abs(s[n-1] - s[n-3])
		d2 := math.Abs(s[n-3] - s[n-5])
		last2 := math.Max(math.Abs(c.LastStep), math.Abs(s[n-2]-s[n-3]))
		switch {
		case d1 < last2/2:
			// The two steps of the last pair largely cancel: the series
			// oscillates, and a small pair step is luck, not convergence.
			c.Error = last2
		case d1 < d2:
			r := d1 / d2
			c.Error = tailSafety * d1 * r / (1 - r)
		default:
			c.Error = math.Max(d1, math.Abs(c.LastStep))
		}
	case n >= 3:
		c.Error = math.Max(math.Abs(c.LastStep), math.Abs(s[n-2]-s[n-3]))
	}
	c.Resummed = Wynn(s[1:])
	c.Trusted = c.Error <= tol
	return c
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
