package cluster_test

import (
	"math"
	"testing"

	"warmfit/cluster"
	"warmfit/validate"
)

func mustUniform(t testing.TB, m cluster.UniformModel, order int, values []float64, opt cluster.UniformOptions) *cluster.UniformResult {
	t.Helper()
	u, err := cluster.NewUniformExpansion(m, order)
	if err != nil {
		t.Fatal(err)
	}
	r, err := u.Evaluate(values, opt)
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// High-temperature expansion of the spin-1/2 Heisenberg model H = J sum
// S_i.S_j with coordination z, K = J/T (derived; shared/references.md):
//
//	ln Z/N = ln 2 + (z/2)(3K^2/32 + K^3/64) - (t/N)(3/64) K^3 + O(K^4),
//	4 T chi = 1 - z K/4 + O(K^2)       (Curie constant 1/4, theta = zJ/4),
//	C = (3z/32) K^2 + (3z/64 - (t/N)(9/32)) K^3 + O(K^4),
//
// with t/N triangles per site: a bond gives ln(1 + 3K^2/32 + K^3/64), and
// the third cumulant of a triangle is 6 tr[(S1.S2)(S2.S3)(S3.S1)]/8 =
// 6 (3/64) J^3, entering as -K^3/3! times it (the only other graphs
// reaching K^3 have a site met once, whose trace vanishes). Check: a lone
// triangle has Z/8 = cosh(3K/4), with no K^3 term.
func TestUniformHeisenbergHighTemperature(t *testing.T) {
	for _, tc := range []struct {
		kind         string
		z, triangles float64
	}{
		{"chain", 2, 0}, {"square", 4, 0}, {"honeycomb", 3, 0}, {"triangular", 6, 2},
	} {
		temps := []float64{25, 50, 100}
		r := mustUniform(t, cluster.HeisenbergModel(tc.kind), 5, []float64{1}, cluster.UniformOptions{Temperatures: temps})
		const o = 5
		for i, temp := range temps {
			K := 1 / temp
			logZ := math.Ln2 + tc.z/2*(3*K*K/32+K*K*K/64) - tc.triangles*3*K*K*K/64
			heat := 3*tc.z/32*K*K + (3*tc.z/64-tc.triangles*9/32)*K*K*K
			curie := 1 - tc.z*K/4
			checks := []struct {
				q     cluster.Quantity
				scale float64 // multiplies the curve before comparison
				want  float64
				bound float64 // allowed difference: the next order's size
			}{
				{cluster.QuantityLogZ, 1, logZ, 0.05 * tc.z * tc.z * math.Pow(K, 4)},
				{cluster.QuantityHeatCapacity, 1, heat, 0.2 * tc.z * tc.z * math.Pow(K, 4)},
				{cluster.QuantitySusceptibility, 4 * temp, curie, tc.z * tc.z * K * K},
			}
			for _, c := range checks {
				got := c.scale * r.PartialSums(c.q, 0)[o-1][i]
				if math.Abs(got-c.want) > c.bound {
					t.Errorf("%s, T = %g: %v %.12g, high-temperature series %.12g (bound %.2g)", tc.kind, temp, c.q, got, c.want, c.bound)
				}
			}
		}
	}
}

// The classical Ising model H = -J sum s_i s_j (Pauli ZZ with weight -1)
// on the square lattice against Onsager's exact energy (onsagerEnergy;
// references.md values at T = 5, 4, 3, 2.5). The class expansion at
// order 10 misses by 2.7e-5 at T = 5 and 2.9e-4 at T = 4 (measured here);
// wherever a curve point is marked trusted at the default tolerance its
// value must be within that tolerance of Onsager's.
func TestUniformIsingOnsager(t *testing.T) {
	ising := cluster.UniformModel{Lattice: "square", Couplings: []cluster.Coupling{
		{Name: "J", Terms: []cluster.TemplateTerm{{"ZZ", 0, -1}}},
	}}
	temps := []float64{2.5, 3, 4, 5}
	for _, order := range []int{8, 9, 10, 11} {
		if testing.Short() && order == 11 {
			continue
		}
		r := mustUniform(t, ising, order, []float64{1}, cluster.UniformOptions{Temperatures: temps})
		c := r.Curve(cluster.QuantityEnergy, 0, cluster.TrustOptions{})
		for i, temp := range temps {
			want := onsagerEnergy(temp)
			if c.Trust[i] != cluster.Untrusted && math.Abs(c.Value[i]-want) > c.Tolerance {
				t.Errorf("order %d, T = %g: %v value %.6f, Onsager %.6f: off by %.2g, beyond the tolerance %.g",
					order, temp, c.Trust[i], c.Value[i], want, c.Value[i]-want, c.Tolerance)
			}
		}
		if order == 10 {
			for _, m := range []struct{ T, bound float64 }{{5, 4e-5}, {4, 4e-4}} {
				i := indexOf(temps, m.T)
				if err := math.Abs(c.Bare[i] - onsagerEnergy(m.T)); err > m.bound {
					t.Errorf("order 10, T = %g: bare energy off Onsager by %.2g > %.2g", m.T, err, m.bound)
				}
			}
			if c.BareReach != 4 {
				t.Errorf("order 10: bare reach %g, want 4 (T = 3 is not converged)", c.BareReach)
			}
		}
	}
}

func indexOf(xs []float64, x float64) int {
	for i, v := range xs {
		if v == x {
			return i
		}
	}
	panic("not in grid")
}

// The XX chain H = -(j/2) sum (X X + Y Y) against the free-fermion
// integrals of validate.XXInfinite (Lieb, Schultz, Mattis 1961). The chain
// expansion telescopes to P(open chain of L) - P(L-1), which converges
// exponentially in L.
func TestUniformXXChainFreeFermions(t *testing.T) {
	xx := cluster.UniformModel{Lattice: "chain", Couplings: []cluster.Coupling{
		{Name: "j", Terms: []cluster.TemplateTerm{{"XX", 0, -0.5}, {"YY", 0, -0.5}}},
	}}
	temps := []float64{1, 2}
	r := mustUniform(t, xx, 12, []float64{1}, cluster.UniformOptions{Temperatures: temps})
	for i, temp := range temps {
		want, err := validate.XXInfinite(1/temp, 1)
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range []struct {
			q    cluster.Quantity
			want float64
		}{
			{cluster.QuantityLogZ, want.LogZPerSite},
			{cluster.QuantityEnergy, want.EnergyPerSite},
			{cluster.QuantityEntropy, want.EntropyPerSite},
			{cluster.QuantityHeatCapacity, want.HeatCapacityPerSite},
		} {
			got := r.PartialSums(c.q, 0)[11][i]
			if math.Abs(got-c.want) > 1e-9 {
				t.Errorf("T = %g: %v = %.12g, free fermions %.12g", temp, c.q, got, c.want)
			}
		}
	}
}

// The spin-1/2 Heisenberg chain's susceptibility per spin in units of
// g^2 mu_B^2/J (Eggert, Affleck, Takahashi, PRL 73, 332 (1994); Johnston
// et al., PRB 61, 9558 (2000); references.md, checked there by exact
// diagonalisation of rings): chi(T = J) = 0.136543, chi(2J) = 0.094474,
// and the maximum 0.146926 at T = 0.640851 J, each where the curve is
// trusted at order 12.
func TestUniformHeisenbergChainSusceptibility(t *testing.T) {
	temps := []float64{0.62, 0.63, 0.640851, 0.65, 0.66, 1, 2}
	r := mustUniform(t, cluster.HeisenbergModel("chain"), 12, []float64{1}, cluster.UniformOptions{Temperatures: temps})
	c := r.Curve(cluster.QuantitySusceptibility, 0, cluster.TrustOptions{Tolerance: 1e-5})
	for _, ref := range []struct{ T, chi float64 }{{1, 0.136543}, {2, 0.094474}, {0.640851, 0.146926}} {
		i := indexOf(temps, ref.T)
		if c.Trust[i] == cluster.Untrusted {
			t.Errorf("chi(T = %g) untrusted at order 12", ref.T)
		}
		if math.Abs(c.Value[i]-ref.chi) > 1e-6+c.Tolerance { // published values have 6 decimals
			t.Errorf("chi(T = %g) = %.7f (%v), published %.6f", ref.T, c.Value[i], c.Trust[i], ref.chi)
		}
	}
	// The grid maximum sits at the published temperature.
	best := 0
	for i := range temps {
		if c.Value[i] > c.Value[best] {
			best = i
		}
	}
	if temps[best] != 0.640851 {
		t.Errorf("susceptibility maximum on the grid at T = %g, published 0.640851", temps[best])
	}
}

// The square-lattice Heisenberg susceptibility has its maximum near
// k T_max = 0.935 J (quantum Monte Carlo: Makivic and Ding, PRB 43, 3562
// (1991); Kim and Troyer, PRL 80, 2705 (1998); from memory,
// references.md). At order 11 the resummed curve is trusted to 2e-4 per
// site across the maximum, which must lie within 0.03 J of it. The
// remembered QMC value of the maximum, 0.0469 g^2 mu_B^2/J per spin, is
// not checked: it cannot hold in this normalisation (the one of the chain
// test above), since here chi(1.5 J) = 0.0859 already, where the bare sums
// of the last three orders agree, and chi rises towards the maximum. The
// expansion's maximum, 0.0938 at 0.93 J (logged), is twice the remembered
// value to 0.1%, which suggests a factor 2 of normalisation in the
// recollection; a 12-site periodic cluster (fit/bulk, an independent
// diagonalisation) gives 0.0879 at 0.935 J, 6% lower, as a finite
// cluster at T ~ J should.
func TestUniformSquareSusceptibilityMaximum(t *testing.T) {
	if testing.Short() {
		t.Skip("order 11 on the square lattice: about 15 s")
	}
	var temps []float64
	for T := 0.85; T < 1.055; T += 0.01 {
		temps = append(temps, T)
	}
	temps = append(temps, 1.5)
	r := mustUniform(t, cluster.HeisenbergModel("square"), 11, []float64{1}, cluster.UniformOptions{Temperatures: temps})
	c := r.Curve(cluster.QuantitySusceptibility, 0, cluster.TrustOptions{Tolerance: 2e-4})
	best := 0
	for i := range temps[:len(temps)-1] {
		if c.Trust[i] == cluster.Untrusted {
			t.Errorf("chi(T = %.2f J) untrusted at order 11 (Wynn %.6f, Euler %.6f)", temps[i], c.Wynn[i], c.Euler[i])
		}
		if c.Value[i] > c.Value[best] {
			best = i
		}
	}
	t.Logf("maximum chi = %.5f at T = %.2f J; chi(1.5 J) = %.5f (%v)", c.Value[best], temps[best], c.Value[len(temps)-1], c.Trust[len(temps)-1])
	if math.Abs(temps[best]-0.935) > 0.03 {
		t.Errorf("susceptibility maximum at T = %.2f J, quantum Monte Carlo 0.935 J", temps[best])
	}
	if best == 0 || best == len(temps)-2 {
		t.Errorf("maximum at the edge of the grid (T = %.2f J)", temps[best])
	}
}
