package stationary

import (
	"os"
	"testing"
)

// TestHeavyScenarios runs the checks of issue 12 on its systems: a
// disordered XXZ model with X and Z fields on a 3x4 lattice and a
// disordered transverse-field Ising 12-chain (exact snapshots from dense
// ED of all 12 qubits), at beta x max|coeff| from 0.3 to 1: pull rms in
// 0.8-1.25 and direction errors shrinking like 1/sqrt(shots) (ratio 4
// for 16x the shots). Minutes per case; run with
//
//	WARMFIT_STATIONARY_HEAVY=1 go test -run TestHeavyScenarios -v ./fit/stationary/
func TestHeavyScenarios(t *testing.T) {
	if os.Getenv("WARMFIT_STATIONARY_HEAVY") == "" {
		t.Skip("set WARMFIT_STATIONARY_HEAVY=1 (minutes)")
	}
	cases := []scenario{
		{name: "tfim12-0.5", spec: "chain:12", preset: "tfim", values: map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}, disorder: 0.3, beta: 0.5 / 1.3},
		{name: "tfim12-1", spec: "chain:12", preset: "tfim", values: map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}, disorder: 0.3, beta: 1 / 1.3},
		{name: "xxz3x4-0.6", spec: "square:3x4", preset: "xxz", values: map[string]float64{"Jxy": 1, "Jz": 0.6, "hz": 0.4, "hx": 0.3}, disorder: 0.2, beta: 0.6 / 1.2},
		{name: "xxz3x4-1", spec: "square:3x4", preset: "xxz", values: map[string]float64{"Jxy": 1, "Jz": 0.6, "hz": 0.4, "hx": 0.3}, disorder: 0.2, beta: 1 / 1.2},
	}
	for _, sc := range cases {
		p1, e1 := pullStats(t, sc, 20000, 4, calibrateFirst)
		p2, e2 := pullStats(t, sc, 320000, 4, calibrateFirst)
		t.Logf("%s: 20000 shots/basis pull rms %.3g, direction error %.4g; 320000: pull rms %.3g, direction error %.4g (ratio %.3g, 1/sqrt says 4)",
			sc.name, p1, e1, p2, e2, e1/e2)
		if r := e1 / e2; r < 2.8 || r > 5.7 {
			t.Errorf("%s: direction error ratio %.3g", sc.name, r)
		}
		for _, p := range []float64{p1, p2} {
			if p < 0.8 || p > 1.25 {
				t.Errorf("%s: pull rms %.3g outside 0.8-1.25", sc.name, p)
			}
		}
	}
}
