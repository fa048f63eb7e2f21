package bulk

import (
	"math"
	"slices"
	"testing"

	"warmfit/cluster"
)

// The periodic-cluster spectrum in S = sigma/2 operators must equal the
// spectrum of the same Hamiltonian written in Pauli strings and
// diagonalised densely by cluster.Diagonalize (an independent method and
// the convention of the rest of warmfit): S^a S^a = sigma^a sigma^a / 4.
func TestPeriodicSpectrumMatchesPauliDiagonalisation(t *testing.T) {
	const jxy, jz, j2 = 1.0, 0.7, 0.3
	pc, err := buildPeriodicCluster("chain", supercell{8, [2]int{8, 0}, [2]int{0, 1}})
	if err != nil {
		t.Fatal(err)
	}
	names := []string{CouplingJxy, CouplingJz, CouplingJ2}
	lv, err := diagonalizeCluster(pc, couplingOperators(pc, names), []float64{jxy, jz, j2}, false)
	if err != nil {
		t.Fatal(err)
	}
	h := &cluster.Hamiltonian{NumQubits: pc.sites}
	add := func(letters string, b [2]int, c float64) {
		p, err := cluster.ParsePauli(letters, []int{b[0], b[1]})
		if err != nil {
			t.Fatal(err)
		}
		h.Ops = append(h.Ops, p)
		h.Coeffs = append(h.Coeffs, c)
	}
	for _, b := range pc.nn {
		add("XX", b, jxy/4)
		add("YY", b, jxy/4)
		add("ZZ", b, jz/4)
	}
	for _, b := range pc.nnn {
		for _, l := range []string{"XX", "YY", "ZZ"} {
			add(l, b, j2/4)
		}
	}
	spec, err := cluster.Diagonalize(h)
	if err != nil {
		t.Fatal(err)
	}
	want := spec.Values()
	var got []float64
	for n, e := range lv.energy {
		for range int(lv.mult[n]) {
			got = append(got, e)
		}
	}
	slices.Sort(got)
	if len(got) != len(want) {
		t.Fatalf("%d levels, want %d", len(got), len(want))
	}
	for i := range got {
		if math.Abs(got[i]-want[i]) > 1e-10 {
			t.Fatalf("level %d: %.12f, Pauli diagonalisation %.12f", i, got[i], want[i])
		}
	}
}

// Susceptibility maximum of the spin-1/2 Heisenberg ring. Reference:
// /work/shared/references.md, exact diagonalisation of rings with S^z
// blocks (numpy): N = 12 gives chi_max J/(g^2 mu_B^2) = 0.146922 per spin
// at T = 0.641 J; the infinite chain (Eggert, Affleck, Takahashi, PRL 73,
// 332 (1994); Johnston et al., PRB 61, 9558 (2000); from memory there)
// has 0.146926 at 0.640851 J, and chi(T = J) = 0.136543, chi(2 J) = 0.094474.
func TestRingSusceptibilityAgainstBetheAnsatz(t *testing.T) {
	m, err := NewPeriodicClusterModel("chain", PeriodicClusterOptions{})
	if err != nil {
		t.Fatal(err)
	}
	temps := []float64{0.62, 0.63, 0.635, 0.64, 0.6409, 0.645, 0.65, 0.66, 1, 2}
	c, err := m.Curves(Request{Couplings: heisenberg(t, m, 1), Temps: temps})
	if err != nil {
		t.Fatal(err)
	}
	chi := c.Susceptibility.Value
	imax := 0
	for i := range 8 {
		if chi[i] > chi[imax] {
			imax = i
		}
	}
	if math.Abs(chi[imax]-0.146922) > 2e-6 || math.Abs(temps[imax]-0.641) > 0.006 {
		t.Errorf("ring maximum %.6f at T = %.4f J; want 0.146922 near 0.641 J", chi[imax], temps[imax])
	}
	for i, want := range map[int]float64{8: 0.136543, 9: 0.094474} {
		if math.Abs(chi[i]-want) > 2e-6 {
			t.Errorf("chi(T = %g J) = %.6f, infinite chain %.6f", temps[i], chi[i], want)
		}
	}
	if !(c.Susceptibility.TrustedFrom <= 0.64) {
		t.Errorf("12- and 10-site rings should agree to 1e-3 down to 0.64 J; trusted from %g", c.Susceptibility.TrustedFrom)
	}
}

// High-temperature limits, derived: for H = J sum S.S over nearest
// neighbours (coordination z), 4 T chi = 1 - z J/(4 T) + O(J^2/T^2)
// (Curie–Weiss theta = z J S(S+1)/3 = z J/4) and C = (3 z/32) (J/T)^2 + O(J^3/T^3),
// since Tr (S_i . S_j)^2 / 4 = 3/16 per bond and there are z/2 bonds per site.
func TestHighTemperatureLimits(t *testing.T) {
	sizes := map[string][2]int{"chain": {10, 8}, "square": {10, 8}, "triangular": {12, 9}, "honeycomb": {12, 8}}
	for _, lat := range PeriodicLattices() {
		m, err := NewPeriodicClusterModel(lat, PeriodicClusterOptions{Sites: sizes[lat][0], CompareSites: sizes[lat][1]})
		if err != nil {
			t.Fatal(err)
		}
		z := float64(m.Coordination())
		const T = 200.0 // J = 1
		c, err := m.Curves(Request{Couplings: heisenberg(t, m, 1), Temps: []float64{T}})
		if err != nil {
			t.Fatal(err)
		}
		theta := (1 - 4*T*c.Susceptibility.Value[0]) * T
		if math.Abs(theta-z/4) > 0.02*z {
			t.Errorf("%s: theta %.4f, want z J/4 = %.4f", lat, theta, z/4)
		}
		ct2 := c.HeatCapacity.Value[0] * T * T
		if math.Abs(ct2-3*z/32) > 0.02*z {
			t.Errorf("%s: C T^2 %.5f, want 3 z J^2/32 = %.5f", lat, ct2, 3*z/32)
		}
	}
}

// heisenberg returns the couplings of the isotropic model J S_i.S_j.
func heisenberg(t testing.TB, m ForwardModel, j float64) []float64 {
	c, err := CouplingVector(m, map[string]float64{CouplingJxy: j, CouplingJz: j})
	if err != nil {
		t.Fatal(err)
	}
	return c
}
