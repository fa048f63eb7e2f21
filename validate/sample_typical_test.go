package validate

import (
	"math"
	"testing"

	"warmfit/lattice"
)

// TestTypicalSamplerMatchesExact: typicality distributions agree with
// those of dense exact diagonalisation (Sampler) within the typicality
// error, about 1/sqrt(R Z_eff) (Hams & De Raedt, PRE 62, 4365 (2000)),
// in every letter, and sum to one.
func TestTypicalSamplerMatchesExact(t *testing.T) {
	const n, beta = 8, 0.4
	var terms []lattice.Term
	for i := range n {
		terms = append(terms, lattice.Term{Pauli: "X", Sites: []int{i}, Coeff: 0.8})
		if i+1 < n {
			terms = append(terms, lattice.Term{Pauli: "ZZ", Sites: []int{i, i + 1}, Coeff: 1})
		}
	}
	exact, err := NewSampler(n, terms, beta)
	if err != nil {
		t.Fatal(err)
	}
	typ, err := NewTypicalSampler(n, terms, beta, TypicalityOptions{Vectors: 64, Seed: 3})
	if err != nil {
		t.Fatal(err)
	}
	for _, basis := range []string{"ZZZZZZZZ", "XXXXXXXX", "XYZXYZXY"} {
		pe, err := exact.Distribution(basis)
		if err != nil {
			t.Fatal(err)
		}
		pt, err := typ.Distribution(basis)
		if err != nil {
			t.Fatal(err)
		}
		var sum, tv float64
		for x := range pt {
			sum += pt[x]
			tv += math.Abs(pt[x]-pe[x]) / 2
		}
		t.Logf("%s: total variation distance %.3g", basis, tv)
		// Z_eff is about 2^8 / 4 here; the distance sums 256 entries of
		// relative error ~ 1/sqrt(64 Z_eff).
		if math.Abs(sum-1) > 1e-9 || tv > 0.1 {
			t.Errorf("%s: probabilities sum to %v, total variation distance to exact %.3g", basis, sum, tv)
		}
	}
}
