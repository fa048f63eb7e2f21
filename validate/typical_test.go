package validate

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"warmfit/cluster"
	"warmfit/lattice"
)

type obsSpec struct {
	letters string
	sites   []int
}

func (o obsSpec) pauli(t testing.TB) cluster.PauliString {
	p, err := cluster.ParsePauli(o.letters, o.sites)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

func paulis(t testing.TB, obs []obsSpec) []cluster.PauliString {
	out := make([]cluster.PauliString, len(obs))
	for i, o := range obs {
		out[i] = o.pauli(t)
	}
	return out
}

// typicalChecks compares every estimate of res with the dense reference
// and returns the z-scores (estimate - exact) / stderr.
func typicalZScores(t *testing.T, res *TypicalResult, ref *kronRef, beta float64, obs []obsSpec) (names []string, z []float64) {
	t.Helper()
	rho := ref.cachedRho(beta)
	e := ref.moment(beta, 1)
	lz := ref.logZ(beta)
	add := func(name string, est Estimate, exact float64) {
		if est.Stderr == 0 {
			// Exact estimates: odd-Y observables of a real H vanish in
			// every real vector.
			if math.Abs(est.Value-exact) > 1e-12 {
				t.Errorf("%s = %v with zero stderr, exact %v", name, est.Value, exact)
			}
			return
		}
		if !(est.Stderr > 0) {
			t.Errorf("%s: stderr %v", name, est.Stderr)
			return
		}
		names = append(names, name)
		z = append(z, (est.Value-exact)/est.Stderr)
	}
	add("ln Z", res.LogZ, lz)
	add("energy", res.Energy, e)
	add("energy per site", res.EnergyPerSite, e/float64(ref.n))
	add("entropy", res.Entropy, lz+beta*e)
	add("heat capacity", res.HeatCapacity, beta*beta*(ref.moment(beta, 2)-e*e))
	for i, o := range obs {
		add(fmt.Sprintf("<%s%v>", o.letters, o.sites), res.Expect[i], ref.expect(rho, o.letters, o.sites))
	}
	return names, z
}

var tfim10Observables = []obsSpec{
	{"X", []int{0}}, {"X", []int{5}}, {"ZZ", []int{2, 3}}, {"ZZ", []int{8, 9}},
	{"Z", []int{4}}, {"XX", []int{3, 4}}, {"ZZ", []int{1, 6}},
}

// Typicality at n = 10 against dense ED: every estimate within 3 standard
// errors (brief; typicality estimates are unbiased up to O(1/R) and nearly
// Gaussian for R = 48).
func TestTypicalMatchesDenseED10(t *testing.T) {
	terms := tfim10Terms()
	ref := cachedKronRef(t, "TFIM open random", 10, terms)
	res, err := TypicalThermal(10, terms, tfim10Beta, paulis(t, tfim10Observables), TypicalityOptions{Vectors: 48, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	names, z := typicalZScores(t, res, ref, tfim10Beta, tfim10Observables)
	for i := range z {
		if math.Abs(z[i]) > 3 {
			t.Errorf("%s: %.2f sigma from dense ED", names[i], z[i])
		}
	}
}

// Non-free models on 8 qubits: a real one, and a complex one with odd-Y
// terms (the Hermitian path), with Y-containing observables.
func TestTypicalMatchesDenseED8(t *testing.T) {
	obs := []obsSpec{{"X", []int{0}}, {"Y", []int{3}}, {"Z", []int{7}}, {"XY", []int{2, 3}}, {"YY", []int{4, 5}}, {"ZXZ", []int{1, 2, 3}}, {"YZ", []int{0, 6}}}
	for _, tc := range []struct {
		name string
		real bool
		beta float64
	}{{"real", true, 0.6}, {"complex", false, 0.6}, {"complex cold", false, 3}} {
		t.Run(tc.name, func(t *testing.T) {
			terms, ref := random8Reference(t, tc.real)
			res, err := TypicalThermal(8, terms, tc.beta, paulis(t, obs), TypicalityOptions{Vectors: 48, Seed: 2})
			if err != nil {
				t.Fatal(err)
			}
			names, z := typicalZScores(t, res, ref, tc.beta, obs)
			for i := range z {
				if math.Abs(z[i]) > 3 {
					t.Errorf("%s: %.2f sigma from dense ED", names[i], z[i])
				}
			}
		})
	}
}

// The jackknife errors must be honest: over many seeds the z-scores of all
// estimates have root mean square near 1. For R vectors a jackknife
// z-score follows roughly Student's t with R-1 degrees of freedom, RMS
// sqrt((R-1)/(R-3)) = 1.07 for R = 16 (common practice).
func TestTypicalErrorBarsAreHonest(t *testing.T) {
	terms, ref := random8Reference(t, true)
	obs := []obsSpec{{"X", []int{0}}, {"Z", []int{7}}, {"YY", []int{4, 5}}, {"ZXZ", []int{1, 2, 3}}}
	var ss float64
	var count int
	seeds := 40
	if testing.Short() {
		seeds = 15
	}
	for seed := 0; seed < seeds; seed++ {
		res, err := TypicalThermal(8, terms, 0.6, paulis(t, obs), TypicalityOptions{Vectors: 16, Seed: uint64(100 + seed)})
		if err != nil {
			t.Fatal(err)
		}
		_, z := typicalZScores(t, res, ref, 0.6, obs)
		for _, v := range z {
			ss += v * v
			count++
		}
	}
	rms := math.Sqrt(ss / float64(count))
	if rms < 0.75 || rms > 1.4 {
		t.Errorf("RMS z-score over %d seeds = %.3f, want about 1.07", seeds, rms)
	}
	t.Logf("RMS z-score over %d seeds x %d estimates: %.3f", seeds, count/seeds, rms)
}

// At fixed R the statistical error falls about as 2^{-n/2} with system
// size (typicality: relative error ~ 1/sqrt(R Z_eff), Z_eff ~ 2^n at high
// temperature; Sugiura & Shimizu 2013). More precisely, for random-phase
// vectors Var <r|A|r> = sum_{a != b} |A_ab|^2 (Hutchinson-type trace
// estimator, common practice), and for A = exp(-beta H) at small beta this
// is beta^2 2^n sum_k c_k^2 over the off-diagonal terms, against Z ~ 2^n:
// the error of ln Z scales as sqrt(n_off / 2^n). For the open TFIM (n
// off-diagonal X terms) each step n -> n+2 divides it by 2 sqrt(n/(n+2)).
func TestTypicalErrorShrinksWithSize(t *testing.T) {
	var prev float64
	for _, n := range []int{8, 10, 12} {
		terms, err := TFIMChainTerms(n, 1, 1, false)
		if err != nil {
			t.Fatal(err)
		}
		res, err := TypicalThermal(n, terms, 0.1, nil, TypicalityOptions{Vectors: 128, Seed: 3})
		if err != nil {
			t.Fatal(err)
		}
		if prev != 0 {
			r := prev / res.LogZ.Stderr
			want := 2 * math.Sqrt(float64(n-2)/float64(n))
			// The jackknife error itself fluctuates by about
			// 1/sqrt(2R) = 6% (common practice); allow 25% on the ratio.
			if math.Abs(r/want-1) > 0.25 {
				t.Errorf("n=%d: stderr(ln Z) shrank by %.3f from n-2, want %.3f", n, r, want)
			}
			t.Logf("n=%d: stderr(ln Z) = %.3g, ratio %.3f (predicted %.3f)", n, res.LogZ.Stderr, r, want)
		}
		prev = res.LogZ.Stderr
	}
}

// Beyond dense ED: 16 qubits against the exact free-fermion solution.
func TestTypicalMatchesFreeFermions16(t *testing.T) {
	if testing.Short() {
		t.Skip("16 qubits")
	}
	const n = 16
	const beta = 0.8
	terms := randomTFIM(rand.New(rand.NewPCG(61, 62)), n, false)
	ff, err := NewFreeFermionChain(n, terms, beta)
	if err != nil {
		t.Fatal(err)
	}
	obs := []obsSpec{{"X", []int{0}}, {"X", []int{8}}, {"ZZ", []int{7, 8}}, {"ZZ", []int{3, 9}}, {"XX", []int{14, 15}}}
	res, err := TypicalThermal(n, terms, beta, paulis(t, obs), TypicalityOptions{Vectors: 8, Seed: 4})
	if err != nil {
		t.Fatal(err)
	}
	check := func(name string, est Estimate, exact float64) {
		if z := (est.Value - exact) / est.Stderr; !(math.Abs(z) <= 3) {
			t.Errorf("%s = %v ± %v, exact %v (%.2f sigma)", name, est.Value, est.Stderr, exact, z)
		}
	}
	check("ln Z", res.LogZ, ff.LogZ())
	check("energy", res.Energy, ff.Energy())
	check("heat capacity", res.HeatCapacity, ff.HeatCapacity())
	for i, o := range obs {
		want, err := ff.Expect(o.pauli(t))
		if err != nil {
			t.Fatal(err)
		}
		check(o.letters, res.Expect[i], want)
	}
}

// Large beta (ground-state dominated) must neither overflow nor lose
// accuracy: the Chebyshev scale is carried as a logarithm.
func TestTypicalLargeAndNegativeBeta(t *testing.T) {
	terms, ref := random8Reference(t, true)
	obs := []obsSpec{{"X", []int{0}}, {"ZZ", []int{3, 4}}}
	for _, beta := range []float64{40, -0.8} {
		res, err := TypicalThermal(8, terms, beta, paulis(t, obs), TypicalityOptions{Vectors: 24, Seed: 5})
		if err != nil {
			t.Fatal(err)
		}
		names, z := typicalZScores(t, res, ref, beta, obs)
		for i := range z {
			if math.Abs(z[i]) > 3 {
				t.Errorf("beta=%v %s: %.2f sigma from dense ED", beta, names[i], z[i])
			}
		}
		// At beta = 40 ln Z is -beta E_0 plus a small entropy term.
		if beta == 40 && math.Abs(res.LogZ.Value-ref.logZ(beta)) > 1e-3*math.Abs(ref.logZ(beta)) {
			t.Errorf("beta=40: ln Z = %v, dense %v", res.LogZ.Value, ref.logZ(beta))
		}
	}
}

// beta = 0 is exact: |r|^2 = 2^n for unit-modulus amplitudes.
func TestTypicalInfiniteTemperature(t *testing.T) {
	terms, _ := TFIMChainTerms(6, 1, 1, false)
	res, err := TypicalThermal(6, terms, 0, paulis(t, []obsSpec{{"X", []int{2}}}), TypicalityOptions{Vectors: 4})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(res.LogZ.Value-6*math.Ln2) > 1e-13 || res.LogZ.Stderr > 1e-13 {
		t.Errorf("beta=0: ln Z = %v ± %v, want 6 ln 2 exactly", res.LogZ.Value, res.LogZ.Stderr)
	}
	if math.Abs(res.Entropy.Value-6*math.Ln2) > 1e-13 {
		t.Errorf("beta=0: S = %v", res.Entropy.Value)
	}
}

func TestTypicalWorkersIdentical(t *testing.T) {
	if testing.Short() {
		t.Skip("14 qubits")
	}
	const n = 14
	// TFIM with a Y field: complex path, several chunks.
	terms, _ := TFIMChainTerms(n, 1, 0.8, false)
	for i := 0; i < n; i += 3 {
		terms = append(terms, lattice.Term{Pauli: "Y", Sites: []int{i}, Coeff: 0.4})
	}
	obs := []cluster.PauliString{{X: 1}, {X: 6, Z: 6}}
	var ref *TypicalResult
	for _, w := range []int{1, 2, 3} {
		res, err := TypicalThermal(n, terms, 0.4, obs, TypicalityOptions{Vectors: 2, Seed: 9, Workers: w})
		if err != nil {
			t.Fatal(err)
		}
		if ref == nil {
			ref = res
			continue
		}
		if res.LogZ != ref.LogZ || res.Energy != ref.Energy || res.Expect[0] != ref.Expect[0] || res.Expect[1] != ref.Expect[1] {
			t.Errorf("workers %d: %+v differs from 1 worker %+v", w, res, ref)
		}
	}
}

func TestTypicalRefuses(t *testing.T) {
	terms, _ := TFIMChainTerms(4, 1, 1, false)
	for _, tc := range []struct {
		name string
		n    int
		opt  TypicalityOptions
		obs  []cluster.PauliString
		want string
	}{
		{"too many qubits", MaxTypicalityQubits + 1, TypicalityOptions{}, nil, "MaxTypicalityQubits"},
		{"one vector", 4, TypicalityOptions{Vectors: 1}, nil, "at least 2"},
		{"memory", 20, TypicalityOptions{MaxMemory: 1 << 20}, nil, "MaxMemory"},
		{"observable outside", 4, TypicalityOptions{}, []cluster.PauliString{{X: 1 << 4}}, "outside"},
		{"bad tolerance", 4, TypicalityOptions{Tolerance: 2}, nil, "tolerance"},
	} {
		_, err := TypicalThermal(tc.n, terms, 1, tc.obs, tc.opt)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v, want mention of %q", tc.name, err, tc.want)
		}
	}
	if _, err := TypicalThermal(4, terms, math.NaN(), nil, TypicalityOptions{}); err == nil {
		t.Error("NaN beta accepted")
	}
}

func ExampleTypical() {
	// Transverse-field Ising chain -sum Z_i Z_{i+1} - sum X_i on 12 sites,
	// compared with its exact free-fermion solution.
	terms, _ := TFIMChainTerms(12, 1, 1, false)
	x6 := cluster.PauliString{X: 1 << 6}
	logZ, expect, err := Typical(12, terms, 0.5, []cluster.PauliString{x6}, TypicalityOptions{Vectors: 8, Seed: 1})
	if err != nil {
		panic(err)
	}
	exact, _ := NewFreeFermionChain(12, terms, 0.5)
	x6Exact, _ := exact.Expect(x6)
	fmt.Printf("ln Z  = %.3f ± %.3f (exact %.3f)\n", logZ.Value, logZ.Stderr, exact.LogZ())
	fmt.Printf("<X_6> = %.3f ± %.3f (exact %.3f)\n", expect[0].Value, expect[0].Stderr, x6Exact)
	// Output:
	// ln Z  = 10.877 ± 0.030 (exact 10.904)
	// <X_6> = 0.403 ± 0.019 (exact 0.406)
}

func benchmarkTypicality(b *testing.B, n int) {
	// XXZ chain at beta = 0.5; the observables are its bond terms.
	terms := xxzTerms(n)
	var obs []cluster.PauliString
	for _, t := range terms {
		if len(t.Sites) == 2 {
			p, _ := cluster.ParsePauli(t.Pauli, t.Sites)
			obs = append(obs, p)
		}
	}
	b.ResetTimer()
	for b.Loop() {
		res, err := TypicalThermal(n, terms, 0.5, obs, TypicalityOptions{Vectors: 4, Seed: 1})
		if err != nil {
			b.Fatal(err)
		}
		b.ReportMetric(float64(res.ChebyshevTerms), "cheb-terms")
		b.ReportMetric(float64(res.LanczosSteps), "lanczos-steps")
	}
}

func BenchmarkTypicality16Qubits(b *testing.B) { benchmarkTypicality(b, 16) }
func BenchmarkTypicality20Qubits(b *testing.B) { benchmarkTypicality(b, 20) }
