package cluster

import (
	"math"
	"testing"
)

// The tangents of the Wynn and Euler transforms agree with central
// differences of the transforms (common practice), on the partial sums of
// ln(1 + theta x) in powers of x, whose derivative in theta is known
// term by term.
func TestResumTangents(t *testing.T) {
	const x, n = 0.9, 12
	sums := func(theta float64) ([]float64, []float64) {
		s, ds := make([]float64, n), make([]float64, n)
		var sum, dsum float64
		for k := 1; k <= n; k++ {
			sign := math.Pow(-1, float64(k+1))
			sum += sign * math.Pow(theta*x, float64(k)) / float64(k)
			dsum += sign * math.Pow(x, float64(k)) * math.Pow(theta, float64(k-1))
			s[k-1], ds[k-1] = sum, dsum
		}
		return s, ds
	}
	const theta, h = 1.05, 1e-6
	s, ds := sums(theta)
	up, _ := sums(theta + h)
	down, _ := sums(theta - h)
	for cycles := 1; cycles <= 4; cycles++ {
		_, d := wynnTangent(s, [][]float64{ds}, cycles)
		fd := (WynnCycles(up, cycles) - WynnCycles(down, cycles)) / (2 * h)
		if math.Abs(d[0]-fd) > 1e-6 {
			t.Errorf("Wynn %d cycles: tangent %.10g, central difference %.10g", cycles, d[0], fd)
		}
	}
	out := make([]float64, 1)
	eulerTangent(s, [][]float64{ds}, 4, out)
	fd := (EulerSum(up, 4) - EulerSum(down, 4)) / (2 * h)
	if math.Abs(out[0]-fd) > 1e-7 {
		t.Errorf("Euler: tangent %.10g, central difference %.10g", out[0], fd)
	}
}
