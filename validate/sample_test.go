package validate

import (
	"fmt"
	"math"
	"math/rand/v2"
	"reflect"
	"strings"
	"testing"

	"warmfit/cluster"
	"warmfit/lattice"
)

// sampleModel is a 5-qubit chain with X, Y and Z letters and a
// Y-containing coupling, so that every basis sees nontrivial correlations.
func sampleModel() []lattice.Term {
	var terms []lattice.Term
	for i := 0; i+1 < 5; i++ {
		terms = append(terms,
			mustTerm("ZZ", 0.9-0.1*float64(i), i, i+1),
			mustTerm("XX", -0.5, i, i+1),
			mustTerm("XY", 0.3, i, i+1))
	}
	for i := 0; i < 5; i++ {
		terms = append(terms, mustTerm("X", 0.4, i), mustTerm("Y", -0.2*float64(i), i), mustTerm("Z", 0.25, i))
	}
	return terms
}

// parityExpect returns the expectation of the product of the measured
// letters on the given qubits from outcome probabilities: each '1' digit
// contributes a factor -1 (formats.md outcome convention).
func parityExpect(p []float64, qubits []int) float64 {
	var e float64
	for o, v := range p {
		sign := 1.0
		for _, q := range qubits {
			if o>>uint(q)&1 == 1 {
				sign = -sign
			}
		}
		e += sign * v
	}
	return e
}

// TestDistributionMatchesExpectations: in basis B the product of the
// measured letters on any subset S has expectation
// sum_o p(o) (-1)^{sum_{q in S} o_q}; compare with tr(rho P_S) from the
// eigendecomposition (definition of a projective product measurement).
func TestDistributionMatchesExpectations(t *testing.T) {
	const n = 5
	const beta = 0.8
	terms := sampleModel()
	s, err := NewSampler(n, terms, beta)
	if err != nil {
		t.Fatal(err)
	}
	th, err := ExactThermal(n, terms, beta)
	if err != nil {
		t.Fatal(err)
	}
	for _, basis := range []string{"ZZZZZ", "XXXXX", "YYYYY", "XYZYX", "ZYXXY"} {
		p, err := s.Distribution(basis)
		if err != nil {
			t.Fatal(err)
		}
		var sum float64
		for _, v := range p {
			if v < 0 {
				t.Fatalf("%s: negative probability %v", basis, v)
			}
			sum += v
		}
		if math.Abs(sum-1) > 1e-12 {
			t.Errorf("%s: probabilities sum to %v", basis, sum)
		}
		for _, qubits := range [][]int{{0}, {2}, {4}, {0, 1}, {1, 2}, {3, 4}, {0, 2, 4}, {0, 1, 2, 3, 4}} {
			letters := make([]byte, len(qubits))
			for i, q := range qubits {
				letters[i] = basis[q]
			}
			op, err := cluster.ParsePauli(string(letters), qubits)
			if err != nil {
				t.Fatal(err)
			}
			want := th.Expect(op)
			if got := parityExpect(p, qubits); math.Abs(got-want) > 1e-12 {
				t.Errorf("basis %s, %s on %v: %v from the distribution, tr(rho P) = %v", basis, letters, qubits, got, want)
			}
		}
	}
}

// TestSampleStatistics: empirical expectations of 1e5 shots lie within
// 4 sigma of the exact values, sigma = sqrt((1 - e^2)/N) (binomial
// standard error, common practice; references.md).
func TestSampleStatistics(t *testing.T) {
	const n = 5
	const shots = 100000
	terms := sampleModel()
	s, err := NewSampler(n, terms, 1.2)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(27, 28))
	for _, basis := range []string{"ZZZZZ", "XXXXX", "YXYXY"} {
		counts, err := s.Sample(basis, shots, rng)
		if err != nil {
			t.Fatal(err)
		}
		p, _ := s.Distribution(basis)
		total := 0
		for _, c := range counts {
			if len(c.Outcome) != n || c.Count <= 0 {
				t.Fatalf("bad count %+v", c)
			}
			total += c.Count
		}
		if total != shots {
			t.Fatalf("%s: %d shots counted, want %d", basis, total, shots)
		}
		for _, qubits := range [][]int{{0}, {3}, {0, 1}, {2, 3}, {1, 2, 3}} {
			exact := parityExpect(p, qubits)
			var est float64
			for _, c := range counts {
				sign := 1.0
				for _, q := range qubits {
					if c.Outcome[q] == '1' {
						sign = -sign
					}
				}
				est += sign * float64(c.Count)
			}
			est /= shots
			sigma := math.Sqrt((1 - exact*exact) / shots)
			if math.Abs(est-exact) > 4*sigma {
				t.Errorf("basis %s qubits %v: estimate %v, exact %v, %.1f sigma", basis, qubits, est, exact, math.Abs(est-exact)/sigma)
			}
		}
	}
}

// TestSampleDeterministic: the same seed gives the same snapshots, sorted
// by outcome.
func TestSampleDeterministic(t *testing.T) {
	s, err := NewSampler(5, sampleModel(), 0.5)
	if err != nil {
		t.Fatal(err)
	}
	a, _ := s.Sample("XYZZX", 5000, rand.New(rand.NewPCG(1, 2)))
	b, _ := s.Sample("XYZZX", 5000, rand.New(rand.NewPCG(1, 2)))
	if !reflect.DeepEqual(a, b) {
		t.Error("same seed, different snapshots")
	}
	for i := 1; i < len(a); i++ {
		if a[i-1].Outcome >= a[i].Outcome {
			t.Fatal("outcomes not sorted")
		}
	}
}

// TestSampleSingleSpin: H = h Z has p('0') = e^{-beta h}/(2 cosh beta h)
// in the Z basis and 1/2 in the X and Y bases (closed form).
func TestSampleSingleSpin(t *testing.T) {
	const h, beta = 0.7, 1.1
	s, err := NewSampler(1, []lattice.Term{mustTerm("Z", h, 0)}, beta)
	if err != nil {
		t.Fatal(err)
	}
	for basis, want := range map[string]float64{"Z": math.Exp(-beta*h) / (2 * math.Cosh(beta*h)), "X": 0.5, "Y": 0.5} {
		p, _ := s.Distribution(basis)
		if math.Abs(p[0]-want) > 1e-14 {
			t.Errorf("basis %s: p(0) = %v, want %v", basis, p[0], want)
		}
	}
	// A Y field: <Y> = -tanh(beta h), so p('0') in the Y basis is
	// (1 - tanh(beta h))/2.
	s, _ = NewSampler(1, []lattice.Term{mustTerm("Y", h, 0)}, beta)
	p, _ := s.Distribution("Y")
	if want := (1 - math.Tanh(beta*h)) / 2; math.Abs(p[0]-want) > 1e-14 {
		t.Errorf("Y field, Y basis: p(0) = %v, want %v", p[0], want)
	}
}

func TestSampleErrors(t *testing.T) {
	s, err := NewSampler(2, []lattice.Term{mustTerm("ZZ", 1, 0, 1)}, 1)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 1))
	for _, tc := range []struct {
		basis string
		shots int
		err   string
	}{{"ZZZ", 10, "3 letters for 2 qubits"}, {"ZQ", 10, "not X, Y or Z"}, {"ZZ", 0, "positive"}} {
		_, err := s.Sample(tc.basis, tc.shots, rng)
		if err == nil || !strings.Contains(err.Error(), tc.err) {
			t.Errorf("basis %q shots %d: error %v, want %q", tc.basis, tc.shots, err, tc.err)
		}
	}
	if _, err := s.Sample("ZZ", 1, nil); err == nil {
		t.Error("nil generator accepted")
	}
	if got := OutcomeString(0b101, 4); got != "1010" {
		t.Errorf("OutcomeString(5, 4) = %q, want 1010 (character i is qubit i)", got)
	}
}

// A single spin H = 0.7 Z at beta = 1.1 measured in the Z basis:
// p('0') = e^{-0.77}/(2 cosh 0.77).
func ExampleSampler_Sample() {
	term, _ := lattice.NewTerm("Z", []int{0}, 0.7)
	s, err := NewSampler(1, []lattice.Term{term}, 1.1)
	if err != nil {
		panic(err)
	}
	p, _ := s.Distribution("Z")
	fmt.Printf("p = [%.4f %.4f]\n", p[0], p[1])
	counts, _ := s.Sample("Z", 10000, rand.New(rand.NewPCG(1, 2)))
	total := 0
	for _, c := range counts {
		total += c.Count
	}
	fmt.Printf("%d outcomes, %d shots, first %q\n", len(counts), total, counts[0].Outcome)
	// Output:
	// p = [0.1765 0.8235]
	// 2 outcomes, 10000 shots, first "0"
}

// TestMixtureSamplerMatchesThermal: with Boltzmann weights the mixture
// sampler is the Gibbs-state sampler (same distribution to rounding;
// rho = sum_k w_k |v_k><v_k| is the definition of the Gibbs state).
func TestMixtureSamplerMatchesThermal(t *testing.T) {
	terms := []lattice.Term{
		{Pauli: "ZZ", Sites: []int{0, 1}, Coeff: 1},
		{Pauli: "ZZ", Sites: []int{1, 2}, Coeff: 0.7},
		{Pauli: "X", Sites: []int{0}, Coeff: 0.5},
		{Pauli: "X", Sites: []int{2}, Coeff: 0.4},
	}
	th, err := ExactThermal(3, terms, 0.9)
	if err != nil {
		t.Fatal(err)
	}
	mix, err := NewMixtureSampler(th.Spectrum(), th.Weights(nil))
	if err != nil {
		t.Fatal(err)
	}
	gibbs := NewSamplerFromThermal(th)
	for _, b := range []string{"ZZZ", "XZY", "XXX"} {
		p, _ := mix.Distribution(b)
		q, _ := gibbs.Distribution(b)
		for i := range p {
			if math.Abs(p[i]-q[i]) > 1e-12 {
				t.Fatalf("basis %s outcome %d: mixture %g, Gibbs %g", b, i, p[i], q[i])
			}
		}
	}
	if _, err := NewMixtureSampler(th.Spectrum(), []float64{1}); err == nil {
		t.Error("wrong number of weights accepted")
	}
}
