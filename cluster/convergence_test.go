package cluster_test

import (
	"math"
	"testing"

	"warmfit/cluster"
)

// For a geometric series the tail after S_L is known exactly, r^{L+1}/(1-r)
// (closed form). The estimate must not be below the true error (beyond
// rounding: for a steady ratio it is that geometric tail) and not wildly
// above it; for a series whose odd orders add nothing (as on bipartite
// lattices) the same must hold.
func TestConvergeGeometricTail(t *testing.T) {
	for _, r := range []float64{0.1, 0.3, 0.6} {
		for _, pairs := range []bool{false, true} {
			var series []float64
			sum := 0.0
			for k := 1; k <= 8; k++ {
				if !pairs || k%2 == 0 {
					sum += math.Pow(r, float64(k))
				}
				series = append(series, sum)
			}
			limit := r / (1 - r)
			if pairs {
				limit = r * r / (1 - r*r)
			}
			c := cluster.Converge(series, 1, 1e-3)
			trueErr := math.Abs(limit - c.Value)
			if c.Error < trueErr*(1-1e-9) || c.Error > 10*trueErr {
				t.Errorf("r=%g pairs=%v: error estimate %.3g, true error %.3g", r, pairs, c.Error, trueErr)
			}
			if got := cluster.Converge(series, 1, 2*c.Error).Trusted; !got {
				t.Errorf("r=%g pairs=%v: not trusted at twice its own error", r, pairs)
			}
		}
	}
}

// A series that does not settle must never be trusted (common practice).
func TestConvergeDiverging(t *testing.T) {
	series := []float64{0.1, 0.3, 0.2, 0.6, 0.1, 0.9}
	if c := cluster.Converge(series, 1, 0.5); c.Trusted {
		t.Errorf("oscillating series trusted: %+v", c)
	}
	// Steps +.3 -.2 +.1 -.09 +.08 -.079: the last pair nearly cancels,
	// but the single steps are still 0.08 (common practice: an
	// alternating series is no better known than its last step).
	var osc []float64
	sum := 0.0
	for _, d := range []float64{0.3, -0.2, 0.1, -0.09, 0.08, -0.079} {
		sum += d
		osc = append(osc, sum)
	}
	if c := cluster.Converge(osc, 1, 1e-3); c.Trusted || c.Error < 0.05 {
		t.Errorf("irregular alternating series: error %.3g, trusted %v", c.Error, c.Trusted)
	}
	if c := cluster.Converge([]float64{0.5}, 1, 1); c.Trusted {
		t.Errorf("a single order proves nothing, got %+v", c)
	}
	if c := cluster.Converge([]float64{0, 0, 0}, 2, 0); !c.Trusted {
		t.Errorf("identically zero series: want trusted, got %+v", c)
	}
}
