package validate

import (
	"fmt"

	"warmfit/cluster"
	"warmfit/lattice"
)

// ExactThermal returns the Gibbs state exp(-beta H)/Z of the whole system
// of n qubits (sites 0..n-1) with H = sum_k terms[k].Coeff P_k, by dense
// exact diagonalisation. It refuses n > cluster.MaxDenseQubits; the
// matrix-free typicality estimator (Typical, TypicalThermal) covers larger
// systems. Expect more than a second at 10 qubits and minutes at 12.
func ExactThermal(n int, terms []lattice.Term, beta float64) (*cluster.Thermal, error) {
	h, err := exactHamiltonian(n, terms)
	if err != nil {
		return nil, err
	}
	s, err := cluster.Diagonalize(h)
	if err != nil {
		return nil, fmt.Errorf("validate: %w", err)
	}
	th, err := cluster.NewThermal(s, beta)
	if err != nil {
		return nil, fmt.Errorf("validate: %w", err)
	}
	return th, nil
}

// exactHamiltonian converts terms on sites 0..n-1 into a cluster
// Hamiltonian, checking sizes, sites and coefficients.
func exactHamiltonian(n int, terms []lattice.Term) (*cluster.Hamiltonian, error) {
	if n < 1 {
		return nil, fmt.Errorf("validate: exact diagonalisation needs at least one qubit, have %d", n)
	}
	if n > cluster.MaxDenseQubits {
		return nil, fmt.Errorf("validate: %d qubits exceed the dense exact-diagonalisation limit of %d (cluster.MaxDenseQubits); use the matrix-free typicality estimate (validate.Typical) instead",
			n, cluster.MaxDenseQubits)
	}
	h, err := cluster.NewHamiltonian(n, terms)
	if err != nil {
		return nil, fmt.Errorf("validate: %w", err)
	}
	return h, nil
}
