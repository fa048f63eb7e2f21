package fit

import (
	"math"
	"math/rand/v2"
	"testing"
)

// Worked example of Benjamini and Hochberg (J. R. Stat. Soc. B 57 (1995)
// 289, section 4; p-values quoted from memory): 15 p-values at q = 0.05,
// the step-up rule rejects the four smallest (p_(4) = 0.0095 <= 4q/15 =
// 0.0133, p_(5) = 0.0201 > 0.0167, and no larger k qualifies).
func TestBenjaminiHochbergWorkedExample(t *testing.T) {
	p := []float64{0.0201, 0.0001, 0.7590, 0.0004, 0.0278, 0.0019, 0.0298, 0.0344,
		0.0459, 0.3240, 0.4262, 0.5719, 0.6528, 0.0095, 1.000}
	reject, cutoff := BenjaminiHochberg(p, 0.05)
	n := 0
	for i, r := range reject {
		if r {
			n++
			if p[i] > 0.0095 {
				t.Errorf("rejected p = %v above 0.0095", p[i])
			}
		}
	}
	if n != 4 || cutoff != 0.0095 {
		t.Errorf("rejected %d with cutoff %v, want 4 and 0.0095", n, cutoff)
	}
}

// Under the global null with independent uniform p-values the rule's FDR
// equals P(any rejection) and is exactly q (Benjamini and Hochberg 1995,
// Theorem 1 with m0 = m). 4000 seeded trials give the rate to about
// +-0.0035 (binomial standard error); accept 4 of those.
func TestBenjaminiHochbergNullRate(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	const trials, m, q = 4000, 30, 0.05
	any := 0
	p := make([]float64, m)
	for range trials {
		for i := range p {
			p[i] = rng.Float64()
		}
		if _, c := BenjaminiHochberg(p, q); c > 0 {
			any++
		}
	}
	rate := float64(any) / trials
	if se := math.Sqrt(q * (1 - q) / trials); math.Abs(rate-q) > 4*se {
		t.Errorf("null rejection rate %v, want %v +- %v", rate, q, 4*se)
	}
}

// NewSignificance: z = |theta|/stderr and two-sided p = erfc(z/sqrt 2);
// 1.959964 is the two-sided 5% point of the normal distribution
// (standard tables).
func TestNewSignificance(t *testing.T) {
	s := NewSignificance([]float64{-1.959964, 10, 0.1, 0}, []float64{1, 1, 1, 0}, 0.05)
	if math.Abs(s.PValue[0]-0.05) > 1e-6 || s.Z[3] != 0 || s.PValue[3] != 1 {
		t.Errorf("p-values %v, z %v", s.PValue, s.Z)
	}
	// Sorted p: 1.5e-23, 0.05, 0.92, 1: BH at 0.05 with m = 4 rejects only
	// the first (0.05 > 2*0.05/4).
	if !s.Significant[1] || s.Significant[0] || s.Significant[2] || s.Significant[3] || s.Count != 1 {
		t.Errorf("significant %v count %d", s.Significant, s.Count)
	}
}
