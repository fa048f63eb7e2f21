package stationary

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// TestU1TotalZInvisible: XXZ with Z fields conserves total Z, which
// commutes with H and so with rho; the uniform Z field direction then
// satisfies every constraint (issue 12; Bairey, Arad, Lindner 2019 on
// local conserved quantities). It must be reported and named, refused
// without enough gauge information, and fixed by a calibrated field.
// The couplings are uniform and tied (groups Jxy and Jz): with free
// couplings the current-like probes (XY - YX), the only ones a real
// U(1) state does not zero, are too few and more directions within the
// U(1)-symmetric Hamiltonians stay invisible (the method then says so);
// the probes on pairs at distance two (SystemOptions.FarPairs) add the
// rows that resolve the couplings.
func TestU1TotalZInvisible(t *testing.T) {
	sc := scenario{name: "xxz8u1", spec: "chain:8", preset: "xxz", values: map[string]float64{"Jxy": 1, "Jz": 0.6, "hz": 0.4}, disorder: 0.3, beta: 0.7, u1: true, tied: true, far: true}
	sys, est, d, err := sc.run(t, 20000, 4)
	if err != nil {
		t.Fatalf("%v\n%s", err, d.Summary())
	}
	t.Log(d.Summary())
	if len(d.Invisible) != 1 || !strings.HasPrefix(d.Invisible[0].Name, "total Z") {
		t.Fatalf("want exactly the total-Z direction invisible, got %+v", d.Summary())
	}
	terms := sys.Terms()
	truth := coeffs(terms)
	coupling, field := -1, -1
	for k, tm := range terms {
		if tm.Pauli == "ZZ" && coupling < 0 {
			coupling = k
		}
		if tm.Pauli == "Z" && field < 0 {
			field = k
		}
	}
	names := sys.Params().Names
	// One calibration cannot fix two multipliers.
	_, err = Fix(sys, est, d, Gauge{Calibrated: map[string]float64{names[sys.Params().Of[coupling]]: truth[coupling]}}, Options{})
	if !errors.Is(err, ErrUnderdetermined) {
		t.Fatalf("one calibration with total Z open: err %v, want ErrUnderdetermined", err)
	}
	for _, g := range []Gauge{
		{Calibrated: map[string]float64{names[sys.Params().Of[coupling]]: truth[coupling], names[sys.Params().Of[field]]: truth[field]}},
		{Calibrated: map[string]float64{names[sys.Params().Of[field]]: truth[field]}, Beta: sc.beta, Evaluate: exactEvaluator(sys.NumQubits(), terms)},
	} {
		res, err := Fix(sys, est, d, g, Options{})
		if err != nil {
			t.Fatal(err)
		}
		var worst, worstPull float64
		for k := range truth {
			diff := math.Abs(res.Lambda[k] - truth[k])
			worst = max(worst, diff)
			if se := res.StdErr[sys.Params().Of[k]]; se > 0 {
				worstPull = max(worstPull, diff/se)
			}
		}
		t.Logf("%s: largest error %.3g, largest pull %.3g", res.Fixed, worst, worstPull)
		// Each coefficient within four of its own standard errors, and
		// no error bar so loose that it says nothing.
		if worstPull > 4 || worst > 0.3 {
			t.Errorf("%s: largest error %g, largest pull %g", res.Fixed, worst, worstPull)
		}
	}
}
