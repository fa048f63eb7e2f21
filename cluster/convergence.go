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
	// Error estimates the truncation error as the largest change over the
	// last two orders: on bipartite lattices odd and even orders often
	// come in equal pairs, so one zero step proves nothing.
	Error    float64
	Resummed float64 // Wynn epsilon acceleration of the partial sums
	Trusted  bool    // Error <= the tolerance asked for
}

// Converge judges the partial sums series[o] (order o+1) of a quantity
// whose first non-trivial order is first (the size of the smallest
// cluster that can hold it). With fewer than two orders past first there
// is no evidence of convergence and the result is untrusted, unless the
// series is identically zero.
func Converge(series []float64, first int, tol float64) Convergence {
	L := len(series)
	if first < 1 {
		first = 1
	}
	c := Convergence{Value: series[L-1], Resummed: series[L-1]}
	if L < first {
		c.Error = math.Inf(1)
		return c
	}
	s := series[first-1:]
	switch len(s) {
	case 1:
		c.Error = math.Inf(1)
		if s[0] == 0 {
			c.Error = 0
		}
	case 2:
		c.LastStep = s[1] - s[0]
		c.Error = math.Inf(1)
		if s[0] == 0 && s[1] == 0 {
			c.Error = 0
		}
	default:
		n := len(s)
		c.LastStep = s[n-1] - s[n-2]
		c.Error = math.Max(math.Abs(c.LastStep), math.Abs(s[n-2]-s[n-3]))
	}
	c.Resummed = Wynn(s)
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
// tolerance tol (absolute, in units of the expectation value).
func (r *Result) TermConvergence(terms []lattice.Term, tol float64) []Convergence {
	out := make([]Convergence, len(terms))
	series := make([]float64, r.Order)
	for k, t := range terms {
		for o := range series {
			series[o] = r.Expect[o][k]
		}
		out[k] = Converge(series, len(t.Sites), tol)
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
