package validate

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"warmfit/cluster"
	"warmfit/lattice"
)

func TestTFIMInfiniteReferenceValues(t *testing.T) {
	// Pfeuty 1970 integrals; values "computed" in references.md
	// (transverse-field Ising chain section), quoted to 14 digits.
	for _, tc := range []struct {
		beta, j, h  float64
		logZ, eSite float64
	}{
		{0.5, 1, 1, 0.91740898065185, -0.81167568513156},
		{1, 1, 1, 1.4152076398463, -1.1179418373402},
		{0.5, 1, 0.5, 0.83981407169888, -0.55238517685956},
	} {
		got, err := TFIMInfinite(tc.beta, tc.j, tc.h)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(got.LogZPerSite-tc.logZ) > 1e-12 || math.Abs(got.EnergyPerSite-tc.eSite) > 1e-12 {
			t.Errorf("beta=%v J=%v h=%v: ln Z/N = %.15g, e = %.15g; want %.14g, %.14g",
				tc.beta, tc.j, tc.h, got.LogZPerSite, got.EnergyPerSite, tc.logZ, tc.eSite)
		}
	}
}

func TestXXInfiniteReferenceValues(t *testing.T) {
	// Lieb–Schultz–Mattis 1961; values "computed" in references.md (XX
	// chain section).
	for _, tc := range []struct{ beta, logZ float64 }{
		{0.5, 0.75379584489642},
		{1, 0.91740898065185},
	} {
		got, err := XXInfinite(tc.beta, 1)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(got.LogZPerSite-tc.logZ) > 1e-12 {
			t.Errorf("beta=%v: ln Z/N = %.15g, want %.14g", tc.beta, got.LogZPerSite, tc.logZ)
		}
	}
	// Identity ln Z_XX(beta) = ln Z_TFIM(beta/2) at J = h = 1
	// (references.md; substitute k -> 2k in the Pfeuty integral).
	for _, beta := range []float64{0.1, 0.7, 2, 9} {
		xx, err1 := XXInfinite(beta, 1)
		tf, err2 := TFIMInfinite(beta/2, 1, 1)
		if err1 != nil || err2 != nil {
			t.Fatal(err1, err2)
		}
		if math.Abs(xx.LogZPerSite-tf.LogZPerSite) > 1e-13 {
			t.Errorf("beta=%v: ln Z_XX = %.16g, ln Z_TFIM(beta/2) = %.16g", beta, xx.LogZPerSite, tf.LogZPerSite)
		}
	}
}

func TestInfiniteChainLimits(t *testing.T) {
	// Critical chain at low temperature: e(T) = -4/pi + pi c T^2 / (6 v)
	// with ground-state energy -4/pi (Pfeuty 1970), central charge c = 1/2
	// and velocity v = 2 (eps_k ~ 2k), the conformal specific-heat law
	// (Bloete, Cardy, Nightingale, PRL 56, 742 (1986); Affleck, same issue).
	tf, err := TFIMInfinite(200, 1, 1)
	if err != nil {
		t.Fatal(err)
	}
	T := 1.0 / 200
	if r := (tf.EnergyPerSite + 4/math.Pi) / (math.Pi * T * T / 24); math.Abs(r-1) > 1e-2 {
		t.Errorf("beta=200: (e + 4/pi) / (pi T^2/24) = %v, want 1", r)
	}
	// Heat capacity from the thermodynamic identity C = -beta^2 dE/dbeta
	// (central difference); beta = 0 gives ln 2 per site.
	for _, beta := range []float64{0.3, 1.7} {
		const h = 1e-4
		lo, err1 := TFIMInfinite(beta-h, 1, 0.7)
		mid, err2 := TFIMInfinite(beta, 1, 0.7)
		hi, err3 := TFIMInfinite(beta+h, 1, 0.7)
		if err1 != nil || err2 != nil || err3 != nil {
			t.Fatal(err1, err2, err3)
		}
		c := -beta * beta * (hi.EnergyPerSite - lo.EnergyPerSite) / (2 * h)
		if math.Abs(c-mid.HeatCapacityPerSite) > 1e-6 {
			t.Errorf("beta=%v: C/N = %v, -beta^2 dE/dbeta = %v", beta, mid.HeatCapacityPerSite, c)
		}
		if s := mid.LogZPerSite + beta*mid.EnergyPerSite; math.Abs(s-mid.EntropyPerSite) > 1e-15 {
			t.Errorf("entropy %v, ln Z + beta E = %v", mid.EntropyPerSite, s)
		}
	}
	z, _ := TFIMInfinite(0, 1, 1)
	if math.Abs(z.LogZPerSite-math.Ln2) > 1e-15 {
		t.Errorf("beta=0: ln Z/N = %v, want ln 2", z.LogZPerSite)
	}
}

// The per-site value from open chains, ln Z(N+1) - ln Z(N), converges to
// the infinite chain (references.md, NLCE section: within 2e-12 by L = 7
// at beta = 0.5); for N = 40 it must match to 1e-12.
func TestOpenChainDifferenceApproachesInfinite(t *testing.T) {
	for _, tc := range []struct{ beta, j, h float64 }{{0.5, 1, 1}, {1, 1, 1}, {0.5, 1, 0.5}} {
		var lz [2]float64
		for i, n := range []int{40, 41} {
			terms, err := TFIMChainTerms(n, tc.j, tc.h, false)
			if err != nil {
				t.Fatal(err)
			}
			f, err := NewFreeFermionChain(n, terms, tc.beta)
			if err != nil {
				t.Fatal(err)
			}
			lz[i] = f.LogZ()
		}
		inf, err := TFIMInfinite(tc.beta, tc.j, tc.h)
		if err != nil {
			t.Fatal(err)
		}
		if d := math.Abs(lz[1] - lz[0] - inf.LogZPerSite); d > 1e-12 {
			t.Errorf("%+v: ln Z(41) - ln Z(40) - ln Z/N(inf) = %g", tc, d)
		}
	}
}

// pfaffianBrute expands the Pfaffian along its first row (the defining
// recursion Pf(A) = sum_j (-1)^{j} a_{0j} Pf(A_{0j,0j}), j = 1..).
func pfaffianBrute(a [][]float64) float64 {
	n := len(a)
	if n == 0 {
		return 1
	}
	var s float64
	for j := 1; j < n; j++ {
		var rest []int
		for k := 1; k < n; k++ {
			if k != j {
				rest = append(rest, k)
			}
		}
		sub := make([][]float64, len(rest))
		for x, r := range rest {
			sub[x] = make([]float64, len(rest))
			for y, c := range rest {
				sub[x][y] = a[r][c]
			}
		}
		sign := 1.0
		if j%2 == 0 {
			sign = -1
		}
		s += sign * a[0][j] * pfaffianBrute(sub)
	}
	return s
}

func TestPfaffian(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	for _, n := range []int{2, 4, 6, 8} {
		for trial := 0; trial < 5; trial++ {
			a := make([][]float64, n)
			for i := range a {
				a[i] = make([]float64, n)
			}
			m := mat.NewDense(n, n, nil)
			for i := 0; i < n; i++ {
				for j := i + 1; j < n; j++ {
					v := rng.NormFloat64()
					if trial == 4 && (i+j)%3 == 0 {
						v = 0 // sparse, forces pivoting
					}
					a[i][j], a[j][i] = v, -v
					m.Set(i, j, v)
					m.Set(j, i, -v)
				}
			}
			want := pfaffianBrute(a)
			s, la := pfaffian(m)
			got := s * math.Exp(la)
			if math.Abs(got-want) > 1e-12*math.Max(1, math.Abs(want)) {
				t.Errorf("n=%d trial %d: Pf = %v, expansion %v", n, trial, got, want)
			}
			// Pf^2 = det (Cayley).
			if d := mat.Det(m); math.Abs(got*got-d) > 1e-10*math.Max(1, math.Abs(d)) {
				t.Errorf("n=%d: Pf^2 = %v, det = %v", n, got*got, d)
			}
		}
	}
}

// randomCouplings returns -J_i Z_i Z_{i+1} - h_i X_i with random J_i, h_i.
func randomTFIM(rng *rand.Rand, n int, periodic bool) []lattice.Term {
	terms, err := TFIMChainTerms(n, 1, 1, periodic)
	if err != nil {
		panic(err)
	}
	for i := range terms {
		terms[i].Coeff *= 0.3 + 1.2*rng.Float64()
	}
	return terms
}

type ffCase struct {
	name  string
	n     int
	beta  float64
	terms []lattice.Term
}

func freeFermionCases(t *testing.T) []ffCase {
	rng := rand.New(rand.NewPCG(31, 32))
	must := func(ts []lattice.Term, err error) []lattice.Term {
		if err != nil {
			t.Fatal(err)
		}
		return ts
	}
	var cases []ffCase
	cases = append(cases,
		ffCase{"TFIM open critical", 8, 0.9, must(TFIMChainTerms(8, 1, 1, false))},
		ffCase{"TFIM open ordered beta=4", 8, 4, must(TFIMChainTerms(8, 1, 0.4, false))},
		ffCase{"TFIM open random", 10, tfim10Beta, tfim10Terms()},
		ffCase{"TFIM open negative beta", 8, -0.6, randomTFIM(rng, 8, false)},
		ffCase{"XX open", 9, 1.3, must(XXChainTerms(9, 1, false))},
		ffCase{"TFIM ring critical", 8, 1.1, must(TFIMChainTerms(8, 1, 1, true))},
		ffCase{"TFIM ring ordered", 7, 2.5, must(TFIMChainTerms(7, 1, 0.5, true))},
		ffCase{"TFIM ring paramagnet", 9, 0.8, must(TFIMChainTerms(9, 0.6, 1, true))},
		ffCase{"TFIM ring random", 8, 1.5, randomTFIM(rng, 8, true)},
		ffCase{"XX ring even", 8, 2, must(XXChainTerms(8, 1, true))},
		ffCase{"XX ring odd", 7, 1, must(XXChainTerms(7, 0.8, true))},
	)
	// XY chain with fields and Y-odd (imaginary) couplings X_i Y_{i+1}:
	// still quadratic in the identity frame.
	var xy []lattice.Term
	for i := 0; i < 8; i++ {
		xy = append(xy, lattice.Term{Pauli: "Z", Sites: []int{i}, Coeff: 2*rng.Float64() - 1})
	}
	for i := 0; i+1 < 8; i++ {
		for _, l := range []string{"XX", "YY", "XY", "YX"} {
			xy = append(xy, lattice.Term{Pauli: l, Sites: []int{i, i + 1}, Coeff: 2*rng.Float64() - 1})
		}
	}
	xy = append(xy, lattice.Term{Pauli: "XZX", Sites: []int{2, 3, 4}, Coeff: 0.4}) // longer-range bilinear
	cases = append(cases, ffCase{"XY with fields and DM", 8, 0.8, xy})
	// -J YY - h X: quadratic after the frame Y->X... (found automatically).
	var yx []lattice.Term
	for i := 0; i < 8; i++ {
		yx = append(yx, lattice.Term{Pauli: "X", Sites: []int{i}, Coeff: -0.7})
		if i+1 < 8 {
			yx = append(yx, lattice.Term{Pauli: "YY", Sites: []int{i, i + 1}, Coeff: -1})
		}
	}
	cases = append(cases, ffCase{"YY + X frame", 8, 1.2, yx})
	return cases
}

// Exact free-fermion solutions against brute-force dense ED (Kronecker
// construction and EigenSym, typical_reference_test.go).
func TestFreeFermionChainMatchesDenseED(t *testing.T) {
	for _, tc := range freeFermionCases(t) {
		t.Run(tc.name, func(t *testing.T) {
			f, err := NewFreeFermionChain(tc.n, tc.terms, tc.beta)
			if err != nil {
				t.Fatal(err)
			}
			ref := cachedKronRef(t, tc.name, tc.n, tc.terms)
			lz := ref.logZ(tc.beta)
			e := ref.moment(tc.beta, 1)
			c := tc.beta * tc.beta * (ref.moment(tc.beta, 2) - e*e)
			for _, q := range []struct {
				name      string
				got, want float64
			}{{"ln Z", f.LogZ(), lz}, {"energy", f.Energy(), e}, {"heat capacity", f.HeatCapacity(), c}, {"entropy", f.Entropy(), lz + tc.beta*e}} {
				if math.Abs(q.got-q.want) > 1e-10*math.Max(1, math.Abs(q.want)) {
					t.Errorf("%s = %.14g, dense ED %.14g", q.name, q.got, q.want)
				}
			}
			if f.sectors {
				if _, err := f.Expect(cluster.PauliString{Z: 1}); err == nil {
					t.Error("Expect on a ring: no error")
				}
				return
			}
			rho := ref.cachedRho(tc.beta)
			for _, ob := range []struct {
				letters string
				sites   []int
			}{
				{"X", []int{0}}, {"X", []int{3}}, {"Z", []int{2}}, {"Y", []int{4}},
				{"ZZ", []int{0, 1}}, {"ZZ", []int{3, 4}}, {"XX", []int{2, 3}}, {"YY", []int{5, 6}},
				{"XY", []int{1, 2}}, {"ZZ", []int{1, 5}}, {"XX", []int{0, 6}}, {"ZZZZ", []int{0, 2, 3, 7}},
				{"XZX", []int{2, 3, 4}}, {"YZZY", []int{1, 2, 3, 4}}, {"XXXX", []int{0, 1, 2, 3}},
			} {
				p, err := cluster.ParsePauli(ob.letters, ob.sites)
				if err != nil {
					t.Fatal(err)
				}
				got, err := f.Expect(p)
				if err != nil {
					t.Fatal(err)
				}
				want := ref.expect(rho, ob.letters, ob.sites)
				if math.Abs(got-want) > 1e-10 {
					t.Errorf("<%s%v> = %.14g, dense ED %.14g", ob.letters, ob.sites, got, want)
				}
			}
		})
	}
}

// The open XX chain's modes are the hopping-matrix eigenvalues
// |2 J cos(pi k/(N+1))|, k = 1..N (Lieb–Schultz–Mattis 1961, open chain);
// the open TFIM at h = 0 has modes 2J (N-1 times) and one zero mode.
func TestFreeFermionModeEnergies(t *testing.T) {
	const n = 11
	terms, _ := XXChainTerms(n, 0.9, false)
	f, err := NewFreeFermionChain(n, terms, 1)
	if err != nil {
		t.Fatal(err)
	}
	var want []float64
	for k := 1; k <= n; k++ {
		want = append(want, math.Abs(2*0.9*math.Cos(math.Pi*float64(k)/(n+1))))
	}
	sortDesc(want)
	got := f.ModeEnergies()
	for k := range want {
		if math.Abs(got[k]-want[k]) > 1e-12 {
			t.Errorf("XX mode %d: %v, want %v", k, got[k], want[k])
		}
	}
	terms, _ = TFIMChainTerms(n, 1.5, 0, false)
	f, err = NewFreeFermionChain(n, terms, 1)
	if err != nil {
		t.Fatal(err)
	}
	got = f.ModeEnergies()
	for k := 0; k < n-1; k++ {
		if math.Abs(got[k]-3) > 1e-12 {
			t.Errorf("classical Ising mode %d: %v, want 3", k, got[k])
		}
	}
	if math.Abs(got[n-1]) > 1e-12 {
		t.Errorf("classical Ising zero mode: %v", got[n-1])
	}
}

func sortDesc(x []float64) {
	for i := range x {
		for j := i + 1; j < len(x); j++ {
			if x[j] > x[i] {
				x[i], x[j] = x[j], x[i]
			}
		}
	}
}

func TestFreeFermionChainRejectsInteracting(t *testing.T) {
	for _, tc := range []struct {
		name  string
		terms []lattice.Term
	}{
		{"XXZ", []lattice.Term{{Pauli: "XX", Sites: []int{0, 1}, Coeff: 1}, {Pauli: "YY", Sites: []int{0, 1}, Coeff: 1}, {Pauli: "ZZ", Sites: []int{0, 1}, Coeff: 1}}},
		{"TFIM with longitudinal field", []lattice.Term{{Pauli: "ZZ", Sites: []int{0, 1}, Coeff: 1}, {Pauli: "X", Sites: []int{0}, Coeff: 1}, {Pauli: "Z", Sites: []int{1}, Coeff: 0.2}}},
		{"next-nearest ZZ", []lattice.Term{{Pauli: "ZZ", Sites: []int{0, 2}, Coeff: 1}, {Pauli: "ZZ", Sites: []int{1, 2}, Coeff: 1}, {Pauli: "X", Sites: []int{0}, Coeff: 1}}},
	} {
		if _, err := NewFreeFermionChain(4, tc.terms, 1); err == nil {
			t.Errorf("%s: accepted as free fermions", tc.name)
		}
	}
	// Interacting terms with zero coefficient are ignored.
	xx, _ := XXChainTerms(4, 1, false)
	xx = append(xx, lattice.Term{Pauli: "ZZ", Sites: []int{1, 2}, Coeff: 0})
	if _, err := NewFreeFermionChain(4, xx, 1); err != nil {
		t.Errorf("XX chain with a zero ZZ term: %v", err)
	}
	// Bad input.
	if _, err := NewFreeFermionChain(3, []lattice.Term{{Pauli: "X", Sites: []int{5}, Coeff: 1}}, 1); err == nil {
		t.Error("site outside the chain accepted")
	}
	if _, err := TFIMChainTerms(2, 1, 1, true); err == nil {
		t.Error("two-site ring accepted")
	}
}

// A critical ring of N sites differs from the infinite chain by the
// conformal torus correction ln Z - N f = ln(1 + qt^{1/8} + ...), qt =
// exp(-2 pi N/(v beta)), from the Ising spin field of scaling dimension
// 1/8 (Cardy, Nucl. Phys. B 270, 186 (1986), modular invariance; c = 1/2,
// v = 2 for J = h = 1). Higher fields (dimension 1 and above) are
// negligible here; lattice corrections are of relative order (T/v)^2, a
// few per cent at beta = 4. At beta = 0.5 the correction is below 1e-10;
// at beta = 200 only the ground-state energy is checked.
func TestFreeFermionLongRing(t *testing.T) {
	const n = 64
	terms, _ := TFIMChainTerms(n, 1, 1, true)
	for _, beta := range []float64{0.5, 4, 8} {
		f, err := NewFreeFermionChain(n, terms, beta)
		if err != nil {
			t.Fatal(err)
		}
		inf, _ := TFIMInfinite(beta, 1, 1)
		got := f.LogZ() - n*inf.LogZPerSite
		want := math.Log1p(math.Exp(-2 * math.Pi * n / (2 * beta) / 8))
		if !(math.Abs(got-want) <= 0.05*want+1e-10) {
			t.Errorf("beta=%v: ln Z(ring) - N f = %.6g, torus CFT %.6g", beta, got, want)
		}
	}
	f, err := NewFreeFermionChain(n, terms, 200)
	if err != nil {
		t.Fatal(err)
	}
	// Ground state of the critical ring: E0/N = -4/pi - pi c v/(6 N^2)
	// (Bloete, Cardy, Nightingale 1986); at beta = 200 the gap ~ 2 pi v/N
	// ~ 0.2 is well resolved.
	want := -4/math.Pi - math.Pi*0.5*2/(6*n*n)
	if d := f.Energy()/n - want; !(math.Abs(d) < 1e-5) {
		t.Errorf("beta=200: ring E/N = %.10g, CFT ground state %.10g", f.Energy()/n, want)
	}
}

func ExampleNewFreeFermionChain() {
	// Open transverse-field Ising chain -sum Z_i Z_{i+1} - sum X_i, 10 sites
	// (the printed values agree with dense diagonalisation of the
	// 1024 x 1024 matrix to all digits shown).
	terms, _ := TFIMChainTerms(10, 1, 1, false)
	f, err := NewFreeFermionChain(10, terms, 0.5)
	if err != nil {
		panic(err)
	}
	zz, _ := f.Expect(cluster.PauliString{Z: 3 << 4}) // Z_4 Z_5
	fmt.Printf("ln Z = %.6f  E = %.6f  <Z4 Z5> = %.6f\n", f.LogZ(), f.Energy(), zz)
	// Output:
	// ln Z = 9.069330  E = -7.761001  <Z4 Z5> = 0.405838
}
