package cluster

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/lapack/gonum"
)

// TestTridiagEigen checks the QL solver on tridiagonal matrices that are
// hard for shifted QL: Wilkinson's W21+ (pairs of nearly equal
// eigenvalues), a graded matrix, exact splits (zero off-diagonals), a
// multiple of the identity, the zero matrix and random ones. Eigenvalues
// are compared with LAPACK Dsterf (root-free QR, an independent
// algorithm); eigenvectors by residual and orthonormality.
func TestTridiagEigen(t *testing.T) {
	rng := rand.New(rand.NewPCG(29, 30))
	type tri struct {
		name string
		d, e []float64
	}
	var cases []tri
	{
		n := 21 // Wilkinson W21+: d_i = |10 - i|, e_i = 1.
		d, e := make([]float64, n), make([]float64, n-1)
		for i := range d {
			d[i] = math.Abs(float64(10 - i))
		}
		for i := range e {
			e[i] = 1
		}
		cases = append(cases, tri{"wilkinson", d, e})
	}
	{
		n := 30
		d, e := make([]float64, n), make([]float64, n-1)
		for i := range d {
			d[i] = math.Pow(10, -float64(i)/3)
		}
		for i := range e {
			e[i] = math.Pow(10, -float64(i)/3-0.5)
		}
		cases = append(cases, tri{"graded", d, e})
	}
	cases = append(cases,
		tri{"split", []float64{1, 2, 3, 4, 5}, []float64{0.5, 0, 0.25, 0}},
		tri{"identity", []float64{2, 2, 2, 2}, []float64{0, 0, 0}},
		tri{"zero", []float64{0, 0, 0}, []float64{0, 0}},
		tri{"zero diagonal", []float64{0, 0, 0, 0, 0, 0}, []float64{1, 1, 1, 1, 1}},
	)
	for _, n := range []int{2, 7, 64, 200} {
		d, e := make([]float64, n), make([]float64, n-1)
		for i := range d {
			d[i] = rng.NormFloat64()
		}
		for i := range e {
			e[i] = rng.NormFloat64()
		}
		cases = append(cases, tri{"random", d, e})
	}
	for _, tc := range cases {
		n := len(tc.d)
		d := append([]float64(nil), tc.d...)
		e := make([]float64, n)
		copy(e, tc.e)
		z := make([]float64, n*n)
		for i := 0; i < n; i++ {
			z[i*n+i] = 1
		}
		if err := tridiagEigen(n, d, e, z); err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		ref := append([]float64(nil), tc.d...)
		refE := append([]float64(nil), tc.e...)
		if !(gonum.Implementation{}).Dsterf(n, ref, refE) {
			t.Fatalf("%s: Dsterf failed", tc.name)
		}
		scale := 0.0
		for _, v := range ref {
			scale = math.Max(scale, math.Abs(v))
		}
		scale = math.Max(scale, 1e-300)
		for k := range d {
			if math.Abs(d[k]-ref[k]) > 1e-13*scale*float64(n) {
				t.Errorf("%s n=%d: eigenvalue %d = %.17g, Dsterf %.17g", tc.name, n, k, d[k], ref[k])
			}
		}
		for k := 0; k < n; k++ {
			v := z[k*n : (k+1)*n]
			var res float64
			for i := 0; i < n; i++ {
				tv := tc.d[i] * v[i]
				if i > 0 {
					tv += tc.e[i-1] * v[i-1]
				}
				if i+1 < n {
					tv += tc.e[i] * v[i+1]
				}
				res = math.Max(res, math.Abs(tv-d[k]*v[i]))
			}
			if res > 1e-13*math.Max(scale, 1)*float64(n) {
				t.Errorf("%s n=%d: residual %g for vector %d", tc.name, n, res, k)
			}
			for l := k; l < n; l++ {
				var dot float64
				for i := 0; i < n; i++ {
					dot += v[i] * z[l*n+i]
				}
				if l == k {
					dot--
				}
				if math.Abs(dot) > 1e-13*float64(n) {
					t.Errorf("%s n=%d: <v%d,v%d> off by %g", tc.name, n, k, l, dot)
				}
			}
		}
	}
}

// TestZeroHamiltonian: with no terms every level is 0, so log Z = n log 2
// and all Pauli expectations vanish (trace of a Pauli string is zero).
func TestZeroHamiltonian(t *testing.T) {
	h := &Hamiltonian{NumQubits: 3}
	s, err := Diagonalize(h)
	if err != nil {
		t.Fatal(err)
	}
	th, err := NewThermal(s, 5)
	if err != nil {
		t.Fatal(err)
	}
	if !near(th.LogZ(), 3*math.Ln2, 1e-15) {
		t.Errorf("log Z = %v, want 3 log 2", th.LogZ())
	}
	ops := allPaulis(2)[1:]
	resp := make([]float64, len(ops)*len(ops))
	th.Response(ops, resp)
	for a := range ops {
		if got := th.Expect(ops[a]); got != 0 {
			t.Errorf("<P> = %v", got)
		}
		// d<A>/dc_B = -beta tr(AB)/D = -beta delta_AB for Pauli strings.
		for b := range ops {
			want := 0.0
			if a == b {
				want = -5
			}
			if math.Abs(resp[a*len(ops)+b]-want) > 1e-14 {
				t.Errorf("response (%d,%d) = %v, want %v", a, b, resp[a*len(ops)+b], want)
			}
		}
	}
}
