package validate

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"warmfit/lattice"
)

// besselISeries is the defining power series I_k(x) = sum_m
// (x/2)^{2m+k} / (m! (m+k)!) (Abramowitz & Stegun 9.6.10), with positive
// terms only, summed in logs; adequate for the moderate x used here.
func besselISeries(k int, x float64) float64 {
	var s float64
	for m := 0; m < 400; m++ {
		lg1, _ := math.Lgamma(float64(m + 1))
		lg2, _ := math.Lgamma(float64(m + k + 1))
		term := math.Exp(float64(2*m+k)*math.Log(x/2) - lg1 - lg2)
		s += term
		if term < 1e-18*s && m > int(x) {
			break
		}
	}
	return s
}

func TestScaledBesselI(t *testing.T) {
	for _, x := range []float64{1e-3, 0.5, 1, 5, 20, 60} {
		s := scaledBesselI(x)
		for k := 0; k <= 40 && k < len(s); k++ {
			want := math.Exp(-x) * besselISeries(k, x) // A&S 9.6.10
			if want < 1e-280 {
				continue
			}
			if math.Abs(s[k]-want) > 1e-13*want+1e-300 {
				t.Errorf("x=%v k=%d: e^-x I_k = %.16g, series %.16g", x, k, s[k], want)
			}
		}
	}
	// I_0(1) = 1.2660658777520082, I_1(1) = 0.5651591039924851 (A&S
	// table 9.8, from memory).
	s := scaledBesselI(1)
	if math.Abs(s[0]*math.E-1.2660658777520082) > 1e-15 || math.Abs(s[1]*math.E-0.5651591039924851) > 1e-15 {
		t.Errorf("I_0(1), I_1(1) = %.17g, %.17g", s[0]*math.E, s[1]*math.E)
	}
	// Large arguments must not overflow; the coefficients still sum to 1
	// (A&S 9.6.37 with the scaling) and I_k e^-x -> 1/sqrt(2 pi x) (A&S 9.7.1).
	x := 5000.0
	s = scaledBesselI(x)
	sum := s[0]
	for _, v := range s[1:] {
		sum += 2 * v
	}
	if math.Abs(sum-1) > 1e-12 {
		t.Errorf("x=%v: s_0 + 2 sum s_k = %v", x, sum)
	}
	asym := 1 / math.Sqrt(2*math.Pi*x) * (1 + 1/(8*x))
	if math.Abs(s[0]-asym) > 1e-7*asym {
		t.Errorf("x=%v: e^-x I_0 = %v, asymptotic %v", x, s[0], asym)
	}
}

// exp(-tau H)|r> by Chebyshev must equal the dense exponential (eigen-
// decomposition of the Kronecker matrix) to 1e-10 relative, for real and
// complex H, small and large |beta|, both signs.
func TestChebyshevMatchesDenseExp(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	const n = 8
	for _, real := range []bool{true, false} {
		terms, ref := random8Reference(t, real)
		op, err := NewOperator(n, terms, 2)
		if err != nil {
			t.Fatal(err)
		}
		o := newVecOps(op, false) // complex vectors on both Hamiltonians
		a, b, psi := o.newVec(), o.newVec(), o.newVec()
		lo, hi, _, err := spectralBounds(o, a, b, 1)
		if err != nil {
			t.Fatal(err)
		}
		for _, tau := range []float64{0.05, 0.5, 3, 15, -2} {
			r := randomState(rng, op.Dim())
			want := ref.expMinus(tau, r)
			cheb := newChebyshevExp(tau, lo, hi)
			copy(a.c, r)
			terms, _, err := cheb.propagate(o, psi, a, b, 1e-13)
			if err != nil {
				t.Fatalf("real=%v tau=%v: %v", real, tau, err)
			}
			got := make([]complex128, len(psi.c))
			scale := math.Exp(cheb.logScale)
			for i, v := range psi.c {
				got[i] = v * complex(scale, 0)
			}
			if d := maxAbsDiff(got, want) / nrm(want); d > 1e-10 {
				t.Errorf("real=%v tau=%v: relative error %g after %d terms", real, tau, d, terms)
			}
		}
	}
}

// The real-vector path must agree with the complex one on a real H.
func TestChebyshevRealPath(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	ref, op, o := randomRealSystem(t, rng, 7)
	a, b, psi := o.newVec(), o.newVec(), o.newVec()
	lo, hi, _, err := spectralBounds(o, a, b, 2)
	if err != nil {
		t.Fatal(err)
	}
	cheb := newChebyshevExp(2, lo, hi)
	x := make([]complex128, op.Dim())
	for i := range x {
		a.r[i] = rng.NormFloat64()
		x[i] = complex(a.r[i], 0)
	}
	if _, _, err := cheb.propagate(o, psi, a, b, 1e-13); err != nil {
		t.Fatal(err)
	}
	want := ref.expMinus(2, x)
	got := make([]complex128, op.Dim())
	for i, v := range psi.r {
		got[i] = complex(v*math.Exp(cheb.logScale), 0)
	}
	if d := maxAbsDiff(got, want) / nrm(want); d > 1e-10 {
		t.Errorf("real path: relative error %g", d)
	}
}

// Bounds that miss part of the spectrum must be detected, not silently
// give a wrong vector.
func TestChebyshevDetectsSpectrumEscape(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 16))
	ref, _, o := randomRealSystem(t, rng, 6)
	a, b, psi := o.newVec(), o.newVec(), o.newVec()
	o.random(a, 1, 1)
	e0, emax := slices.Min(ref.vals), slices.Max(ref.vals)
	// Lower bound well above the ground state.
	cheb := newChebyshevExp(3, e0+0.3*(emax-e0), emax)
	if _, _, err := cheb.propagate(o, psi, a, b, 1e-12); !errors.Is(err, errSpectrumEscape) {
		t.Errorf("too narrow bounds: err = %v, want errSpectrumEscape", err)
	}
}

// Lanczos bounds must contain the exact spectrum and be reasonably tight.
func TestSpectralBoundsContainSpectrum(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 18))
	for _, n := range []int{2, 5, 8} {
		for _, real := range []bool{true, false} {
			var terms []lattice.Term
			var ref *kronRef
			if n == 8 {
				terms, ref = random8Reference(t, real)
			} else {
				terms = randomTerms(rng, n, real)
				ref = newKronRef(t, n, terms)
			}
			op, err := NewOperator(n, terms, 1)
			if err != nil {
				t.Fatal(err)
			}
			o := newVecOps(op, real)
			a, b := o.newVec(), o.newVec()
			lo, hi, steps, err := spectralBounds(o, a, b, 3)
			if err != nil {
				t.Fatal(err)
			}
			e0, emax := slices.Min(ref.vals), slices.Max(ref.vals)
			w := emax - e0
			if lo > e0 || hi < emax {
				t.Errorf("n=%d real=%v: bounds [%v, %v] miss spectrum [%v, %v]", n, real, lo, hi, e0, emax)
			}
			if e0-lo > 0.05*w || hi-emax > 0.05*w {
				t.Errorf("n=%d real=%v: bounds [%v, %v] loose for spectrum [%v, %v] (%d steps)", n, real, lo, hi, e0, emax, steps)
			}
		}
	}
}

// randomRealSystem draws a random real n-qubit Hamiltonian from rng and
// returns its dense reference, its operator and the vector operations of
// the real path.
func randomRealSystem(t *testing.T, rng *rand.Rand, n int) (*kronRef, *Operator, *vecOps) {
	t.Helper()
	terms := randomTerms(rng, n, true)
	ref := newKronRef(t, n, terms)
	op, err := NewOperator(n, terms, 1)
	if err != nil {
		t.Fatal(err)
	}
	return ref, op, newVecOps(op, true)
}
