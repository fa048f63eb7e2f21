package main

import (
	"math"
	"strings"
	"testing"

	"warmfit/fit"
	"warmfit/lattice"
)

// The exact two-sided binomial test against closed forms of the binomial
// pmf: n = 1 and n = 2 at p = erf(sqrt 2), and the sign test n = 10, k = 2
// at p = 1/2, p-value 2 (1 + 10 + 45)/1024 (textbook sign test).
func TestBinomialTwoSided(t *testing.T) {
	p := within2Normal
	q := 1 - p
	for _, tc := range []struct {
		k, n int
		p    float64
		want float64
	}{
		{0, 1, p, q},
		{1, 1, p, 1},
		{1, 2, p, q*q + 2*p*q},
		{2, 2, p, 1},
		{2, 10, 0.5, 2 * 56.0 / 1024},
		{5, 10, 0.5, 1},
	} {
		if got := binomialTwoSided(tc.k, tc.n, tc.p); math.Abs(got-tc.want) > 1e-12 {
			t.Errorf("k=%d n=%d p=%g: %v, want %v", tc.k, tc.n, tc.p, got, tc.want)
		}
	}
}

// "consistent with honest error bars" is said only when the evidence
// allows it (review finding 11): 8 of 9 within 2 sigma passes the
// binomial test (p = 0.34), 48 of 54 is marginal (p = 0.035, no
// WARNING), 30 of 40 is a WARNING (p < 1e-3).
func TestPullVerdictFollowsEvidence(t *testing.T) {
	verdict := func(within, n int) demoVerdict {
		r := &demoRecovery{Terms: make([]lattice.Term, n), Within2Count: within, Within2: float64(within) / float64(n)}
		r.TruthComparison = &fit.TruthComparison{RMSZ: 1}
		return pullVerdicts("Patch", r)[0]
	}
	if v := verdict(8, 9); !v.OK || !strings.Contains(v.Text, "consistent with honest error bars") || !strings.Contains(v.Text, "weak evidence") {
		t.Errorf("8 of 9: %+v", v)
	}
	if v := verdict(48, 54); !v.OK || !v.Marginal || !strings.Contains(v.Text, "only marginally consistent") {
		t.Errorf("48 of 54: %+v", v)
	}
	if v := verdict(30, 40); v.OK || strings.Contains(v.Text, "honest error bars:") {
		t.Errorf("30 of 40: %+v", v)
	}
}
