package cluster

import (
	"fmt"
	"math"

	"warmfit/lattice"
)

// NewHamiltonian is the Hamiltonian sum_k terms[k].Coeff P_k on qubits
// 0..n-1: the one conversion of a model's terms to an operator, used by
// every exact method. Terms must be in canonical form within n qubits
// (lattice.CheckTerms) with finite coefficients; n may exceed
// MaxDenseQubits (matrix-free methods take it), but not MaxQubits.
func NewHamiltonian(n int, terms []lattice.Term) (*Hamiltonian, error) {
	if n < 1 || n > MaxQubits {
		return nil, fmt.Errorf("cluster: %d qubits outside 1..%d", n, MaxQubits)
	}
	if err := lattice.CheckTerms(n, terms); err != nil {
		return nil, err
	}
	ops, err := TermPaulis(terms)
	if err != nil {
		return nil, err
	}
	coeffs := make([]float64, len(terms))
	for k, t := range terms {
		if math.IsNaN(t.Coeff) || math.IsInf(t.Coeff, 0) {
			return nil, fmt.Errorf("term %d (%s): coefficient %v is not finite", k, t.Key(), t.Coeff)
		}
		coeffs[k] = t.Coeff
	}
	return &Hamiltonian{NumQubits: n, Ops: ops, Coeffs: coeffs}, nil
}
