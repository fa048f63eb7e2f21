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

// fillReal writes the dense real matrix of H, row-major, into a (length
// Dim()^2). Every operator is a signed permutation, so this costs
// O(len(Ops) * Dim) after clearing. Operators with an odd number of Y
// letters must have zero coefficients.
func (h *Hamiltonian) fillReal(a []float64) {
	d := h.Dim()
	clear(a[:d*d])
	for k, p := range h.Ops {
		c := h.Coeffs[k]
		if c == 0 {
			continue
		}
		for b := 0; b < d; b++ {
			a[int(uint64(b)^p.X)*d+b] += c * p.realSign(uint64(b))
		}
	}
}

// fillComplex writes the real and imaginary parts of the dense Hermitian
// matrix of H, row-major, into re and im.
func (h *Hamiltonian) fillComplex(re, im []float64) {
	d := h.Dim()
	clear(re[:d*d])
	clear(im[:d*d])
	for k, p := range h.Ops {
		c := h.Coeffs[k]
		if c == 0 {
			continue
		}
		for b := 0; b < d; b++ {
			idx := int(uint64(b)^p.X)*d + b
			switch p.phaseExp(uint64(b)) {
			case 0:
				re[idx] += c
			case 1:
				im[idx] += c
			case 2:
				re[idx] -= c
			case 3:
				im[idx] -= c
			}
		}
	}
}
