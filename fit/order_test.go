package fit

import (
	"math"
	"testing"
)

// The per-parity extrapolation on series whose tails are known in closed
// form (geometric sums, common practice): a coefficient that moves by
// a r^j at every order j, one that moves only at even orders (a rho^(j/2),
// like an XX coupling on a bipartite lattice), and both at once. The
// estimate must be truncationSafety times the true tail for the first
// two. For the third the rates mix in the root mean squares, and at even
// L the floor (||d_L|| / ||d_{L-1}||)^2 then comes from different
// parameters (the field's odd step against the coupling's even one): the
// estimate must still bound the tail, and is up to 35 times loose there.
func TestParameterTruncationGeometricTails(t *testing.T) {
	const a, r, rho = 0.3, 0.4, 0.2
	every := func(j int) float64 { return a * math.Pow(r, float64(j)) }
	even := func(j int) float64 {
		if j%2 != 0 {
			return 0
		}
		return a * math.Pow(rho, float64(j/2))
	}
	tail := func(step func(int) float64, L int) float64 {
		var s float64
		for j := L + 1; j < L+200; j++ {
			s += step(j)
		}
		return s
	}
	tests := []struct {
		name   string
		steps  []func(int) float64 // one per parameter
		L      int
		lo, hi float64 // bounds on estimate / tail
	}{
		{"every order, L = 6", []func(int) float64{every}, 6, truncationSafety, truncationSafety},
		{"every order, L = 7", []func(int) float64{every}, 7, truncationSafety, truncationSafety},
		{"even orders only, L = 6", []func(int) float64{even}, 6, truncationSafety, truncationSafety},
		{"even orders only, L = 7", []func(int) float64{even}, 7, truncationSafety, truncationSafety},
		{"both, L = 6", []func(int) float64{every, even}, 6, 1, 40},
		{"both, L = 7", []func(int) float64{every, even}, 7, 1, 2 * truncationSafety},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			// theta(j) for j = L-4..L, from theta(L-5) = 0.
			var thetas [][]float64
			cur := make([]float64, len(tt.steps))
			for j := tt.L - 4; j <= tt.L; j++ {
				next := make([]float64, len(cur))
				for q, step := range tt.steps {
					next[q] = cur[q] + step(j)
				}
				thetas = append(thetas, next)
				cur = next
			}
			est, rates := parameterTruncation(thetas)
			if len(rates) != 2 {
				t.Fatalf("rates %v, want two", rates)
			}
			for q, step := range tt.steps {
				want := tail(step, tt.L)
				if got := est[q] / want; got < tt.lo*(1-1e-9) || got > tt.hi*(1+1e-9) {
					t.Errorf("parameter %d: estimate %.6g = %.4g x the tail %.6g, want %g to %g x", q, est[q], got, want, tt.lo, tt.hi)
				}
			}
		})
	}
}

// Fewer orders: with one lower order the estimate is the last change;
// nothing moving gives zero.
func TestParameterTruncationFewOrders(t *testing.T) {
	est, rates := parameterTruncation([][]float64{{1, 2}, {1.5, 2}})
	if rates != nil || est[0] != 0.5 || est[1] != 0 {
		t.Errorf("two orders: estimate %v, rates %v; want [0.5 0], nil", est, rates)
	}
	est, _ = parameterTruncation([][]float64{{1}, {1}, {1}})
	if est[0] != 0 {
		t.Errorf("no change: estimate %v, want 0", est)
	}
}
