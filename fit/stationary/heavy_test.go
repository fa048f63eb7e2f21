package stationary

import (
	"os"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"
)

// TestHeavyScenarios runs the checks of issue 12 on its systems: a
// disordered XXZ model with X and Z fields on a 3x4 lattice and a
// disordered transverse-field Ising 12-chain (exact snapshots from dense
// ED of all 12 qubits), at beta x max|coeff| from 0.3 to 1: pull rms in
// 0.8-1.25 and direction errors shrinking like 1/sqrt(shots) (ratio 4
// for 16x the shots). Minutes per case; run with
//
//	WARMFIT_STATIONARY_HEAVY=1 go test -run TestHeavyScenarios -v -timeout 100m ./fit/stationary/
//
// (WARMFIT_STATIONARY_HEAVY_CASES picks cases by name,
// WARMFIT_STATIONARY_HEAVY_SEEDS sets the seeds, default 4,
// WARMFIT_STATIONARY_HEAVY_SHOTS the two shot counts; the cases
// with the same Hamiltonian share one diagonalisation).
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
	if f := os.Getenv("WARMFIT_STATIONARY_HEAVY_CASES"); f != "" {
		cases = slices.DeleteFunc(cases, func(sc scenario) bool { return !strings.Contains(f, sc.name) })
	}
	seeds := 4
	if v, err := strconv.Atoi(os.Getenv("WARMFIT_STATIONARY_HEAVY_SEEDS")); err == nil {
		seeds = v
	}
	lo, hi := 20000, 320000
	if v := strings.Split(os.Getenv("WARMFIT_STATIONARY_HEAVY_SHOTS"), ","); len(v) == 2 {
		// Two shot counts 16x apart, e.g. "320000,5120000" where 20000
		// is too few (every seed refused).
		a, err1 := strconv.Atoi(v[0])
		b, err2 := strconv.Atoi(v[1])
		if err1 == nil && err2 == nil {
			lo, hi = a, b
		}
	}
	for _, sc := range cases {
		start := time.Now()
		p1, o1, e1, c1 := pullStatsBoth(t, sc, lo, seeds, calibrateFirst)
		p2, o2, e2, c2 := pullStatsBoth(t, sc, hi, seeds, calibrateFirst)
		t.Logf("%s (%d seeds): %d shots/basis pull rms %.3g (plain sandwich %.3g), direction error %.4g, coefficient rms error %.4g; %d: pull rms %.3g (plain %.3g), direction error %.4g, coefficient rms error %.4g (ratio %.3g, 1/sqrt says 4) [%.0fs]",
			sc.name, seeds, lo, p1, o1, e1, c1, hi, p2, o2, e2, c2, e1/e2, time.Since(start).Seconds())
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
