package cluster

import (
	"math"
	"math/rand/v2"
	"testing"
)

// responseByDifferences returns d<ops[a]>/dc_b by central differences of
// ExpectAll, adding c_b ops[b] to h (definition of the derivative).
func responseByDifferences(t *testing.T, h *Hamiltonian, ops []PauliString, beta, step float64) []float64 {
	n := len(ops)
	out := make([]float64, n*n)
	plus, minus := make([]float64, n), make([]float64, n)
	for b := range ops {
		for _, sgn := range []float64{1, -1} {
			hh := &Hamiltonian{NumQubits: h.NumQubits,
				Ops:    append(append([]PauliString(nil), h.Ops...), ops[b]),
				Coeffs: append(append([]float64(nil), h.Coeffs...), sgn*step)}
			s, err := Diagonalize(hh)
			if err != nil {
				t.Fatal(err)
			}
			th, err := NewThermal(s, beta)
			if err != nil {
				t.Fatal(err)
			}
			if sgn > 0 {
				th.ExpectAll(ops, plus)
			} else {
				th.ExpectAll(ops, minus)
			}
		}
		for a := range ops {
			out[a*n+b] = (plus[a] - minus[a]) / (2 * step)
		}
	}
	return out
}

func heisenberg(n int, j, field float64, fieldLetter string) *Hamiltonian {
	h := &Hamiltonian{NumQubits: n}
	for q := 0; q+1 < n; q++ {
		for _, l := range []string{"XX", "YY", "ZZ"} {
			h.Ops = append(h.Ops, mustPauli(l, q, q+1))
			h.Coeffs = append(h.Coeffs, j)
		}
	}
	if field != 0 {
		for q := 0; q < n; q++ {
			h.Ops = append(h.Ops, mustPauli(fieldLetter, q))
			h.Coeffs = append(h.Coeffs, field)
		}
	}
	return h
}

// TestResponseFiniteDifference compares the Kubo–Mori response with
// central differences of the expectations, on real and Y-containing
// Hamiltonians and on Hamiltonians with exact degeneracies (the
// Heisenberg chain: SU(2) multiplets; with a uniform Y field the
// multiplets split but levels still cross and stay degenerate).
func TestResponseFiniteDifference(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	ring := func(ops ...string) []PauliString {
		var out []PauliString
		for _, o := range ops {
			if len(o) == 1 {
				out = append(out, mustPauli(o, 1))
			} else {
				out = append(out, mustPauli(o, 1, 2))
			}
		}
		return out
	}
	for _, tc := range []struct {
		name string
		h    *Hamiltonian
		ops  []PauliString
		beta float64
	}{
		{"real random", randomHamiltonian(4, false, rng), ring("X", "Z", "XX", "XZ", "ZZ", "YY", "Y", "XY"), 0.7},
		{"complex random", randomHamiltonian(4, true, rng), ring("X", "Y", "Z", "XY", "YX", "ZZ", "YZ"), 1.1},
		{"heisenberg degenerate", heisenberg(4, 1, 0, ""), ring("X", "Z", "XX", "ZZ", "XY", "YZ", "Y"), 0.9},
		{"heisenberg in Y field", heisenberg(3, 0.8, 0.4, "Y"), ring("Y", "X", "XX", "XY", "ZY"), 1.5},
		{"free spins degenerate", &Hamiltonian{NumQubits: 3, Ops: []PauliString{mustPauli("Z", 0)}, Coeffs: []float64{0.5}},
			ring("X", "Z", "XX", "XY", "ZZ"), 2},
	} {
		got := make([]float64, len(tc.ops)*len(tc.ops))
		s, err := Diagonalize(tc.h)
		if err != nil {
			t.Fatal(err)
		}
		th, _ := NewThermal(s, tc.beta)
		th.Response(tc.ops, got)
		want := responseByDifferences(t, tc.h, tc.ops, tc.beta, 1e-4)
		n := len(tc.ops)
		for a := 0; a < n; a++ {
			for b := 0; b < n; b++ {
				if math.Abs(got[a*n+b]-want[a*n+b]) > 1e-7 {
					t.Errorf("%s: d<%d>/dc_%d = %.10g, finite difference %.10g", tc.name, a, b, got[a*n+b], want[a*n+b])
				}
				if got[a*n+b] != got[b*n+a] {
					t.Errorf("%s: response not symmetric at (%d,%d)", tc.name, a, b)
				}
			}
			// Kubo–Mori variance is non-negative, so d<A>/dc_A <= 0.
			if got[a*n+a] > 1e-15 {
				t.Errorf("%s: positive diagonal response %v", tc.name, got[a*n+a])
			}
		}
	}
}

// TestResponseLimits: at beta = 0 the state does not depend on H; for a
// single spin H = h Z, d<Z>/dh = -beta (1 - tanh^2(beta h)) (closed form),
// and d<X>/dc_X = -tanh(beta h)/h is the transverse susceptibility of a
// two-level system (closed form: second-order perturbation of the levels
// ±sqrt(h^2 + c^2)); at beta = 200 everything stays finite.
func TestResponseLimits(t *testing.T) {
	for _, tc := range []struct{ h, beta float64 }{{0.6, 0}, {0.6, 1.3}, {-0.6, 200}, {1e-9, 3}} {
		h := &Hamiltonian{NumQubits: 1, Ops: []PauliString{mustPauli("Z", 0)}, Coeffs: []float64{tc.h}}
		s, _ := Diagonalize(h)
		th, _ := NewThermal(s, tc.beta)
		ops := []PauliString{mustPauli("Z", 0), mustPauli("X", 0), mustPauli("Y", 0)}
		got := make([]float64, 9)
		th.Response(ops, got)
		tn := math.Tanh(tc.beta * tc.h)
		wantZZ := -tc.beta * (1 - tn*tn)
		wantXX := -tn / tc.h
		if tc.beta == 0 {
			wantXX = 0
		}
		for i, v := range got {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("h=%v beta=%v: non-finite response %v", tc.h, tc.beta, got)
			}
			if i != 0 && i != 4 && i != 8 && math.Abs(v) > 1e-15 {
				t.Errorf("h=%v beta=%v: off-diagonal response %v", tc.h, tc.beta, got)
			}
		}
		if !near(got[0], wantZZ, 1e-12) || !near(got[4], wantXX, 1e-9) || !near(got[8], wantXX, 1e-9) {
			t.Errorf("h=%v beta=%v: diagonal %v %v %v, want %v %v %v", tc.h, tc.beta, got[0], got[4], got[8], wantZZ, wantXX, wantXX)
		}
	}
}

// TestResponseBlocks checks that splitting the eigenstates into many
// blocks (a small workspace budget) gives the same response.
func TestResponseBlocks(t *testing.T) {
	rng := rand.New(rand.NewPCG(23, 24))
	for _, complex := range []bool{false, true} {
		h := randomHamiltonian(5, complex, rng)
		s, _ := Diagonalize(h)
		th, _ := NewThermal(s, 0.6)
		ops := h.Ops
		n := len(ops)
		one := make([]float64, n*n)
		th.Response(ops, one)
		saved := responseBudget
		responseBudget = 1
		many := make([]float64, n*n)
		th.Response(ops, many)
		responseBudget = saved
		for i := range one {
			if math.Abs(one[i]-many[i]) > 1e-13 {
				t.Fatalf("complex=%v: element %d: %v in one block, %v in many", complex, i, one[i], many[i])
			}
		}
	}
}
