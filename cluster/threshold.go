package cluster

import (
	"math"

	"warmfit/lattice"
)

// ThresholdBound is a sufficient condition for the convergence of the
// high-temperature cluster expansion of log Z.
type ThresholdBound struct {
	// Degree is the largest number of other non-zero terms whose support
	// overlaps one term's support (the degree of the dual interaction
	// graph).
	Degree int
	// MaxCoeff is max_k |lambda_k|.
	MaxCoeff float64
	// Beta is the bound: the criterion guarantees convergence for
	// beta < Beta, with the caveat on its constant given at SufficientBeta.
	Beta float64
}

// SufficientBeta returns the inverse temperature below which the cluster
// expansion of log Z converges for the Hamiltonian sum_k coeffs[k] P_k with
// Pauli terms of unit norm. It uses the Kotecký–Preiss type criterion in
// the form applied to high-temperature Hamiltonian learning by Haah,
// Kothari and Tang (arXiv 2108.04842):
//
//	beta < 1 / (2 e (d + 1) max|lambda|),
//
// with d the degree of the dual interaction graph. The constant is the one
// recorded in shared/references.md as recalled rather than re-derived, so
// the bound is reported as a guide; warmfit's trust verdicts come from the
// measured convergence of the series, which is usually far less strict.
func SufficientBeta(terms []lattice.Term, coeffs []float64) ThresholdBound {
	bySite := map[int][]int{}
	var b ThresholdBound
	for k, t := range terms {
		if coeffs[k] == 0 {
			continue
		}
		b.MaxCoeff = math.Max(b.MaxCoeff, math.Abs(coeffs[k]))
		for _, s := range t.Sites {
			bySite[s] = append(bySite[s], k)
		}
	}
	seen := map[int]int{}
	for k, t := range terms {
		if coeffs[k] == 0 {
			continue
		}
		deg := 0
		for _, s := range t.Sites {
			for _, j := range bySite[s] {
				if j != k && seen[j] != k+1 {
					seen[j] = k + 1
					deg++
				}
			}
		}
		b.Degree = max(b.Degree, deg)
	}
	if b.MaxCoeff == 0 {
		b.Beta = math.Inf(1)
		return b
	}
	b.Beta = 1 / (2 * math.E * float64(b.Degree+1) * b.MaxCoeff)
	return b
}
