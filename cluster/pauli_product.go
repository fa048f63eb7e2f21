package cluster

import "math/bits"

// Mul returns the Pauli string r and the phase exponent k (0..3) with
// p q = i^k r. With P = i^{nY} X^x Z^z (see PauliString) and
// Z^a X^b = (-1)^{|a&b|} X^b Z^a, the product is
// i^{nY(p)+nY(q)-nY(r)} (-1)^{|z_p & x_q|} X^{x_p^x_q} Z^{z_p^z_q}.
// k is even exactly when p and q commute; when they anticommute the
// commutator is [p, q] = 2 i^k r with i^k = ±i.
func (p PauliString) Mul(q PauliString) (r PauliString, k int) {
	r = PauliString{X: p.X ^ q.X, Z: p.Z ^ q.Z}
	k = p.NumY() + q.NumY() - r.NumY() + 2*bits.OnesCount64(p.Z&q.X)
	return r, ((k % 4) + 4) % 4
}
