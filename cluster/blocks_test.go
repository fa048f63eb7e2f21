package cluster

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// blockModel builds a random Hamiltonian of one symmetry class on an open
// chain of n qubits.
type blockModel struct {
	name  string
	want  Symmetry
	build func(n int, rng *rand.Rand) *Hamiltonian
}

// chainHamiltonian adds, for every bond and site of an open chain, the
// terms the callbacks return.
func chainHamiltonian(n int, bond func(q int) []term, site func(q int) []term) *Hamiltonian {
	h := &Hamiltonian{NumQubits: n}
	add := func(ts []term) {
		for _, t := range ts {
			h.Ops = append(h.Ops, mustPauli(t.letters, t.qubits...))
			h.Coeffs = append(h.Coeffs, t.coeff)
		}
	}
	for q := 0; q+1 < n; q++ {
		add(bond(q))
	}
	for q := 0; q < n; q++ {
		add(site(q))
	}
	return h
}

func uniform(rng *rand.Rand) float64 { return 2*rng.Float64() - 1 }

var blockModels = []blockModel{
	{"random XXZ with Z fields", TotalZ, func(n int, rng *rand.Rand) *Hamiltonian {
		return chainHamiltonian(n, func(q int) []term {
			j := uniform(rng)
			return []term{tm("XX", j, q, q+1), tm("YY", j, q, q+1), tm("ZZ", uniform(rng), q, q+1)}
		}, func(q int) []term { return []term{tm("Z", uniform(rng), q)} })
	}},
	{"random Heisenberg-like with Dzyaloshinskii–Moriya", TotalZ, func(n int, rng *rand.Rand) *Hamiltonian {
		return chainHamiltonian(n, func(q int) []term {
			j, d := uniform(rng), uniform(rng)
			return []term{tm("XX", j, q, q+1), tm("YY", j, q, q+1), tm("ZZ", uniform(rng), q, q+1),
				tm("XY", d, q, q+1), tm("YX", -d, q, q+1)}
		}, func(q int) []term { return []term{tm("Z", uniform(rng), q)} })
	}},
	{"random three-site hopping", TotalZ, func(n int, rng *rand.Rand) *Hamiltonian {
		return chainHamiltonian(n, func(q int) []term {
			j := uniform(rng)
			out := []term{tm("XX", j, q, q+1), tm("YY", j, q, q+1), tm("ZZ", uniform(rng), q, q+1)}
			if q+2 < n {
				a, b := uniform(rng), uniform(rng)
				out = append(out, tm("XZX", a, q, q+1, q+2), tm("YZY", a, q, q+1, q+2),
					tm("ZXY", b, q, q+1, q+2), tm("ZYX", -b, q, q+1, q+2))
			}
			return out
		}, func(q int) []term { return []term{tm("Z", uniform(rng), q)} })
	}},
	{"random transverse-field Ising-like", ParityX, func(n int, rng *rand.Rand) *Hamiltonian {
		return chainHamiltonian(n, func(q int) []term {
			return []term{tm("ZZ", uniform(rng), q, q+1), tm("XX", 0.3*uniform(rng), q, q+1), tm("YY", 0.3*uniform(rng), q, q+1)}
		}, func(q int) []term { return []term{tm("X", uniform(rng), q)} })
	}},
	{"random complex spin-flip (X) model", ParityX, func(n int, rng *rand.Rand) *Hamiltonian {
		return chainHamiltonian(n, func(q int) []term {
			return []term{tm("ZZ", uniform(rng), q, q+1), tm("YZ", uniform(rng), q, q+1)}
		}, func(q int) []term { return []term{tm("X", uniform(rng), q)} })
	}},
	{"random XY-plane couplings with ZZ", ParityZ, func(n int, rng *rand.Rand) *Hamiltonian {
		return chainHamiltonian(n, func(q int) []term {
			return []term{tm("XX", uniform(rng), q, q+1), tm("YY", uniform(rng), q, q+1), tm("XY", uniform(rng), q, q+1),
				tm("YX", uniform(rng), q, q+1), tm("ZZ", uniform(rng), q, q+1)}
		}, func(q int) []term { return []term{tm("Z", uniform(rng), q)} })
	}},
	{"random Y-parity model", ParityY, func(n int, rng *rand.Rand) *Hamiltonian {
		return chainHamiltonian(n, func(q int) []term {
			return []term{tm("XZ", uniform(rng), q, q+1), tm("ZX", uniform(rng), q, q+1), tm("YY", uniform(rng), q, q+1), tm("XX", uniform(rng), q, q+1)}
		}, func(q int) []term { return []term{tm("Y", uniform(rng), q)} })
	}},
}

// probeOps returns every Pauli string on one qubit and on each bond of
// the chain (conserving and not), and the Hamiltonian's own terms.
func probeOps(h *Hamiltonian) []PauliString {
	seen := map[PauliString]bool{}
	var out []PauliString
	add := func(p PauliString) {
		if !seen[p] {
			seen[p] = true
			out = append(out, p)
		}
	}
	for _, p := range h.Ops {
		add(p)
	}
	n := h.NumQubits
	for q := 0; q < n; q++ {
		for _, p := range allPaulis(min(2, n-q)) {
			add(PauliString{X: p.X << uint(q), Z: p.Z << uint(q)})
		}
	}
	return out
}

// TestBlocksMatchDense diagonalises random models of every symmetry class
// in blocks and densely (an independent method: common practice) and
// compares spectra, Gibbs sums, the expectation of every probe operator
// and the Kubo–Mori response between all of them; the block eigenvectors
// are also checked against the Kronecker-built matrix.
func TestBlocksMatchDense(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 42))
	const tol = 1e-10
	for _, m := range blockModels {
		for _, n := range []int{1, 2, 3, 5, 6} {
			h := m.build(n, rng)
			sym := DetectSymmetry(h)
			if n >= 2 && sym != m.want {
				t.Fatalf("%s n=%d: detected %v, want %v", m.name, n, sym, m.want)
			}
			var blk, dense Spectrum
			if err := blk.FactorizeWith(h, sym); err != nil {
				t.Fatal(err)
			}
			if err := dense.FactorizeWith(h, NoSymmetry); err != nil {
				t.Fatal(err)
			}
			name := fmt.Sprintf("%s n=%d (%v)", m.name, n, sym)
			if n <= 5 {
				if res, orth := eigenResidual(h, &blk); res > 1e-12*float64(len(h.Ops)) || orth > 1e-12 {
					t.Errorf("%s: residual %g, orthonormality %g", name, res, orth)
				}
			}
			vb, vd := blk.Values(), dense.Values()
			for k := range vd {
				if math.Abs(vb[k]-vd[k]) > tol {
					t.Fatalf("%s: level %d block %v dense %v", name, k, vb[k], vd[k])
				}
			}
			ops := probeOps(h)
			for _, beta := range []float64{0.3, 1.7, 25} {
				compareThermal(t, fmt.Sprintf("%s beta=%v", name, beta), &blk, &dense, beta, ops, tol)
			}
		}
	}
}

func compareThermal(t *testing.T, name string, blk, dense *Spectrum, beta float64, ops []PauliString, tol float64) {
	t.Helper()
	tb, err := NewThermal(blk, beta)
	if err != nil {
		t.Fatal(err)
	}
	td, err := NewThermal(dense, beta)
	if err != nil {
		t.Fatal(err)
	}
	for _, q := range []struct {
		what string
		b, d float64
	}{{"log Z", tb.LogZ(), td.LogZ()}, {"energy", tb.Energy(), td.Energy()},
		{"entropy", tb.Entropy(), td.Entropy()}, {"heat capacity", tb.HeatCapacity(), td.HeatCapacity()}} {
		if math.Abs(q.b-q.d) > tol*math.Max(1, math.Abs(q.d)) {
			t.Errorf("%s: %s block %v dense %v", name, q.what, q.b, q.d)
		}
	}
	wb, wd := tb.Weights(nil), td.Weights(nil)
	for k := range wd {
		if math.Abs(wb[k]-wd[k]) > tol {
			t.Fatalf("%s: weight %d block %v dense %v", name, k, wb[k], wd[k])
		}
	}
	nq := blk.NumQubits()
	for _, p := range ops {
		if b, d := tb.Expect(p), td.Expect(p); math.Abs(b-d) > tol {
			t.Errorf("%s: <%s> block %v dense %v", name, p.Letters(seq(nq)), b, d)
		}
	}
	n := len(ops)
	rb, rd := make([]float64, n*n), make([]float64, n*n)
	tb.Response(ops, rb)
	td.Response(ops, rd)
	for a := 0; a < n; a++ {
		for b := 0; b < n; b++ {
			if math.Abs(rb[a*n+b]-rd[a*n+b]) > tol*math.Max(1, beta) {
				t.Errorf("%s: d<%s>/dc_%s block %v dense %v", name, ops[a].Letters(seq(nq)), ops[b].Letters(seq(nq)), rb[a*n+b], rd[a*n+b])
			}
		}
	}
}

func seq(n int) []int {
	s := make([]int, n)
	for i := range s {
		s[i] = i
	}
	return s
}

// TestBlocksResponseManySlices repeats a block response with a tiny
// budget, so every sector pair is cut into one-row slices.
func TestBlocksResponseManySlices(t *testing.T) {
	rng := rand.New(rand.NewPCG(43, 44))
	for _, m := range blockModels {
		h := m.build(5, rng)
		var blk, dense Spectrum
		if err := blk.Factorize(h); err != nil {
			t.Fatal(err)
		}
		if err := dense.FactorizeWith(h, NoSymmetry); err != nil {
			t.Fatal(err)
		}
		saved := responseBudget
		responseBudget = 10
		compareThermal(t, m.name+" one-row slices", &blk, &dense, 2.3, probeOps(h), 1e-10)
		responseBudget = saved
	}
}

// TestFactorizeWithRefusesBrokenSymmetry: asking for blocks a Hamiltonian
// does not have is an error, not a silently wrong spectrum.
func TestFactorizeWithRefusesBrokenSymmetry(t *testing.T) {
	for _, tc := range []struct {
		h   *Hamiltonian
		sym Symmetry
	}{
		{ham(2, tm("XX", 1, 0, 1), tm("ZZ", 1, 0, 1)), TotalZ},
		{ham(2, tm("XX", 1, 0, 1), tm("YY", 0.5, 0, 1)), TotalZ},
		{ham(2, tm("XX", 1, 0, 1), tm("YY", 1, 0, 1), tm("X", 0.1, 0)), TotalZ},
		{ham(2, tm("ZZ", 1, 0, 1), tm("X", 0.1, 0)), ParityZ},
		{ham(2, tm("ZZ", 1, 0, 1), tm("Z", 0.1, 0)), ParityX},
		{ham(2, tm("ZZ", 1, 0, 1), tm("Z", 0.1, 0)), ParityY},
	} {
		var s Spectrum
		if err := s.FactorizeWith(tc.h, tc.sym); err == nil {
			t.Errorf("%v accepted for ops %v coeffs %v", tc.sym, tc.h.Ops, tc.h.Coeffs)
		}
		var l Levels
		if err := l.FactorizeWith(tc.h, tc.sym); err == nil {
			t.Errorf("Levels: %v accepted for ops %v coeffs %v", tc.sym, tc.h.Ops, tc.h.Coeffs)
		}
	}
}
