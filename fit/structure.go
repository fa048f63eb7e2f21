package fit

import (
	"math"
	"sort"
)

// Significance flags the fitted parameters that differ from zero beyond
// their statistical error, for structure learning with a wide template
// (for example every 2-local Pauli string): z_q = |theta_q| / stderr_q,
// two-sided normal p-values p_q = erfc(z_q / sqrt 2), and the
// Benjamini–Hochberg rule at false-discovery rate Q (Benjamini and
// Hochberg, J. R. Stat. Soc. B 57 (1995) 289): with the p-values sorted,
// p_(1) <= ... <= p_(m), reject the hypotheses theta = 0 of the k
// smallest, k the largest index with p_(k) <= k Q / m. The expected
// fraction of false flags among the flagged is then at most Q for
// independent (or positively dependent) estimates.
type Significance struct {
	Q           float64
	Z           []float64 // per parameter
	PValue      []float64 // per parameter
	Significant []bool    // per parameter
	Count       int       // number of significant parameters
	Cutoff      float64   // largest p-value flagged; 0 when none
}

// NewSignificance applies the Benjamini–Hochberg rule at rate q to
// estimates with standard errors. Parameters with zero standard error
// (exact data) are significant when non-zero.
func NewSignificance(theta, stderr []float64, q float64) *Significance {
	m := len(theta)
	s := &Significance{Q: q, Z: make([]float64, m), PValue: make([]float64, m), Significant: make([]bool, m)}
	for i, t := range theta {
		switch {
		case stderr[i] > 0:
			s.Z[i] = math.Abs(t) / stderr[i]
		case t != 0:
			s.Z[i] = math.Inf(1)
		}
		s.PValue[i] = math.Erfc(s.Z[i] / math.Sqrt2)
	}
	reject, cutoff := BenjaminiHochberg(s.PValue, q)
	s.Significant, s.Cutoff = reject, cutoff
	for _, r := range reject {
		if r {
			s.Count++
		}
	}
	return s
}

// BenjaminiHochberg returns which of the p-values are rejected at
// false-discovery rate q by the step-up rule, and the largest rejected
// p-value (0 when none is rejected).
func BenjaminiHochberg(p []float64, q float64) (reject []bool, cutoff float64) {
	m := len(p)
	idx := make([]int, m)
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return p[idx[a]] < p[idx[b]] })
	k := 0
	for r := m; r >= 1; r-- {
		if p[idx[r-1]] <= float64(r)*q/float64(m) {
			k = r
			break
		}
	}
	reject = make([]bool, m)
	for r := 0; r < k; r++ {
		reject[idx[r]] = true
	}
	if k > 0 {
		cutoff = p[idx[k-1]]
	}
	return reject, cutoff
}
