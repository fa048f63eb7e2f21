package cluster

import "math"

// Resummation of linked-cluster partial sums S_1..S_L (S_o is the sum to
// order o), in the two forms used in the numerical linked-cluster
// literature (Rigol, Bryant, Singh, arXiv 0706.3254; Tang, Khatami, Rigol,
// Comput. Phys. Commun. 184, 557 (2013)). Below the temperature where the
// bare sums converge, the order contributions u_o = S_o - S_{o-1} of
// quantum spin models typically alternate in sign and grow, and both
// transforms extend the range where the series can be read.

// EulerSum returns the Euler transform of the partial sums s (s[o-1] is
// the sum to order o) applied to the terms from order start on:
//
//	E = S_{start-1} + sum_{k=0}^{L-start} (-1)^k Δ^k a_0 / 2^{k+1},
//	a_j = (-1)^j u_{start+j},  Δ^k a_0 = sum_{m=0}^{k} (-1)^{k-m} C(k, m) a_m,
//
// the classic transform of the alternating tail sum_j (-1)^j a_j
// (Abramowitz and Stegun 3.6.27) truncated at the last available
// difference; the orders before start are summed directly. start below 1
// is taken as 1; a start beyond the last order returns the bare sum.
func EulerSum(s []float64, start int) float64 {
	return eulerTangent(s, nil, start, nil)
}

// eulerTangent returns EulerSum(s, start) and, when ds is not nil, stores
// in out[p] the transform of ds[p] (the transform is linear).
func eulerTangent(s []float64, ds [][]float64, start int, out []float64) float64 {
	L := len(s)
	start = max(start, 1)
	if L == 0 {
		return 0
	}
	if start > L {
		for p := range ds {
			out[p] = ds[p][L-1]
		}
		return s[L-1]
	}
	// coef[j]: the weight of a_j in the truncated transform,
	// sum_{k>=j} (-1)^k (-1)^{k-j} C(k, j) / 2^{k+1}.
	n := L - start + 1
	coef := make([]float64, n)
	for k := 0; k < n; k++ {
		binom := 1.0
		for j := 0; j <= k; j++ {
			if j > 0 {
				binom = binom * float64(k-j+1) / float64(j)
			}
			sign := 1.0
			if j%2 == 1 { // (-1)^k (-1)^{k-j} = (-1)^j
				sign = -1
			}
			coef[j] += sign * binom / math.Ldexp(1, k+1)
		}
	}
	apply := func(x []float64) float64 {
		base := 0.0
		if start >= 2 {
			base = x[start-2]
		}
		sum := base
		for j := 0; j < n; j++ {
			o := start + j // order of the term
			u := x[o-1]
			if o >= 2 {
				u -= x[o-2]
			}
			a := u
			if j%2 == 1 {
				a = -u
			}
			sum += coef[j] * a
		}
		return sum
	}
	for p, d := range ds {
		out[p] = apply(d)
	}
	return apply(s)
}

// WynnCycles returns Wynn's epsilon transform eps_{2k} (see Wynn) of the
// last 2k+1 distinct partial sums of s, k = cycles: the form with a fixed
// number of cycles used for linked-cluster series, which leaves the
// lowest orders out of the extrapolation. Repeated partial sums are
// dropped first; with too few sums the number of cycles is lowered, and
// where the table becomes singular the last good even column is used.
func WynnCycles(s []float64, cycles int) float64 {
	v, _ := wynnTangent(s, nil, cycles)
	return v
}

// wynnTangent returns WynnCycles(s, cycles) and its derivatives along ds
// (ds[p][o] = d s[o] / d theta_p), by differentiating the epsilon
// recursion: d eps_{k+1}^(n) = d eps_{k-1}^(n+1) - (d eps_k^(n+1) -
// d eps_k^(n)) / (eps_k^(n+1) - eps_k^(n))^2.
func wynnTangent(s []float64, ds [][]float64, cycles int) (float64, []float64) {
	P := len(ds)
	var keep []int
	for i, v := range s {
		if len(keep) > 0 && math.Abs(v-s[keep[len(keep)-1]]) <= 1e-15*math.Max(1, math.Abs(v)) {
			continue
		}
		keep = append(keep, i)
	}
	cycles = min(cycles, (len(keep)-1)/2)
	last := len(s) - 1
	lastD := func() []float64 {
		out := make([]float64, P)
		for p := range ds {
			out[p] = ds[p][last]
		}
		return out
	}
	if cycles < 1 {
		return s[last], lastD()
	}
	keep = keep[len(keep)-(2*cycles+1):]
	m := len(keep)
	// Columns eps_{k-1} (prev) and eps_k (cur) with their tangents.
	prev := make([]float64, m+1)
	prevD := make([][]float64, m+1)
	cur := make([]float64, m)
	curD := make([][]float64, m)
	for i, o := range keep {
		cur[i] = s[o]
		curD[i] = make([]float64, P)
		for p := range ds {
			curD[i][p] = ds[p][o]
		}
	}
	for i := range prevD {
		prevD[i] = make([]float64, P)
	}
	best, bestD := s[last], lastD()
	for k := 0; len(cur) > 1; k++ {
		next := make([]float64, len(cur)-1)
		nextD := make([][]float64, len(cur)-1)
		for n := range next {
			d := cur[n+1] - cur[n]
			if d == 0 || math.IsNaN(d) {
				return best, bestD
			}
			next[n] = prev[n+1] + 1/d
			nextD[n] = make([]float64, P)
			for p := 0; p < P; p++ {
				nextD[n][p] = prevD[n+1][p] - (curD[n+1][p]-curD[n][p])/(d*d)
			}
		}
		prev, prevD, cur, curD = cur, curD, next, nextD
		if k%2 == 1 {
			v := cur[len(cur)-1]
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return best, bestD
			}
			best, bestD = v, curD[len(cur)-1]
		}
	}
	return best, bestD
}
