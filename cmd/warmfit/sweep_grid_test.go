package main

import (
	"fmt"
	"strconv"
	"testing"
)

// The grid points of --beta-grid are the decimals the user means: both
// ends exactly as typed, and the points between rounded to gridDigits
// significant digits, so that 0.05 + 7 x 0.05 is written 0.4, not
// 0.39999999999999997, and T = 1/beta at 0.5 is 2 (review finding; the
// expected values are plain decimal arithmetic).
func TestBetaGridPointsAreCleanDecimals(t *testing.T) {
	for _, tc := range []struct {
		grid  string
		step  float64 // expected spacing; point k is from + k*step in decimal
		from  float64
		count int
	}{
		{"from=0.05,to=1,points=20", 0.05, 0.05, 20},
		{"from=0.02,to=1,points=50", 0.02, 0.02, 50},
		{"to=2,points=11,from=1", 0.1, 1, 11},
		{"from=0.1,to=0.5,points=3", 0.2, 0.1, 3},
		{"from=0.3,to=0.3,points=1", 0, 0.3, 1},
	} {
		betas, err := parseBetaGrid(tc.grid)
		if err != nil {
			t.Fatalf("%s: %v", tc.grid, err)
		}
		if len(betas) != tc.count {
			t.Fatalf("%s: %d points, want %d", tc.grid, len(betas), tc.count)
		}
		for k, b := range betas {
			// The decimal from + k*step, printed with few digits and read back.
			want, _ := strconv.ParseFloat(fmt.Sprintf("%.6f", tc.from+float64(k)*tc.step), 64)
			if got := fmtExact(b); got != fmtExact(want) {
				t.Errorf("%s: point %d is %s, want %s", tc.grid, k, got, fmtExact(want))
			}
		}
	}
	betas, _ := parseBetaGrid("from=0.05,to=1,points=20")
	if got := fmtExact(1 / betas[9]); got != "2" {
		t.Errorf("T at beta %s is %s, want 2", fmtExact(betas[9]), got)
	}
}

// An end with more digits than gridDigits stays the last point: rounding
// a point next to it may not step past it (common practice: the grid is
// monotone and inside [from, to]).
func TestBetaGridStaysInsideLongEnds(t *testing.T) {
	for _, tc := range []struct {
		a, b float64
		n    int
	}{
		{1.2345678901249, 1.2345678901251, 3},
		{0.1, 0.123456789012345678, 7},
		{1e-300, 1e300, 7},
	} {
		g := betaGrid(tc.a, tc.b, tc.n)
		if g[0] != tc.a || g[len(g)-1] != tc.b {
			t.Errorf("%v..%v: ends %v, %v", tc.a, tc.b, g[0], g[len(g)-1])
		}
		for i := 1; i < len(g); i++ {
			if g[i] < g[i-1] {
				t.Errorf("%v..%v: point %d (%v) below point %d (%v)", tc.a, tc.b, i, g[i], i-1, g[i-1])
			}
		}
	}
}
