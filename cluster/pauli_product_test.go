package cluster

import (
	"math/cmplx"
	"testing"
)

// TestMulMatchesMatrices checks p q = i^k r on every basis state for all
// pairs of two-qubit Pauli strings, against the matrix action of Apply
// (the defining action P|b> = i^{nY} (-1)^{|b&Z|} |b^X>; textbook
// Pauli algebra, from memory: XY = iZ, YZ = iX, ZX = iY).
func TestMulMatchesMatrices(t *testing.T) {
	var all []PauliString
	for x := uint64(0); x < 4; x++ {
		for z := uint64(0); z < 4; z++ {
			all = append(all, PauliString{X: x, Z: z})
		}
	}
	for _, p := range all {
		for _, q := range all {
			r, k := p.Mul(q)
			if (k%2 == 0) != p.Commutes(q) {
				t.Errorf("%v %v: phase exponent %d but Commutes=%v", p, q, k, p.Commutes(q))
			}
			for b := uint64(0); b < 4; b++ {
				mid, ph1 := q.Apply(b)
				out, ph2 := p.Apply(mid)
				want, ph3 := r.Apply(b)
				if out != want || cmplx.Abs(ph1*ph2-iPow(k)*ph3) > 1e-12 {
					t.Fatalf("%v * %v on |%d>: got %v|%d>, Mul says i^%d %v|%d>", p, q, b, ph1*ph2, out, k, ph3, want)
				}
			}
		}
	}
	// XY = iZ on one qubit.
	if r, k := (PauliString{X: 1}).Mul(PauliString{X: 1, Z: 1}); r != (PauliString{Z: 1}) || k != 1 {
		t.Errorf("X*Y = i^%d %v, want i^1 Z", k, r)
	}
}
