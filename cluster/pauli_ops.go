package cluster

import "math/bits"

// phaseExp returns k in 0..3 with P|b> = i^k |b XOR X>.
func (p PauliString) phaseExp(b uint64) int {
	return (p.NumY() + 2*bits.OnesCount64(b&p.Z)) & 3
}

// realSign returns the real factor s(b) = ±1 of the matrix element
// <b^X|P|b> = i^{NumY mod 2} s(b): the matrix of P itself when P is real
// and of P/i when P has an odd number of Y letters (then P/i is real and
// antisymmetric).
func (p PauliString) realSign(b uint64) float64 {
	if (p.NumY()>>1+bits.OnesCount64(b&p.Z))&1 == 0 {
		return 1
	}
	return -1
}

// within reports whether p acts only on qubits 0..n-1.
func (p PauliString) within(n int) bool {
	if n >= MaxQubits {
		return true
	}
	return p.Support()>>uint(n) == 0
}
