package stationary_test

import (
	"fmt"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/fit/stationary"
	"warmfit/lattice"
	"warmfit/validate"
)

// Learn a 4-site transverse-field Ising chain from the stationarity of its
// Gibbs state: exact expectations (dense ED) stand in for measured ones,
// with a tiny variance; one calibrated coupling fixes the scale.
func ExampleSolve() {
	terms := []lattice.Term{
		{Pauli: "ZZ", Sites: []int{0, 1}, Coeff: 1},
		{Pauli: "ZZ", Sites: []int{1, 2}, Coeff: 0.8},
		{Pauli: "ZZ", Sites: []int{2, 3}, Coeff: 1.2},
		{Pauli: "X", Sites: []int{0}, Coeff: 0.5},
		{Pauli: "X", Sites: []int{1}, Coeff: 0.7},
		{Pauli: "X", Sites: []int{2}, Coeff: 0.6},
		{Pauli: "X", Sites: []int{3}, Coeff: 0.4},
	}
	sys, err := stationary.NewSystem(4, terms)
	if err != nil {
		panic(err)
	}
	th, err := validate.ExactThermal(4, terms, 0.8)
	if err != nil {
		panic(err)
	}
	est := &fit.Estimates{Values: make([]float64, len(sys.Strings)), Stderr: make([]float64, len(sys.Strings)),
		Shots: make([]int64, len(sys.Strings)), Cov: cluster.NewSparseSym(len(sys.Strings))}
	for j, s := range sys.Strings {
		p, _ := cluster.TermPauli(s)
		est.Values[j], est.Stderr[j] = th.Expect(p), 1e-4
		est.Cov.Set(j, j, 1e-8)
	}
	d, err := stationary.Solve(sys, est, stationary.Options{})
	if err != nil {
		panic(err)
	}
	res, err := stationary.Fix(sys, est, d, stationary.Gauge{Calibrated: map[string]float64{"ZZ 0 1": 1}}, stationary.Options{})
	if err != nil {
		panic(err)
	}
	fmt.Println(res.Fixed)
	for k, t := range terms {
		fmt.Printf("%s %.4f\n", t.Key(), res.Lambda[k])
	}
	// Output:
	// calibrated ZZ 0 1
	// ZZ 0 1 1.0000
	// ZZ 1 2 0.8000
	// ZZ 2 3 1.2000
	// X 0 0.5000
	// X 1 0.7000
	// X 2 0.6000
	// X 3 0.4000
}
