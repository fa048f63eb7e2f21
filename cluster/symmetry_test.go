package cluster

import (
	"math"
	"math/bits"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"warmfit/lattice"
	"warmfit/lattice/model"
)

// term is one Pauli string with its coefficient, for building test
// Hamiltonians by hand.
type term struct {
	letters string
	coeff   float64
	qubits  []int
}

func ham(n int, terms ...term) *Hamiltonian {
	h := &Hamiltonian{NumQubits: n}
	for _, t := range terms {
		h.Ops = append(h.Ops, mustPauli(t.letters, t.qubits...))
		h.Coeffs = append(h.Coeffs, t.coeff)
	}
	return h
}

func tm(letters string, coeff float64, qubits ...int) term { return term{letters, coeff, qubits} }

// bruteHolds decides a symmetry from the Kronecker-built matrix (common
// practice): H conserves total Z when no matrix element joins basis
// states of different popcount, and a parity when H commutes with the
// product of the parity's letter on every qubit.
func bruteHolds(h *Hamiltonian, s Symmetry) bool {
	m := kronHamiltonian(h)
	d := h.Dim()
	const tol = 1e-12
	if s == TotalZ {
		for r := 0; r < d; r++ {
			for c := 0; c < d; c++ {
				if bits.OnesCount(uint(r)) != bits.OnesCount(uint(c)) && cmplx.Abs(m[r][c]) > tol {
					return false
				}
			}
		}
		return true
	}
	letter := map[Symmetry]byte{ParityX: 'X', ParityY: 'Y', ParityZ: 'Z'}[s]
	var g PauliString
	for q := 0; q < h.NumQubits; q++ {
		g.setLetter(uint64(1)<<uint(q), letter)
	}
	gm := kronMatrix(h.NumQubits, g)
	for r := 0; r < d; r++ {
		for c := 0; c < d; c++ {
			var comm complex128
			for k := 0; k < d; k++ {
				comm += m[r][k]*gm[k][c] - gm[r][k]*m[k][c]
			}
			if cmplx.Abs(comm) > tol {
				return false
			}
		}
	}
	return true
}

// TestDetectSymmetryCases: conserving and breaking models by hand
// (derived: the Pauli algebra of each term, checked against bruteHolds).
func TestDetectSymmetryCases(t *testing.T) {
	for _, tc := range []struct {
		name string
		h    *Hamiltonian
		want Symmetry
	}{
		{"XXZ with Z field", ham(3, tm("XX", 0.3, 0, 1), tm("YY", 0.3, 0, 1), tm("ZZ", 0.7, 0, 1),
			tm("XX", 0.2, 1, 2), tm("YY", 0.2, 1, 2), tm("ZZ", -0.1, 1, 2), tm("Z", 0.4, 1)), TotalZ},
		{"Dzyaloshinskii–Moriya XY - YX", ham(2, tm("XY", 0.5, 0, 1), tm("YX", -0.5, 0, 1), tm("ZZ", 1, 0, 1)), TotalZ},
		{"XY + YX is not U(1)", ham(2, tm("XY", 0.5, 0, 1), tm("YX", 0.5, 0, 1), tm("ZZ", 1, 0, 1)), ParityZ},
		{"XX without YY", ham(2, tm("XX", 1, 0, 1), tm("ZZ", 0.5, 0, 1), tm("Z", 0.2, 0)), ParityZ},
		{"XX and YY unequal", ham(2, tm("XX", 1, 0, 1), tm("YY", 0.999, 0, 1), tm("Z", 0.2, 0)), ParityZ},
		{"XXZ with one X field", ham(3, tm("XX", 1, 0, 1), tm("YY", 1, 0, 1), tm("ZZ", 0.5, 0, 1),
			tm("XX", 1, 1, 2), tm("YY", 1, 1, 2), tm("X", 0.1, 2)), ParityX},
		{"XXZ with X and Z fields", ham(2, tm("XX", 1, 0, 1), tm("YY", 1, 0, 1), tm("X", 0.1, 1), tm("Z", 0.3, 0)), NoSymmetry},
		{"transverse-field Ising", ham(3, tm("ZZ", -1, 0, 1), tm("ZZ", -1, 1, 2), tm("X", 0.5, 0), tm("X", 0.6, 1), tm("X", 0.7, 2)), ParityX},
		{"Y-parity model", ham(2, tm("XZ", 0.4, 0, 1), tm("YY", 1, 0, 1), tm("Y", 0.3, 1)), ParityY},
		{"zero X field ignored", ham(2, tm("XX", 1, 0, 1), tm("YY", 1, 0, 1), tm("X", 0, 1)), TotalZ},
		{"repeated terms summing to equal coefficients", ham(2, tm("XX", 0.1, 0, 1), tm("XX", 0.2, 0, 1), tm("YY", 0.3, 0, 1)), TotalZ},
		{"three-site hop X Z X + Y Z Y", ham(3, tm("XZX", 0.6, 0, 1, 2), tm("YZY", 0.6, 0, 1, 2), tm("Z", 1, 1)), TotalZ},
		{"correlated hop Z (XX + YY)", ham(3, tm("ZXX", 0.6, 0, 1, 2), tm("ZYY", 0.6, 0, 1, 2), tm("XX", 0.2, 1, 2), tm("YY", 0.2, 1, 2)), TotalZ},
		{"hop cancelling across supports is impossible", ham(3, tm("XX", 0.6, 1, 2), tm("YY", 0.5, 1, 2), tm("ZXX", 0.1, 0, 1, 2)), ParityZ},
		{"empty", ham(2), TotalZ},
	} {
		got := DetectSymmetry(tc.h)
		if got != tc.want {
			t.Errorf("%s: detected %v, want %v", tc.name, got, tc.want)
		}
		for _, s := range detectionOrder {
			if a, b := s.holds(tc.h), bruteHolds(tc.h, s); a != b {
				t.Errorf("%s: %v holds %v, Kronecker matrix says %v", tc.name, s, a, b)
			}
		}
	}
}

// symmetryPieces are groups of terms on given local qubits, some
// conserving total Z or a parity and some breaking them, from which
// random Hamiltonians are assembled; coeff ties the members of a group.
var symmetryPieces = [][]term{
	{tm("XX", 1, 0, 1), tm("YY", 1, 0, 1)},
	{tm("XX", 1, 0, 1), tm("YY", -1, 0, 1)},
	{tm("XY", 1, 0, 1), tm("YX", -1, 0, 1)},
	{tm("XY", 1, 0, 1), tm("YX", 1, 0, 1)},
	{tm("XX", 1, 0, 1)},
	{tm("ZZ", 1, 0, 1)},
	{tm("Z", 1, 0)},
	{tm("X", 1, 0)},
	{tm("Y", 1, 0)},
	{tm("XZ", 1, 0, 1)},
	{tm("YZ", 1, 0, 1)},
	{tm("XZX", 1, 0, 1, 2), tm("YZY", 1, 0, 1, 2)},
	{tm("ZXX", 1, 0, 1, 2), tm("ZYY", 1, 0, 1, 2)},
	{tm("XXZ", 1, 0, 1, 2)},
}

// randomPieceHamiltonian puts a few random pieces on random qubits of n.
func randomPieceHamiltonian(n int, rng *rand.Rand) *Hamiltonian {
	h := &Hamiltonian{NumQubits: n}
	for range 1 + rng.IntN(4) {
		piece := symmetryPieces[rng.IntN(len(symmetryPieces))]
		perm := rng.Perm(n)
		c := 2*rng.Float64() - 1
		for _, t := range piece {
			qs := make([]int, len(t.qubits))
			for i, q := range t.qubits {
				qs[i] = perm[q]
			}
			h.Ops = append(h.Ops, mustPauli(t.letters, qs...))
			h.Coeffs = append(h.Coeffs, t.coeff*c)
		}
	}
	return h
}

// TestDetectSymmetryAgainstMatrices: on random combinations of
// conserving and breaking pieces, every symmetry test agrees with the
// Kronecker-built matrix (common practice).
func TestDetectSymmetryAgainstMatrices(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 32))
	found := map[Symmetry]int{}
	for trial := 0; trial < 300; trial++ {
		h := randomPieceHamiltonian(3+trial%2, rng)
		for _, s := range detectionOrder {
			if a, b := s.holds(h), bruteHolds(h, s); a != b {
				t.Fatalf("trial %d: %v holds %v, Kronecker matrix says %v (ops %v coeffs %v)", trial, s, a, b, h.Ops, h.Coeffs)
			}
		}
		found[DetectSymmetry(h)]++
	}
	for _, s := range []Symmetry{NoSymmetry, TotalZ, ParityZ, ParityX, ParityY} {
		if found[s] == 0 {
			t.Errorf("no random case detected %v; the test does not cover it", s)
		}
	}
}

// TestSymmetryHoldsForRestrictions: a model with a symmetry keeps it on
// every Hamiltonian made of some of its support groups, which is how a
// cluster restricts a model (the decomposition argued at
// conservesTotalZ; checked here against the Kronecker-built matrix).
func TestSymmetryHoldsForRestrictions(t *testing.T) {
	rng := rand.New(rand.NewPCG(33, 34))
	checked := 0
	for trial := 0; checked < 60 && trial < 5000; trial++ {
		h := randomPieceHamiltonian(4, rng)
		sym := DetectSymmetry(h)
		if sym == NoSymmetry {
			continue
		}
		checked++
		supports := map[uint64]bool{}
		for _, p := range h.Ops {
			supports[p.Support()] = rng.IntN(2) == 0
		}
		sub := &Hamiltonian{NumQubits: h.NumQubits}
		for k, p := range h.Ops {
			if supports[p.Support()] {
				sub.Ops = append(sub.Ops, p)
				sub.Coeffs = append(sub.Coeffs, h.Coeffs[k])
			}
		}
		if !bruteHolds(sub, sym) || !sym.holds(sub) {
			t.Fatalf("trial %d: %v lost on a restriction (ops %v coeffs %v)", trial, sym, sub.Ops, sub.Coeffs)
		}
	}
}

// TestModelSymmetry detects the symmetry of lattice models from their
// terms, and refuses blocks when the coefficients break them.
func TestModelSymmetry(t *testing.T) {
	l, err := lattice.Open("square:3x3")
	if err != nil {
		t.Fatal(err)
	}
	preset := func(name string, values map[string]float64, disorder float64) []lattice.Term {
		terms, err := model.Preset(l, name, values)
		if err != nil {
			t.Fatal(err)
		}
		model.AddDisorder(terms, disorder, 5)
		return terms
	}
	for _, tc := range []struct {
		name  string
		terms []lattice.Term
		want  Symmetry
	}{
		{"clean XXZ in a Z field", preset("xxz", map[string]float64{"Jxy": 0.2, "Jz": 0.15, "hz": 0.4}, 0), TotalZ},
		{"disordered XXZ in a Z field", preset("xxz", map[string]float64{"Jxy": 0.2, "Jz": 0.15, "hz": 0.4}, 0.05), ParityZ},
		{"XXZ in X and Z fields", preset("xxz", map[string]float64{"Jxy": 0.2, "Jz": 0.15, "hz": 0.4, "hx": 0.1}, 0), NoSymmetry},
		{"transverse-field Ising", preset("tfim", nil, 0.05), ParityX},
	} {
		e, err := NewExpansion(l, tc.terms)
		if err != nil {
			t.Fatal(err)
		}
		coeffs := make([]float64, len(tc.terms))
		for k, tt := range tc.terms {
			coeffs[k] = tt.Coeff
		}
		if got := e.Symmetry(coeffs); got != tc.want {
			t.Errorf("%s: %v, want %v", tc.name, got, tc.want)
		}
	}
}

// TestFrameUnitary: U P U^† equals the relabelled letter for every
// single-qubit Pauli, by 2×2 matrix products (common practice).
func TestFrameUnitary(t *testing.T) {
	for _, s := range []Symmetry{ParityX, ParityY} {
		u, ok := s.frameUnitary()
		if !ok {
			t.Fatalf("%v: no frame unitary", s)
		}
		for _, l := range "XYZ" {
			p := mustPauli(string(l), 0)
			pm, want := pauliMatrix(byte(l)), kronMatrix(1, s.frameOp(p))
			for r := 0; r < 2; r++ {
				for c := 0; c < 2; c++ {
					var got complex128
					for i := 0; i < 2; i++ {
						for j := 0; j < 2; j++ {
							got += u[r][i] * pm[i][j] * cmplx.Conj(u[c][j])
						}
					}
					if cmplx.Abs(got-want[r][c]) > 1e-15 {
						t.Errorf("%v: U %c U^† element (%d,%d) = %v, want %v", s, l, r, c, got, want[r][c])
					}
				}
			}
		}
	}
}

// TestBlockWork: the block cost is the sum of cubed sector dimensions
// (derived: sectors of C(n,k) and of 2^(n-1) states).
func TestBlockWork(t *testing.T) {
	for _, tc := range []struct {
		n    int
		sym  Symmetry
		want float64
	}{
		{4, NoSymmetry, 4096},
		{4, TotalZ, 1 + 64 + 216 + 64 + 1},
		{7, TotalZ, 2 * (1 + 343 + 9261 + 42875)},
		{3, ParityZ, 2 * 64},
		{1, ParityX, 2},
		{0, ParityY, 1},
		{0, TotalZ, 1},
	} {
		if got := blockWork(tc.n, tc.sym); math.Abs(got-tc.want) > 1e-9*tc.want {
			t.Errorf("blockWork(%d, %v) = %v, want %v", tc.n, tc.sym, got, tc.want)
		}
	}
}
