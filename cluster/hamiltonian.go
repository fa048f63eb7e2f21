package cluster

import (
	"fmt"
	"math"
)

// Hamiltonian is H = sum_k Coeffs[k] Ops[k] on the local qubits
// 0..NumQubits-1. Repeated operators simply add.
type Hamiltonian struct {
	NumQubits int
	Ops       []PauliString
	Coeffs    []float64
}

// IsReal reports whether every operator has an even number of Y letters,
// so that H is a real symmetric matrix in the computational basis.
func (h *Hamiltonian) IsReal() bool {
	for _, p := range h.Ops {
		if !p.IsReal() {
			return false
		}
	}
	return true
}

// realMatrix reports whether the matrix of H is real: operators with an
// odd number of Y letters are allowed when their coefficient is zero,
// which is common at the start of a fit.
func (h *Hamiltonian) realMatrix() bool {
	for k, p := range h.Ops {
		if !p.IsReal() && h.Coeffs[k] != 0 {
			return false
		}
	}
	return true
}

// Dim returns the Hilbert space dimension 2^NumQubits.
func (h *Hamiltonian) Dim() int { return 1 << uint(h.NumQubits) }

// check reports a malformed Hamiltonian: mismatched lengths, an operator
// outside the qubits or a coefficient that is not finite.
func (h *Hamiltonian) check() error {
	if h.NumQubits < 0 {
		return fmt.Errorf("cluster: negative number of qubits %d", h.NumQubits)
	}
	if len(h.Ops) != len(h.Coeffs) {
		return fmt.Errorf("cluster: hamiltonian has %d operators but %d coefficients", len(h.Ops), len(h.Coeffs))
	}
	for k, p := range h.Ops {
		if !p.within(h.NumQubits) {
			return fmt.Errorf("cluster: operator %d acts outside qubits 0..%d", k, h.NumQubits-1)
		}
		if c := h.Coeffs[k]; math.IsNaN(c) || math.IsInf(c, 0) {
			return fmt.Errorf("cluster: coefficient %d is %v", k, c)
		}
	}
	return nil
}
