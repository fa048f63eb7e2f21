package stationary

import (
	"math"
	"slices"
	"testing"

	"warmfit/fit"
	"warmfit/validate"
)

// TestResidualsVanishExactly checks the identity the method rests on:
// for rho = exp(-beta H)/Z, Tr(rho [A, H]) = 0 for every operator A
// (Bairey, Arad, Lindner, PRL 122, 020504 (2019), eq. 2), here with rho
// from dense exact diagonalisation, while a wrong Hamiltonian direction
// leaves residuals of order one.
func TestResidualsVanishExactly(t *testing.T) {
	cases := []struct {
		spec, preset string
		values       map[string]float64
		beta         float64
	}{
		{"chain:6", "tfim", map[string]float64{"J": 1, "hx": 0.7, "hz": 0.2}, 0.8},
		{"square:2x3", "xxz", map[string]float64{"Jxy": 0.6, "Jz": 0.4, "hz": 0.3, "hx": 0.25}, 1.2},
	}
	for _, c := range cases {
		l, terms := testModel(t, c.spec, c.preset, c.values, 0.2, 3)
		sys, err := NewSystem(l.NumSites(), terms)
		if err != nil {
			t.Fatal(err)
		}
		th, err := validate.ExactThermal(l.NumSites(), terms, c.beta)
		if err != nil {
			t.Fatal(err)
		}
		vals := exactStrings(t, th, sys.Strings)
		lambda := coeffs(terms)
		r := sys.Residuals(nil, vals, lambda)
		var worst float64
		for _, v := range r {
			worst = max(worst, math.Abs(v))
		}
		if worst > 1e-10 {
			t.Errorf("%s %s: largest residual %g at the true coefficients", c.spec, c.preset, worst)
		}
		// Perturb one coupling: some residual must move by order one.
		lambda[0] += 0.5
		r = sys.Residuals(r, vals, lambda)
		worst = 0
		for _, v := range r {
			worst = max(worst, math.Abs(v))
		}
		if worst < 1e-3 {
			t.Errorf("%s %s: perturbed coefficients still stationary (largest residual %g)", c.spec, c.preset, worst)
		}
		if sys.NumRows() == 0 || len(sys.Strings) == 0 {
			t.Fatalf("empty system")
		}
		t.Logf("%s %s: %d rows, %d strings, %d params", c.spec, c.preset, sys.NumRows(), len(sys.Strings), sys.Params().NumParams())
	}
}

// TestCovering3ServesEveryString: the covering:3 scheme measures every
// string the constraints need (brute force with fit.Serves).
func TestCovering3ServesEveryString(t *testing.T) {
	for _, spec := range []string{"chain:9", "square:3x4", "honeycomb:2x2"} {
		l, terms := testModel(t, spec, "xxz", map[string]float64{"Jxy": 1, "Jz": 0.5, "hz": 0.3, "hx": 0.2}, 0, 0)
		sys, err := NewSystem(l.NumSites(), terms)
		if err != nil {
			t.Fatal(err)
		}
		bases, _, err := fit.SchemeBases("covering:3", l.NumSites(), terms, 1)
		if err != nil {
			t.Fatal(err)
		}
		for _, s := range sys.Strings {
			if !slices.ContainsFunc(bases, func(b string) bool { return fit.Serves(b, s) }) {
				t.Fatalf("%s: string %s not served by covering:3", spec, s.Key())
			}
		}
		t.Logf("%s: %d strings, %d bases", spec, len(sys.Strings), len(bases))
	}
}
