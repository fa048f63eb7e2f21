package cluster

import (
	"cmp"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// sortedLevels returns the levels of l in ascending order.
func sortedLevels(l *Levels) []float64 {
	out := make([]float64, l.Len())
	for i := range out {
		out[i] = l.Value(i)
	}
	slices.Sort(out)
	return out
}

// TestLevelsMatchSpectrum: the eigenvalue-only solvers (Dsytd2/Dsytrd or
// the complex reduction, then Dsterf) agree with the full dense
// diagonalisation (common practice), with and without blocks, and so do
// the Gibbs sums; under TotalZ the magnetisation and its variance from
// the sector labels agree with Expect and Response of the Z_i.
func TestLevelsMatchSpectrum(t *testing.T) {
	rng := rand.New(rand.NewPCG(51, 52))
	const tol = 1e-10
	type tcase struct {
		name string
		h    *Hamiltonian
	}
	var cases []tcase
	for _, m := range blockModels {
		cases = append(cases, tcase{m.name, m.build(6, rng)})
	}
	// Above smallReductionDim the blocked reductions run.
	cases = append(cases, tcase{"dense real 8 qubits", randomHamiltonian(8, false, rng)},
		tcase{"dense complex 8 qubits", randomHamiltonian(8, true, rng)},
		tcase{"XXZ 9 qubits", blockModels[0].build(9, rng)})
	for _, tc := range cases {
		var dense Spectrum
		if err := dense.FactorizeWith(tc.h, NoSymmetry); err != nil {
			t.Fatal(err)
		}
		want := dense.Values()
		for _, sym := range []Symmetry{DetectSymmetry(tc.h), NoSymmetry} {
			name := fmt.Sprintf("%s (%v)", tc.name, sym)
			var l Levels
			if err := l.FactorizeWith(tc.h, sym); err != nil {
				t.Fatal(err)
			}
			if l.Symmetry() != sym || l.NumQubits() != tc.h.NumQubits || l.Len() != len(want) {
				t.Fatalf("%s: accessors", name)
			}
			got := sortedLevels(&l)
			for k := range want {
				if math.Abs(got[k]-want[k]) > tol {
					t.Fatalf("%s: level %d = %v, full diagonalisation %v", name, k, got[k], want[k])
				}
			}
			for _, beta := range []float64{0, 0.4, 3, 40} {
				g, err := l.Gibbs(beta)
				if err != nil {
					t.Fatal(err)
				}
				th, _ := NewThermal(&dense, beta)
				for _, q := range [][2]float64{{g.LogZ, th.LogZ()}, {g.Energy, th.Energy()}, {g.Entropy, th.Entropy()}, {g.HeatCapacity, th.HeatCapacity()}} {
					if math.Abs(q[0]-q[1]) > tol*math.Max(1, math.Abs(q[1])) {
						t.Errorf("%s beta=%v: Gibbs sums %+v, Thermal %v %v %v %v", name, beta, g, th.LogZ(), th.Energy(), th.Entropy(), th.HeatCapacity())
						break
					}
				}
				if g.ZKnown != (sym == TotalZ) {
					t.Errorf("%s: ZKnown %v", name, g.ZKnown)
				}
				if g.ZKnown && beta > 0 {
					checkTotalZ(t, name, th, g)
				}
			}
		}
	}
}

// checkTotalZ compares the magnetisation sums with sum_i <Z_i> and
// -beta Var(M) = sum_ij d<Z_i>/dc_{Z_j}.
func checkTotalZ(t *testing.T, name string, th *Thermal, g LevelSums) {
	t.Helper()
	n := th.Spectrum().NumQubits()
	zs := make([]PauliString, n)
	var m float64
	for q := range zs {
		zs[q] = mustPauli("Z", q)
		m += th.Expect(zs[q])
	}
	resp := make([]float64, n*n)
	th.Response(zs, resp)
	var dm float64
	for _, v := range resp {
		dm += v
	}
	if math.Abs(m-g.TotalZ) > 1e-10 || math.Abs(dm+th.Beta()*g.TotalZVariance) > 1e-10*math.Max(1, th.Beta()) {
		t.Errorf("%s beta=%v: <M> %v (Expect %v), -beta Var M %v (Response %v)", name, th.Beta(), g.TotalZ, m, -th.Beta()*g.TotalZVariance, dm)
	}
}

// labelledLevel is an eigenvalue with its total Z.
type labelledLevel struct{ e, z float64 }

func labelled(l *Levels) []labelledLevel {
	var out []labelledLevel
	for i := 0; i < l.Len(); i++ {
		z, ok := l.TotalZ(i)
		if !ok {
			return nil
		}
		out = append(out, labelledLevel{math.Round(l.Value(i)*1e9) / 1e9, z})
	}
	slices.SortFunc(out, func(a, b labelledLevel) int {
		if a.e != b.e {
			return cmp.Compare(a.e, b.e)
		}
		return cmp.Compare(a.z, b.z)
	})
	return out
}

// multiplets lists (energy, total Z) for spin multiplets: a multiplet of
// spin S has 2S+1 levels with total Z = 2M, M = -S..S (Pauli Z = 2 S^z).
func multiplets(spec ...[2]float64) []labelledLevel {
	var out []labelledLevel
	for _, m := range spec {
		e, s := m[0], int(m[1])
		for mz := -s; mz <= s; mz++ {
			out = append(out, labelledLevel{e, float64(2 * mz)})
		}
	}
	slices.SortFunc(out, func(a, b labelledLevel) int {
		if a.e != b.e {
			return cmp.Compare(a.e, b.e)
		}
		return cmp.Compare(a.z, b.z)
	})
	return out
}

// TestLevelsHeisenbergClosedForms: H = J sum_bonds (XX + YY + ZZ) with
// sigma_i·sigma_j = 4 S_i·S_j. The dimer has a triplet at J and a singlet
// at -3J (textbook). On the 4-site ring every bond joins the sublattices
// A = {0,2} and B = {1,3}, so H = 2J (S^2 - S_A^2 - S_B^2) with S_A, S_B
// in {0,1} (derived): levels 4J (S=2), -4J (S=1), -8J (S=0) from
// S_A = S_B = 1, and 0 for two triplets and a singlet.
func TestLevelsHeisenbergClosedForms(t *testing.T) {
	const j = 0.7
	heis := func(n int, bonds [][2]int) *Hamiltonian {
		h := &Hamiltonian{NumQubits: n}
		for _, b := range bonds {
			for _, l := range []string{"XX", "YY", "ZZ"} {
				h.Ops = append(h.Ops, mustPauli(l, b[0], b[1]))
				h.Coeffs = append(h.Coeffs, j)
			}
		}
		return h
	}
	for _, tc := range []struct {
		name string
		h    *Hamiltonian
		want []labelledLevel
	}{
		{"dimer", heis(2, [][2]int{{0, 1}}), multiplets([2]float64{j, 1}, [2]float64{-3 * j, 0})},
		{"4-site ring", heis(4, [][2]int{{0, 1}, {1, 2}, {2, 3}, {3, 0}}), multiplets(
			[2]float64{4 * j, 2}, [2]float64{-4 * j, 1}, [2]float64{-8 * j, 0},
			[2]float64{0, 1}, [2]float64{0, 1}, [2]float64{0, 0})},
	} {
		var l Levels
		if err := l.Factorize(tc.h); err != nil {
			t.Fatal(err)
		}
		if l.Symmetry() != TotalZ {
			t.Fatalf("%s: symmetry %v", tc.name, l.Symmetry())
		}
		for i := range tc.want {
			tc.want[i].e = math.Round(tc.want[i].e*1e9) / 1e9
		}
		got := labelled(&l)
		if !slices.Equal(got, tc.want) {
			t.Errorf("%s: levels %v, closed form %v", tc.name, got, tc.want)
		}
	}
}

func TestLevelsErrors(t *testing.T) {
	var l Levels
	if err := l.Factorize(&Hamiltonian{NumQubits: MaxDenseQubits + 1}); err == nil {
		t.Error("too many qubits accepted")
	}
	if _, err := l.Gibbs(1); err == nil {
		t.Error("Gibbs of no levels accepted")
	}
	if err := l.Factorize(ham(1, tm("Z", 1, 0))); err != nil {
		t.Fatal(err)
	}
	for _, beta := range []float64{-1, math.NaN(), math.Inf(1)} {
		if _, err := l.Gibbs(beta); err == nil {
			t.Errorf("beta %v accepted", beta)
		}
	}
	if _, ok := l.TotalZ(0); !ok {
		t.Error("single Z field: total Z not known")
	}
}
