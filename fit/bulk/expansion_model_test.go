package bulk

import (
	"math"
	"testing"
	"time"
)

// The expansion adapter against the 12-site Heisenberg ring, an
// independent exact diagonalisation that equals the infinite chain to
// 1e-6 at T >= J (references.md, ring checks): values and derivatives
// must agree wherever the expansion says it is trusted, for the isotropic
// model (one coupling J, total-spin blocks) and the anisotropic one at
// Delta = 1 (Jxy = Jz, S^z blocks).
func TestExpansionModelMatchesRing(t *testing.T) {
	for _, anisotropic := range []bool{false, true} {
		if anisotropic && testing.Short() {
			continue // 30 s: derivatives need eigenvectors in the S^z blocks
		}
		exp, err := NewExpansionModel("chain", 12, ExpansionOptions{Anisotropic: anisotropic})
		if err != nil {
			t.Fatal(err)
		}
		req := Request{Couplings: []float64{20}, Temps: logGrid(20, 200, 12), Tangents: [][]float64{{1}}}
		if anisotropic {
			req.Couplings, req.Tangents = []float64{20, 20}, [][]float64{{1, 1}}
		}
		compareWithRing(t, exp, req)
	}
}

func compareWithRing(t *testing.T, exp *ExpansionModel, req Request) {
	t.Helper()
	ring, err := NewPeriodicClusterModel("chain", PeriodicClusterOptions{})
	if err != nil {
		t.Fatal(err)
	}
	start := time.Now()
	a, err := exp.Curves(req)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("expansion: %v; chi trusted from %.3g K, C from %.3g K", time.Since(start), a.Susceptibility.TrustedFrom, a.HeatCapacity.TrustedFrom)
	ringReq := req
	ringReq.Couplings = heisenberg(t, ring, 20)
	ringReq.Tangents = [][]float64{heisenberg(t, ring, 1)}
	b, err := ring.Curves(ringReq)
	if err != nil {
		t.Fatal(err)
	}
	for _, pair := range []struct {
		name string
		x, y *Curve
	}{{"chi", &a.Susceptibility, &b.Susceptibility}, {"C", &a.HeatCapacity, &b.HeatCapacity}} {
		if math.IsInf(pair.x.TrustedFrom, 1) {
			t.Errorf("%s: expansion trusts nothing up to 10 J", pair.name)
		}
		for i, T := range req.Temps {
			if T < pair.x.TrustedFrom || T < 20 {
				continue
			}
			if d := math.Abs(pair.x.Value[i] - pair.y.Value[i]); d > 2e-3*math.Abs(pair.y.Value[i]) {
				t.Errorf("%s at %.3g K: expansion %.8g, ring %.8g", pair.name, T, pair.x.Value[i], pair.y.Value[i])
			}
			if d := math.Abs(pair.x.Deriv[0][i] - pair.y.Deriv[0][i]); d > 5e-3*math.Abs(pair.y.Deriv[0][i])+1e-12 {
				t.Errorf("d%s/dJ at %.3g K: expansion %.8g, ring %.8g", pair.name, T, pair.x.Deriv[0][i], pair.y.Deriv[0][i])
			}
		}
	}
}

// The trust grid holds the requested temperatures, in order, with no
// neighbours more than 25% apart, up to 50 times the coupling scale.
func TestTrustGrid(t *testing.T) {
	for _, temps := range [][]float64{{2, 20}, {5}, {1, 1.1, 1.2, 400}, {100, 3000}} {
		grid, at := trustGrid(temps, 30)
		for i, k := range at {
			if grid[k] != temps[i] {
				t.Errorf("%v: grid[%d] = %g, want %g", temps, k, grid[k], temps[i])
			}
		}
		for k := 1; k < len(grid); k++ {
			if !(grid[k] > grid[k-1]) || grid[k] > 1.2500001*grid[k-1] {
				t.Errorf("%v: grid steps from %g to %g", temps, grid[k-1], grid[k])
			}
		}
		if top := grid[len(grid)-1]; top < 1500 {
			t.Errorf("%v: grid ends at %g, below 50 x 30", temps, top)
		}
	}
}
