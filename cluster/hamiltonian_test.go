package cluster

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// TestHamiltonianDense compares the O(terms·D) dense construction with the
// sum of Kronecker products.
func TestHamiltonianDense(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, tc := range []struct {
		n       int
		complex bool
	}{{1, false}, {1, true}, {3, false}, {3, true}, {4, true}} {
		h := randomHamiltonian(tc.n, tc.complex, rng)
		want := kronHamiltonian(h)
		d := h.Dim()
		re, im := denseMatrix(h)
		for r := 0; r < d; r++ {
			for c := 0; c < d; c++ {
				if math.Abs(re[r*d+c]-real(want[r][c])) > 1e-14 || math.Abs(im[r*d+c]-imag(want[r][c])) > 1e-14 {
					t.Fatalf("n=%d complex=%v: element (%d,%d) = %v%+vi, Kronecker %v", tc.n, tc.complex, r, c, re[r*d+c], im[r*d+c], want[r][c])
				}
			}
		}
		if h.IsReal() != !tc.complex || h.realMatrix() != !tc.complex {
			t.Errorf("n=%d complex=%v: IsReal %v", tc.n, tc.complex, h.IsReal())
		}
		if tc.complex {
			continue
		}
		var bb blockBasis
		bb.build(h.NumQubits, oneSector)
		bb.fillReal(h, 0, re)
		for r := 0; r < d; r++ {
			for c := 0; c < d; c++ {
				if math.Abs(re[r*d+c]-real(want[r][c])) > 1e-14 {
					t.Fatalf("n=%d real: element (%d,%d) = %v, Kronecker %v", tc.n, r, c, re[r*d+c], want[r][c])
				}
			}
		}
	}
}

func TestHamiltonianCheck(t *testing.T) {
	x0 := mustPauli("X", 0)
	for _, tc := range []struct {
		name string
		h    Hamiltonian
		err  string
	}{
		{"lengths", Hamiltonian{NumQubits: 1, Ops: []PauliString{x0}}, "coefficients"},
		{"outside", Hamiltonian{NumQubits: 2, Ops: []PauliString{mustPauli("Z", 2)}, Coeffs: []float64{1}}, "outside"},
		{"nan", Hamiltonian{NumQubits: 1, Ops: []PauliString{x0}, Coeffs: []float64{math.NaN()}}, "NaN"},
		{"inf", Hamiltonian{NumQubits: 1, Ops: []PauliString{x0}, Coeffs: []float64{math.Inf(-1)}}, "Inf"},
		{"negative", Hamiltonian{NumQubits: -1}, "negative"},
		{"too large", Hamiltonian{NumQubits: MaxDenseQubits + 1}, "MaxDenseQubits"},
	} {
		_, err := Diagonalize(&tc.h)
		if err == nil || !strings.Contains(err.Error(), tc.err) {
			t.Errorf("%s: error %v, want one containing %q", tc.name, err, tc.err)
		}
	}
	// A Y term with zero coefficient keeps the real path.
	h := Hamiltonian{NumQubits: 2, Ops: []PauliString{mustPauli("XX", 0, 1), mustPauli("Y", 1)}, Coeffs: []float64{1, 0}}
	s, err := Diagonalize(&h)
	if err != nil || !s.IsReal() || h.IsReal() {
		t.Errorf("zero-coefficient Y term: err %v, spectrum real %v, IsReal %v", err, s.IsReal(), h.IsReal())
	}
}

// TestDenseLimitMessage checks that the refusal names the limit and the
// alternative, and happens before any allocation of the matrix.
func TestDenseLimitMessage(t *testing.T) {
	h := Hamiltonian{NumQubits: 30}
	var s Spectrum
	err := s.Factorize(&h)
	if err == nil {
		t.Fatal("30 qubits accepted")
	}
	for _, want := range []string{"12", "MaxDenseQubits", "typicality", "validate"} {
		if !strings.Contains(err.Error(), want) {
			t.Errorf("error %q does not mention %q", err, want)
		}
	}
	if s.vecs != nil || s.values != nil {
		t.Error("memory allocated before refusing")
	}
}
