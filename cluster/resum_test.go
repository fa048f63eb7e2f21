package cluster_test

import (
	"math"
	"testing"

	"warmfit/cluster"
)

// partialSumsLog1p returns the partial sums of ln(1+x) = sum_k (-1)^{k+1}
// x^k / k, an alternating series that converges slowly at x = 1.
func partialSumsLog1p(x float64, n int) []float64 {
	s := make([]float64, n)
	sum := 0.0
	for k := 1; k <= n; k++ {
		sum += math.Pow(-1, float64(k+1)) * math.Pow(x, float64(k)) / float64(k)
		s[k-1] = sum
	}
	return s
}

// The Euler transform of 1 - 1/2 + 1/3 - ... is sum_k 1/((k+1) 2^(k+1))
// (Abramowitz and Stegun 3.6.27 applied to a_j = 1/(j+1), whose k-th
// forward difference is (-1)^k/(k+1)), so with 20 terms it misses ln 2 by
// less than 2^-20, where the bare partial sum misses by 1/40. Wynn's
// epsilon accelerates the same series still faster (common knowledge for
// logarithmically alternating series).
func TestEulerAndWynnOnLog2(t *testing.T) {
	s := partialSumsLog1p(1, 20)
	if err := math.Abs(cluster.EulerSum(s, 1) - math.Ln2); err > math.Ldexp(1, -20) {
		t.Errorf("Euler transform misses ln 2 by %.3g", err)
	}
	var direct float64
	for k := 0; k < 20; k++ {
		direct += 1 / (float64(k+1) * math.Ldexp(1, k+1))
	}
	if got := cluster.EulerSum(s, 1); math.Abs(got-direct) > 1e-14 {
		t.Errorf("Euler transform %.16g, closed form of its truncation %.16g", got, direct)
	}
	// Terms before start are summed directly: a start past the end gives
	// the bare sum, and start = 3 transforms the tail 1/3 - 1/4 + ...
	if got := cluster.EulerSum(s, 21); got != s[19] {
		t.Errorf("Euler transform with an empty tail %.16g, bare %.16g", got, s[19])
	}
	if err := math.Abs(cluster.EulerSum(s, 3) - math.Ln2); err > 1e-6 {
		t.Errorf("Euler transform from order 3 misses ln 2 by %.3g", err)
	}
	if err := math.Abs(cluster.WynnCycles(s, 4) - math.Ln2); err > 1e-8 {
		t.Errorf("Wynn epsilon (4 cycles) misses ln 2 by %.3g", err)
	}
}
