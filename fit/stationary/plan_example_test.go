package stationary_test

import (
	"fmt"

	"warmfit/fit"
	"warmfit/fit/stationary"
	"warmfit/lattice"
	"warmfit/validate"
)

// Plan the shots per basis that learn a 4-site transverse-field Ising
// chain's direction to rms 0.02 from covering:3 snapshots, from the
// exact outcome distributions of its Gibbs state.
func ExamplePlanShots() {
	terms := []lattice.Term{
		{Pauli: "ZZ", Sites: []int{0, 1}, Coeff: 1},
		{Pauli: "ZZ", Sites: []int{1, 2}, Coeff: 0.8},
		{Pauli: "ZZ", Sites: []int{2, 3}, Coeff: 1.2},
		{Pauli: "X", Sites: []int{0}, Coeff: 0.5},
		{Pauli: "X", Sites: []int{1}, Coeff: 0.7},
		{Pauli: "X", Sites: []int{2}, Coeff: 0.6},
		{Pauli: "X", Sites: []int{3}, Coeff: 0.4},
	}
	const n, beta = 4, 0.8
	bases, _, err := fit.SchemeBases("covering:3", n, terms, 1)
	if err != nil {
		panic(err)
	}
	sampler, err := validate.NewSampler(n, terms, beta)
	if err != nil {
		panic(err)
	}
	pl, err := stationary.PlanShots(n, terms, bases, sampler.Distribution, stationary.PlanOptions{Target: 0.02, Beta: beta})
	if err != nil {
		panic(err)
	}
	fmt.Printf("%d bases, predicted rms direction error %.3f\n", len(pl.Bases), pl.DirectionRMS())
	fmt.Println(pl.ShotsPerBasis == pl.ShotsDirection, pl.ShotsPerBasis > 1000)
	// Output:
	// 27 bases, predicted rms direction error 0.020
	// true true
}
