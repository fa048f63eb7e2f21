package cluster

import (
	"math"
	"math/rand/v2"
	"testing"
)

func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol*math.Max(1, math.Abs(b)) }

// TestSingleSpin: H = h P for one Pauli letter P has levels ±h, so
// <P> = -tanh(beta h) and log Z = log(2 cosh(beta h)) (closed form); the
// other two letters average to zero by symmetry.
func TestSingleSpin(t *testing.T) {
	for _, letter := range []string{"X", "Y", "Z"} {
		for _, tc := range []struct{ h, beta float64 }{{0.3, 1}, {-1.7, 0.4}, {1, 0}, {0.8, 200}, {-2, 200}} {
			p := mustPauli(letter, 0)
			h := &Hamiltonian{NumQubits: 1, Ops: []PauliString{p}, Coeffs: []float64{tc.h}}
			s, err := Diagonalize(h)
			if err != nil {
				t.Fatal(err)
			}
			th, err := NewThermal(s, tc.beta)
			if err != nil {
				t.Fatal(err)
			}
			bh := tc.beta * math.Abs(tc.h)
			// log(2 cosh x) = x + log(1 + exp(-2x)), stable for large x.
			wantLogZ := bh + math.Log1p(math.Exp(-2*bh))
			if !near(th.LogZ(), wantLogZ, 1e-14) {
				t.Errorf("%s h=%v beta=%v: log Z = %.16g, want log(2cosh beta h) = %.16g", letter, tc.h, tc.beta, th.LogZ(), wantLogZ)
			}
			if got, want := th.Expect(p), -math.Tanh(tc.beta*tc.h); !near(got, want, 1e-14) {
				t.Errorf("%s h=%v beta=%v: <P> = %.16g, want -tanh(beta h) = %.16g", letter, tc.h, tc.beta, got, want)
			}
			for _, other := range []string{"X", "Y", "Z"} {
				if other == letter {
					continue
				}
				if got := th.Expect(mustPauli(other, 0)); math.Abs(got) > 1e-15 {
					t.Errorf("%s field: <%s> = %v, want 0", letter, other, got)
				}
			}
			if got, want := th.Energy(), -tc.h*math.Tanh(tc.beta*tc.h); !near(got, want, 1e-14) {
				t.Errorf("%s h=%v beta=%v: energy %v, want -h tanh(beta h) = %v", letter, tc.h, tc.beta, got, want)
			}
		}
	}
}

// TestHeisenbergDimer: J (XX+YY+ZZ) = 4J S1·S2 has the singlet at -3J and
// the triplet at +J (textbook addition of two spins 1/2), so
// Z = e^{3 beta J} + 3 e^{-beta J} and, by SU(2) symmetry,
// <ZZ> = <H>/(3J) = (3 e^{-beta J} - 3 e^{3 beta J})/(3Z).
func TestHeisenbergDimer(t *testing.T) {
	for _, tc := range []struct{ j, beta float64 }{{1, 0.5}, {-0.7, 1.1}, {1, 200}, {-1, 200}, {-1, 1e6}} {
		h := &Hamiltonian{NumQubits: 2,
			Ops:    []PauliString{mustPauli("XX", 0, 1), mustPauli("YY", 0, 1), mustPauli("ZZ", 0, 1)},
			Coeffs: []float64{tc.j, tc.j, tc.j}}
		s, err := Diagonalize(h)
		if err != nil {
			t.Fatal(err)
		}
		levels := []float64{-3 * tc.j, tc.j, tc.j, tc.j}
		if tc.j < 0 {
			levels = []float64{tc.j, tc.j, tc.j, -3 * tc.j}
		}
		vals := s.Values()
		for k, v := range vals {
			if !near(v, levels[k], 1e-14) {
				t.Errorf("J=%v: level %d = %v, want %v", tc.j, k, v, levels[k])
			}
		}
		// The triplet is exactly degenerate (snapped), so no beta can
		// weight its members unequally.
		tri := vals[1:]
		if tc.j < 0 {
			tri = vals[:3]
		}
		if tri[0] != tri[1] || tri[1] != tri[2] {
			t.Errorf("J=%v: triplet %v not exactly degenerate", tc.j, tri)
		}
		th, err := NewThermal(s, tc.beta)
		if err != nil {
			t.Fatal(err)
		}
		// Relative to the ground level: log Z = -beta E0 + log sum_k e^{-beta (E_k - E0)}.
		e0 := levels[0]
		var zs, es float64
		for _, e := range levels {
			zs += math.Exp(-tc.beta * (e - e0))
			es += e * math.Exp(-tc.beta*(e-e0))
		}
		if want := -tc.beta*e0 + math.Log(zs); !near(th.LogZ(), want, 1e-14) {
			t.Errorf("J=%v beta=%v: log Z %.16g, want log(e^{3bJ}+3e^{-bJ}) = %.16g", tc.j, tc.beta, th.LogZ(), want)
		}
		wantE := es / zs
		if !near(th.Energy(), wantE, 1e-13) {
			t.Errorf("J=%v beta=%v: energy %v, want %v", tc.j, tc.beta, th.Energy(), wantE)
		}
		for _, op := range []string{"XX", "YY", "ZZ"} {
			if got := th.Expect(mustPauli(op, 0, 1)); !near(got, wantE/(3*tc.j), 1e-13) {
				t.Errorf("J=%v beta=%v: <%s> = %v, want E/3J = %v", tc.j, tc.beta, op, got, wantE/(3*tc.j))
			}
		}
		if tc.beta >= 200 && tc.j < 0 && (!near(th.Entropy(), math.Log(3), 1e-12) || th.HeatCapacity() > 1e-20) {
			t.Errorf("ferromagnetic dimer at beta=%v: entropy %v, C %v, want log 3 (triplet ground state) and 0", tc.beta, th.Entropy(), th.HeatCapacity())
		}
	}
}

// TestXXZDimer: H = Jxy (XX+YY) + Jz ZZ. ZZ is diagonal (1,-1,-1,1) on
// |00>,|01>,|10>,|11>; XX+YY annihilates |00> and |11> (XX and YY give
// |11> with amplitudes 1 and i·i = -1) and maps |01> <-> |10> with
// amplitude 2. So |00>,|11> have energy Jz and the {|01>,|10>} block
// [[-Jz, 2Jxy],[2Jxy, -Jz]] gives -Jz ± 2Jxy.
func TestXXZDimer(t *testing.T) {
	for _, tc := range []struct{ jxy, jz float64 }{{1, 0.3}, {0.4, -1.2}, {-0.5, 2}} {
		h := &Hamiltonian{NumQubits: 2,
			Ops:    []PauliString{mustPauli("XX", 0, 1), mustPauli("YY", 0, 1), mustPauli("ZZ", 0, 1)},
			Coeffs: []float64{tc.jxy, tc.jxy, tc.jz}}
		s, err := Diagonalize(h)
		if err != nil {
			t.Fatal(err)
		}
		want := []float64{tc.jz, tc.jz, -tc.jz + 2*tc.jxy, -tc.jz - 2*tc.jxy}
		sortFloats(want)
		for k, v := range s.Values() {
			if !near(v, want[k], 1e-14) {
				t.Errorf("Jxy=%v Jz=%v: level %d = %v, want %v", tc.jxy, tc.jz, k, v, want[k])
			}
		}
		const beta = 0.9
		th, _ := NewThermal(s, beta)
		var z float64
		for _, e := range want {
			z += math.Exp(-beta * e)
		}
		if !near(th.LogZ(), math.Log(z), 1e-14) {
			t.Errorf("Jxy=%v Jz=%v: log Z %v, want %v", tc.jxy, tc.jz, th.LogZ(), math.Log(z))
		}
	}
}

func sortFloats(x []float64) {
	for i := 1; i < len(x); i++ {
		for j := i; j > 0 && x[j] < x[j-1]; j-- {
			x[j], x[j-1] = x[j-1], x[j]
		}
	}
}

// TestExpectBruteForce compares every Pauli expectation on the first three
// qubits with the Gibbs state of the Kronecker-built matrix diagonalised
// through its real embedding (independent construction and solver).
func TestExpectBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	var s Spectrum
	var th Thermal
	for _, tc := range []struct {
		n       int
		complex bool
		beta    float64
	}{{3, false, 0.8}, {3, true, 0.8}, {4, true, 2.5}, {4, false, 0.1}, {2, true, 7}} {
		h := randomHamiltonian(tc.n, tc.complex, rng)
		if err := s.Factorize(h); err != nil {
			t.Fatal(err)
		}
		if err := th.Set(&s, tc.beta); err != nil {
			t.Fatal(err)
		}
		ref := newBruteThermal(h, tc.beta)
		if !near(th.LogZ(), ref.logZ, 1e-12) {
			t.Errorf("n=%d complex=%v beta=%v: log Z %.15g, brute force %.15g", tc.n, tc.complex, tc.beta, th.LogZ(), ref.logZ)
		}
		ops := allPaulis(min(tc.n, 3))
		got := make([]float64, len(ops))
		th.ExpectAll(ops, got)
		for i, p := range ops {
			if want := ref.expect(p); math.Abs(got[i]-want) > 1e-12 {
				t.Errorf("n=%d complex=%v beta=%v %s: %.15g, brute force %.15g", tc.n, tc.complex, tc.beta, p.Letters([]int{0, 1, 2}), got[i], want)
			}
		}
		var e float64
		for k, p := range h.Ops {
			e += h.Coeffs[k] * ref.expect(p)
		}
		if !near(th.Energy(), e, 1e-12) {
			t.Errorf("n=%d: energy %v, sum c_k <P_k> = %v", tc.n, th.Energy(), e)
		}
	}
}

// TestInfiniteTemperature: at beta = 0 rho = I/D, so tr(rho P) = 0 for
// every non-identity Pauli (traceless), log Z = n log 2, S = n log 2 and
// the weights sum to one.
func TestInfiniteTemperature(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 16))
	for _, complex := range []bool{false, true} {
		const n = 3
		h := randomHamiltonian(n, complex, rng)
		s, _ := Diagonalize(h)
		th, err := NewThermal(s, 0)
		if err != nil {
			t.Fatal(err)
		}
		for _, p := range allPaulis(n) {
			want := 0.0
			if p == (PauliString{}) {
				want = 1
			}
			if got := th.Expect(p); math.Abs(got-want) > 1e-14 {
				t.Errorf("complex=%v %s: %v at beta=0", complex, p.Letters([]int{0, 1, 2}), got)
			}
		}
		if !near(th.LogZ(), n*math.Ln2, 1e-15) || !near(th.Entropy(), n*math.Ln2, 1e-15) || th.HeatCapacity() != 0 {
			t.Errorf("beta=0: log Z %v, S %v, C %v", th.LogZ(), th.Entropy(), th.HeatCapacity())
		}
		var sum float64
		for _, w := range th.Weights(nil) {
			sum += w
		}
		if !near(sum, 1, 1e-15) {
			t.Errorf("weights sum to %v", sum)
		}
		// Trace identity: the expectation of H at beta = 0 is tr(H)/D = 0.
		if math.Abs(th.Energy()) > 1e-14 {
			t.Errorf("<H> at beta=0 = %v, want tr H / D = 0", th.Energy())
		}
	}
}

// TestThermodynamicIdentities checks S = beta E + log Z, E = -d log Z /
// d beta and C = beta^2 d^2 log Z / d beta^2 (textbook thermodynamics) by
// central finite differences, and that weights sum to one.
func TestThermodynamicIdentities(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 18))
	for _, complex := range []bool{false, true} {
		h := randomHamiltonian(4, complex, rng)
		s, _ := Diagonalize(h)
		for _, beta := range []float64{0.2, 1, 3} {
			th, _ := NewThermal(s, beta)
			logZ := func(b float64) float64 {
				x, err := NewThermal(s, b)
				if err != nil {
					t.Fatal(err)
				}
				return x.LogZ()
			}
			if !near(th.Entropy(), beta*th.Energy()+th.LogZ(), 1e-13) {
				t.Errorf("beta=%v: S = %v, beta E + log Z = %v", beta, th.Entropy(), beta*th.Energy()+th.LogZ())
			}
			const d1 = 1e-5
			dlogZ := (logZ(beta+d1) - logZ(beta-d1)) / (2 * d1)
			if !near(th.Energy(), -dlogZ, 1e-8) {
				t.Errorf("beta=%v: E = %v, -dlogZ/dbeta = %v", beta, th.Energy(), -dlogZ)
			}
			const d2 = 1e-3
			d2logZ := (logZ(beta+d2) - 2*logZ(beta) + logZ(beta-d2)) / (d2 * d2)
			if !near(th.HeatCapacity(), beta*beta*d2logZ, 1e-5) {
				t.Errorf("beta=%v: C = %v, beta^2 d2logZ = %v", beta, th.HeatCapacity(), beta*beta*d2logZ)
			}
			var sum float64
			for _, w := range th.Weights(nil) {
				sum += w
			}
			if !near(sum, 1, 1e-14) {
				t.Errorf("weights sum to %v", sum)
			}
		}
	}
}

// TestLowTemperature: at beta = 200 every quantity is finite and equals its
// ground-state value when the gap is large: E -> E_0, S -> 0,
// log Z -> -beta E_0, <P> -> <0|P|0>.
func TestLowTemperature(t *testing.T) {
	rng := rand.New(rand.NewPCG(19, 20))
	for _, complex := range []bool{false, true} {
		h := randomHamiltonian(4, complex, rng)
		s, _ := Diagonalize(h)
		vals := s.Values()
		if gap := vals[1] - vals[0]; gap < 0.2 {
			t.Fatalf("test Hamiltonian has a small gap %v", gap)
		}
		const beta = 200
		th, err := NewThermal(s, beta)
		if err != nil {
			t.Fatal(err)
		}
		for _, x := range []float64{th.LogZ(), th.Energy(), th.Entropy(), th.HeatCapacity()} {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				t.Fatalf("non-finite thermal quantity %v", x)
			}
		}
		if !near(th.Energy(), vals[0], 1e-12) || th.Entropy() > 1e-12 || !near(th.LogZ(), -beta*vals[0], 1e-12) {
			t.Errorf("beta=200: E %v (E0 %v), S %v, log Z %v", th.Energy(), vals[0], th.Entropy(), th.LogZ())
		}
		g := s.Vector(0, nil)
		for _, p := range allPaulis(2) {
			var want complex128
			for b, a := range g {
				out, ph := p.Apply(uint64(b))
				want += conj(g[out]) * ph * a
			}
			if got := th.Expect(p); math.Abs(got-real(want)) > 1e-12 {
				t.Errorf("%s: %v, ground state %v", p.Letters([]int{0, 1}), got, want)
			}
		}
	}
}

func conj(z complex128) complex128 { return complex(real(z), -imag(z)) }

func TestNewThermalErrors(t *testing.T) {
	s, _ := Diagonalize(&Hamiltonian{NumQubits: 1, Ops: []PauliString{mustPauli("Z", 0)}, Coeffs: []float64{1}})
	for _, beta := range []float64{-0.1, math.NaN(), math.Inf(1), math.Inf(-1)} {
		if _, err := NewThermal(s, beta); err == nil {
			t.Errorf("beta %v accepted", beta)
		}
	}
	if _, err := NewThermal(&Spectrum{}, 1); err == nil {
		t.Error("empty spectrum accepted")
	}
	th, _ := NewThermal(s, 2.5)
	if th.Beta() != 2.5 || th.Spectrum() != s {
		t.Error("accessors")
	}
}
