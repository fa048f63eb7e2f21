package validate

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"warmfit/cluster"
	"warmfit/lattice"
)

// randomTerms returns a random local Hamiltonian on an open chain of n
// qubits: every one- and two-site Pauli string (restricted to an even
// number of Y letters when real), a few three-site strings, and one term
// repeated, with coefficients in [-1, 1].
func randomTerms(rng *rand.Rand, n int, real bool) []lattice.Term {
	letters := "XYZ"
	var out []lattice.Term
	add := func(p string, sites []int) {
		t, err := lattice.NewTerm(p, sites, 2*rng.Float64()-1)
		if err != nil {
			panic(err)
		}
		ps, _ := cluster.ParsePauli(t.Pauli, t.Sites)
		if real && !ps.IsReal() {
			return
		}
		out = append(out, t)
	}
	for i := 0; i < n; i++ {
		for a := 0; a < 3; a++ {
			add(letters[a:a+1], []int{i})
		}
	}
	for i := 0; i+1 < n; i++ {
		for a := 0; a < 3; a++ {
			for b := 0; b < 3; b++ {
				add(string([]byte{letters[a], letters[b]}), []int{i, i + 1})
			}
		}
	}
	for i := 0; i+2 < n; i += 2 {
		add("XZY", []int{i, i + 1, i + 2})
		add("YYX", []int{i, i + 1, i + 2})
	}
	out = append(out, out[len(out)/2]) // repeated strings add
	return out
}

func randomState(rng *rand.Rand, dim int) []complex128 {
	v := make([]complex128, dim)
	for i := range v {
		v[i] = complex(rng.NormFloat64(), rng.NormFloat64())
	}
	return v
}

func maxAbsDiff(a, b []complex128) float64 {
	var m float64
	for i := range a {
		m = math.Max(m, cmplx.Abs(a[i]-b[i]))
	}
	return m
}

// The matrix-free action must equal the Kronecker-product matrix
// (independent construction, typical_reference_test.go).
func TestOperatorApplyMatchesKronecker(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, tc := range []struct {
		n    int
		real bool
	}{{1, false}, {3, true}, {5, false}, {6, true}, {7, false}} {
		terms := randomTerms(rng, tc.n, tc.real)
		op, err := NewOperator(tc.n, terms, 2)
		if err != nil {
			t.Fatal(err)
		}
		if op.IsReal() != tc.real {
			t.Errorf("n=%d: IsReal = %v, want %v", tc.n, op.IsReal(), tc.real)
		}
		h := kronHamiltonian(tc.n, terms)
		v := randomState(rng, op.Dim())
		want := h.apply(v)
		got := make([]complex128, op.Dim())
		op.Apply(got, v)
		if d := maxAbsDiff(got, want); d > 1e-12 {
			t.Errorf("n=%d real=%v: |H v - dense| = %g", tc.n, tc.real, d)
		}
		if tc.real {
			x := make([]float64, op.Dim())
			for i := range x {
				x[i] = real(v[i])
			}
			y := make([]float64, op.Dim())
			op.ApplyReal(y, x)
			wantR := h.apply(toComplex(x))
			if d := maxAbsDiff(toComplex(y), wantR); d > 1e-12 {
				t.Errorf("n=%d: |H x - dense| (real path) = %g", tc.n, d)
			}
		}
		// Norm1 bounds the spectral radius: |H v| <= Norm1 |v|.
		if nrm(got) > op.Norm1()*nrm(v)*(1+1e-12) {
			t.Errorf("n=%d: |Hv| = %g exceeds Norm1 |v| = %g", tc.n, nrm(got), op.Norm1()*nrm(v))
		}
	}
}

func toComplex(x []float64) []complex128 {
	out := make([]complex128, len(x))
	for i, v := range x {
		out[i] = complex(v, 0)
	}
	return out
}

func nrm(v []complex128) float64 {
	var s float64
	for _, x := range v {
		s += real(x)*real(x) + imag(x)*imag(x)
	}
	return math.Sqrt(s)
}

// <v|P|v> from the vector pass must equal the Kronecker matrix element.
func TestVecOpsExpectMatchesKronecker(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	const n = 6
	op, err := NewOperator(n, randomTerms(rng, n, false), 1)
	if err != nil {
		t.Fatal(err)
	}
	o := newVecOps(op, false)
	v := o.newVec()
	copy(v.c, randomState(rng, op.Dim()))
	for _, ob := range []struct {
		letters string
		sites   []int
	}{{"X", []int{0}}, {"Y", []int{3}}, {"Z", []int{5}}, {"XY", []int{1, 2}}, {"YY", []int{0, 4}}, {"YZX", []int{1, 3, 5}}, {"YYY", []int{0, 2, 5}}} {
		p, err := cluster.ParsePauli(ob.letters, ob.sites)
		if err != nil {
			t.Fatal(err)
		}
		got := o.expect(p, v)
		pv := kronPauli(n, ob.letters, ob.sites).apply(v.c)
		var want complex128
		for i := range pv {
			want += cmplx.Conj(v.c[i]) * pv[i]
		}
		if math.Abs(imag(want)) > 1e-10 || math.Abs(got-real(want)) > 1e-10*math.Max(1, math.Abs(real(want))) {
			t.Errorf("<v|%s%v|v> = %v, dense %v", ob.letters, ob.sites, got, want)
		}
	}
}

// Results must be bit-identical for any number of workers (brief: chunk
// partial sums in fixed order).
func TestOperatorWorkersIdentical(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	n := 15 // several chunks
	if testing.Short() {
		n = 13
	}
	terms := randomTerms(rng, n, false)
	var ref []float64
	for _, w := range []int{1, 2, 3} {
		op, err := NewOperator(n, terms, w)
		if err != nil {
			t.Fatal(err)
		}
		o := newVecOps(op, false)
		a, b, psi := o.newVec(), o.newVec(), o.newVec()
		o.random(a, 7, 1)
		o.scaleTo(psi, 0.5, a)
		n1, n2 := o.step(b, a, psi, 0.3, -0.1, 0, 0.7)
		d, _ := o.dot(a, b)
		got := []float64{n1, n2, d, o.expect(cluster.PauliString{X: 5, Z: 6}, psi)}
		if ref == nil {
			ref = got
			continue
		}
		for i := range got {
			if got[i] != ref[i] {
				t.Errorf("workers %d: result %d = %v, with 1 worker %v", w, i, got[i], ref[i])
			}
		}
	}
}

func TestNewOperatorErrors(t *testing.T) {
	for _, tc := range []struct {
		name  string
		n     int
		terms []lattice.Term
	}{
		{"site outside", 3, []lattice.Term{{Pauli: "X", Sites: []int{3}, Coeff: 1}}},
		{"bad letter", 3, []lattice.Term{{Pauli: "Q", Sites: []int{0}, Coeff: 1}}},
		{"NaN", 3, []lattice.Term{{Pauli: "X", Sites: []int{0}, Coeff: math.NaN()}}},
		{"too many qubits", MaxOperatorQubits + 1, nil},
		{"no qubits", 0, nil},
	} {
		if _, err := NewOperator(tc.n, tc.terms, 1); err == nil {
			t.Errorf("%s: no error", tc.name)
		}
	}
}

// xxzTerms is the XXZ chain sum (X X + Y Y + 0.5 Z Z) + 0.3 sum X, open.
func xxzTerms(n int) []lattice.Term {
	var terms []lattice.Term
	for i := 0; i+1 < n; i++ {
		for _, l := range []struct {
			p string
			c float64
		}{{"XX", 1}, {"YY", 1}, {"ZZ", 0.5}} {
			terms = append(terms, lattice.Term{Pauli: l.p, Sites: []int{i, i + 1}, Coeff: l.c})
		}
	}
	for i := 0; i < n; i++ {
		terms = append(terms, lattice.Term{Pauli: "X", Sites: []int{i}, Coeff: 0.3})
	}
	return terms
}

func benchmarkApply(b *testing.B, n int, real bool) {
	op, err := NewOperator(n, xxzTerms(n), 0)
	if err != nil {
		b.Fatal(err)
	}
	o := newVecOps(op, real)
	x, y := o.newVec(), o.newVec()
	o.random(x, 1, 1)
	b.ResetTimer()
	for b.Loop() {
		o.step(y, x, stateVec{}, 1, 0, 0, 0)
	}
}

func BenchmarkOperatorApplyReal20Qubits(b *testing.B)    { benchmarkApply(b, 20, true) }
func BenchmarkOperatorApplyComplex20Qubits(b *testing.B) { benchmarkApply(b, 20, false) }
