package stationary

import (
	"errors"
	"math"
	"os"
	"strings"
	"testing"
)

// TestU1TotalZInvisible: XXZ with Z fields conserves total Z, which
// commutes with H and so with rho; the uniform Z field direction then
// satisfies every constraint (issue 12; Bairey, Arad, Lindner 2019 on
// local conserved quantities). It must be reported and named, refused
// without enough gauge information, and fixed by a calibrated field.
func TestU1TotalZInvisible(t *testing.T) {
	if os.Getenv("WARMFIT_STATIONARY_U1") == "" {
		// Known limitation, not yet solved: with an exact conserved
		// quantity the direction-dependent reweighting drifts to the least
		// noisy null direction, and the isotropic first pass that guards
		// against it resolves too little of this model (Solve then
		// refuses with ErrNoInformation instead of a wrong answer).
		t.Skip("U(1) models: see the comment; set WARMFIT_STATIONARY_U1=1 to run")
	}
	sc := scenario{name: "xxz8u1", spec: "chain:8", preset: "xxz", values: map[string]float64{"Jxy": 1, "Jz": 0.6, "hz": 0.4}, disorder: 0.3, beta: 0.7}
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
	_, err = Fix(sys, est, d, Gauge{Calibrated: map[string]float64{names[coupling]: truth[coupling]}}, Options{})
	if !errors.Is(err, ErrUnderdetermined) {
		t.Fatalf("one calibration with total Z open: err %v, want ErrUnderdetermined", err)
	}
	for _, g := range []Gauge{
		{Calibrated: map[string]float64{names[coupling]: truth[coupling], names[field]: truth[field]}},
		{Calibrated: map[string]float64{names[field]: truth[field]}, Beta: sc.beta, Evaluate: exactEvaluator(sys.NumQubits(), terms)},
	} {
		res, err := Fix(sys, est, d, g, Options{})
		if err != nil {
			t.Fatal(err)
		}
		var worst float64
		for k := range truth {
			worst = max(worst, math.Abs(res.Lambda[k]-truth[k]))
		}
		t.Logf("%s: largest error %.3g", res.Fixed, worst)
		if worst > 0.1 {
			t.Errorf("%s: largest error %g", res.Fixed, worst)
		}
	}
}
