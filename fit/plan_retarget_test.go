package fit_test

import (
	"slices"
	"testing"

	"warmfit/fit"
	"warmfit/lattice"
)

// A retargeted plan equals the plan made from scratch for the new target
// (shots scale as 1/target^2 with the variances per shot fixed; the
// closed form is in TestPlanTwoFreeSpins).
func TestPlanRetargetEqualsFreshPlan(t *testing.T) {
	lat, err := lattice.Open("chain:4")
	if err != nil {
		t.Fatal(err)
	}
	terms := []lattice.Term{
		{Pauli: "Z", Sites: []int{0}, Coeff: 0.3}, {Pauli: "X", Sites: []int{2}, Coeff: -0.2},
		{Pauli: "ZZ", Sites: []int{0, 1}, Coeff: 0.5}, {Pauli: "ZZ", Sites: []int{1, 2}, Coeff: 0.4},
		{Pauli: "XX", Sites: []int{2, 3}, Coeff: 0.25},
	}
	const beta = 0.5
	for _, norm := range []fit.Norm{fit.NormLinf, fit.NormL2} {
		base, err := fit.PlanShots(lat, terms, beta, fit.PlanOptions{Target: 0.05, Norm: norm})
		if err != nil {
			t.Fatal(err)
		}
		for _, eps := range []float64{0.02, 0.01, 0.3} {
			got, err := base.Retarget(eps)
			if err != nil {
				t.Fatal(err)
			}
			want, err := fit.PlanShots(lat, terms, beta, fit.PlanOptions{Target: eps, Norm: norm})
			if err != nil {
				t.Fatal(err)
			}
			if got.ShotsPerBasis != want.ShotsPerBasis || got.TotalShots != want.TotalShots || got.Target != eps {
				t.Errorf("%s eps %g: retargeted %d shots per basis (%d total), fresh %d (%d)", norm, eps, got.ShotsPerBasis, got.TotalShots, want.ShotsPerBasis, want.TotalShots)
			}
			if !slices.Equal(got.Stderr, want.Stderr) {
				t.Errorf("%s eps %g: stderr %v, fresh %v", norm, eps, got.Stderr, want.Stderr)
			}
		}
		if base.Target != 0.05 {
			t.Errorf("Retarget changed the original plan's target to %g", base.Target)
		}
	}
	if _, err := (&fit.Plan{}).Retarget(0.01); err == nil {
		t.Error("Retarget of an empty plan: no error")
	}
}
