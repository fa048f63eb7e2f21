package cluster

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"sort"
	"testing"
)

// TestSpectrumResidual checks ||H v_k - E_k v_k|| and V^† V = I against
// the Kronecker-built matrix (definition of an eigendecomposition), for
// both solver paths, including a one-dimensional space.
func TestSpectrumResidual(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	var s Spectrum // reused across cases on purpose
	for _, tc := range []struct {
		n       int
		complex bool
	}{{0, false}, {1, false}, {1, true}, {2, true}, {3, false}, {3, true}, {5, false}, {5, true}, {6, true}} {
		h := randomHamiltonian(tc.n, tc.complex, rng)
		if tc.n == 0 {
			h = &Hamiltonian{Ops: []PauliString{{}}, Coeffs: []float64{0.7}}
		}
		if err := s.Factorize(h); err != nil {
			t.Fatal(err)
		}
		if s.IsReal() == tc.complex || s.Dim() != 1<<tc.n || s.NumQubits() != tc.n {
			t.Fatalf("n=%d complex=%v: real %v dim %d", tc.n, tc.complex, s.IsReal(), s.Dim())
		}
		vals := s.Values()
		if !sort.Float64sAreSorted(vals) {
			t.Errorf("n=%d: eigenvalues not ascending", tc.n)
		}
		res, orth := eigenResidual(h, &s)
		if res > 1e-12*float64(len(h.Ops)+1) || orth > 1e-12 {
			t.Errorf("n=%d complex=%v: residual %g, orthonormality error %g", tc.n, tc.complex, res, orth)
		}
	}
}

// TestTracePowers compares sum_k E_k^p with tr(H^p) of the Kronecker-built
// complex matrix (spectral theorem), p = 1..4, for Y-containing
// Hamiltonians.
func TestTracePowers(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for n := 2; n <= 4; n++ {
		h := randomHamiltonian(n, true, rng)
		s, err := Diagonalize(h)
		if err != nil {
			t.Fatal(err)
		}
		m := kronHamiltonian(h)
		pow := m
		for p := 1; p <= 4; p++ {
			var tr complex128
			for i := range pow {
				tr += pow[i][i]
			}
			var sum float64
			for _, e := range s.Values() {
				sum += math.Pow(e, float64(p))
			}
			if math.Abs(sum-real(tr)) > 1e-10*math.Max(1, math.Abs(sum)) || math.Abs(imag(tr)) > 1e-10 {
				t.Errorf("n=%d p=%d: sum E^p = %.15g, tr H^p = %v", n, p, sum, tr)
			}
			next := make([][]complex128, len(m))
			for i := range m {
				next[i] = make([]complex128, len(m))
				for j := range m {
					for k := range m {
						next[i][j] += pow[i][k] * m[k][j]
					}
				}
			}
			pow = next
		}
	}
}

// solveHermitianOnly runs the Hermitian path on any Hamiltonian.
func solveHermitianOnly(h *Hamiltonian) (*Spectrum, error) {
	s := &Spectrum{dim: h.Dim()}
	if _, err := s.setup(h, NoSymmetry); err != nil {
		return nil, err
	}
	s.real = false
	d := s.dim
	s.values = make([]float64, d)
	re, im := denseMatrix(h)
	s.vecs = append(re, im...)
	s.vecOff = []int{0}
	s.rank = make([]int32, d)
	for k := range s.rank {
		s.rank[k] = int32(k)
	}
	return s, s.solveHermitian(d, s.vecs, s.values)
}

// TestHermitianMatchesReal runs the Hermitian path on real Hamiltonians and
// compares eigenvalues and Gibbs expectations with the real path.
func TestHermitianMatchesReal(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	for _, n := range []int{1, 2, 4, 6} {
		h := randomHamiltonian(n, false, rng)
		sr, err := Diagonalize(h)
		if err != nil {
			t.Fatal(err)
		}
		sc, err := solveHermitianOnly(h)
		if err != nil {
			t.Fatal(err)
		}
		for k, v := range sr.Values() {
			if math.Abs(v-sc.values[k]) > 1e-12*float64(len(h.Ops)) {
				t.Fatalf("n=%d level %d: real %v, Hermitian %v", n, k, v, sc.values[k])
			}
		}
		res, orth := eigenResidual(h, sc)
		if res > 1e-12*float64(len(h.Ops)) || orth > 1e-12 {
			t.Errorf("n=%d Hermitian path on real H: residual %g, orthonormality %g", n, res, orth)
		}
		tr, _ := NewThermal(sr, 0.7)
		tc, _ := NewThermal(sc, 0.7)
		for _, p := range allPaulis(min(n, 2)) {
			if a, b := tr.Expect(p), tc.Expect(p); math.Abs(a-b) > 1e-12 {
				t.Errorf("n=%d %s: real path %v, Hermitian path %v", n, p.Letters([]int{0, 1}), a, b)
			}
		}
	}
}

// rotateS conjugates p by the phase gate S = diag(1, i) on qubit q:
// S X S^† = Y and S Y S^† = -X (textbook Pauli algebra).
func rotateS(p PauliString, q int) (PauliString, float64) {
	bit := uint64(1) << uint(q)
	switch {
	case p.X&bit != 0 && p.Z&bit == 0:
		return PauliString{X: p.X, Z: p.Z | bit}, 1
	case p.X&bit != 0:
		return PauliString{X: p.X, Z: p.Z &^ bit}, -1
	}
	return p, 1
}

// TestPhaseRotation builds a Y-containing Hamiltonian as S H S^† from a
// real one (S on some qubits): the spectrum is unitarily invariant and
// <S P S^†> in the rotated state equals <P> in the real one.
func TestPhaseRotation(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	const n = 4
	hr := randomHamiltonian(n, false, rng)
	rotated := []int{0, 2, 3}
	rot := func(p PauliString) (PauliString, float64) {
		sign := 1.0
		for _, q := range rotated {
			var s float64
			p, s = rotateS(p, q)
			sign *= s
		}
		return p, sign
	}
	hc := &Hamiltonian{NumQubits: n}
	for k, p := range hr.Ops {
		q, sign := rot(p)
		hc.Ops = append(hc.Ops, q)
		hc.Coeffs = append(hc.Coeffs, sign*hr.Coeffs[k])
	}
	if hc.IsReal() {
		t.Fatal("rotated Hamiltonian is still real")
	}
	sr, err := Diagonalize(hr)
	if err != nil {
		t.Fatal(err)
	}
	sc, err := Diagonalize(hc)
	if err != nil {
		t.Fatal(err)
	}
	if sc.IsReal() {
		t.Fatal("complex path not taken")
	}
	for k, v := range sr.Values() {
		if math.Abs(v-sc.values[k]) > 1e-12*float64(len(hr.Ops)) {
			t.Fatalf("level %d: real %v, rotated %v", k, v, sc.values[k])
		}
	}
	tr, _ := NewThermal(sr, 1.3)
	tc, _ := NewThermal(sc, 1.3)
	for _, p := range allPaulis(3) {
		q, sign := rot(p)
		if a, b := tr.Expect(p), sign*tc.Expect(q); math.Abs(a-b) > 1e-12 {
			t.Errorf("%s: real %v, rotated %v", p.Letters([]int{0, 1, 2}), a, b)
		}
	}
}

// TestVectorAccessor checks Vector against the stored columns.
func TestVectorAccessor(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	h := randomHamiltonian(3, true, rng)
	s, err := Diagonalize(h)
	if err != nil {
		t.Fatal(err)
	}
	v := s.Vector(5, nil)
	var norm float64
	for b, a := range v {
		norm += cmplx.Abs(a) * cmplx.Abs(a)
		if a != complex(s.vecs[b*8+5], s.vecs[64+b*8+5]) {
			t.Fatal("Vector does not read column 5")
		}
	}
	if math.Abs(norm-1) > 1e-13 {
		t.Errorf("norm %v", norm)
	}
}
