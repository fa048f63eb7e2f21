package stationary_test

import (
	"fmt"
	"math/rand/v2"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/fit/stationary"
	"warmfit/lattice"
	"warmfit/validate"
)

// Combine the exact expansion fit of a 4-site transverse-field Ising
// chain with its stationarity constraints, from exact Gibbs-state
// snapshots in the covering:3 bases (validate's exact sampler, seeded).
func ExampleCombine() {
	terms := []lattice.Term{
		{Pauli: "ZZ", Sites: []int{0, 1}, Coeff: 1},
		{Pauli: "ZZ", Sites: []int{1, 2}, Coeff: 0.8},
		{Pauli: "ZZ", Sites: []int{2, 3}, Coeff: 1.2},
		{Pauli: "X", Sites: []int{0}, Coeff: 0.5},
		{Pauli: "X", Sites: []int{1}, Coeff: 0.7},
		{Pauli: "X", Sites: []int{2}, Coeff: 0.6},
		{Pauli: "X", Sites: []int{3}, Coeff: 0.4},
	}
	const beta = 0.8
	l, err := lattice.Open("chain:4")
	if err != nil {
		panic(err)
	}
	sys, err := stationary.NewSystem(4, terms)
	if err != nil {
		panic(err)
	}
	sampler, err := validate.NewSampler(4, terms, beta)
	if err != nil {
		panic(err)
	}
	bases, _, err := fit.SchemeBases("covering:3", 4, terms, 1)
	if err != nil {
		panic(err)
	}
	e, err := stationary.NewEstimator(sys, fit.CovarianceOptions{AllPairs: true})
	if err != nil {
		panic(err)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for _, b := range bases {
		counts, err := sampler.Sample(b, 50000, rng)
		if err != nil {
			panic(err)
		}
		for _, c := range counts {
			if err := e.Add(b, c.Outcome, int64(c.Count)); err != nil {
				panic(err)
			}
		}
	}
	est, err := e.Result()
	if err != nil {
		panic(err)
	}
	d, err := stationary.Solve(sys, est, stationary.Options{})
	if err != nil {
		panic(err)
	}
	// The expansion fit on the terms' own estimates (order 4 = the chain:
	// exact).
	nt := len(terms)
	data := &fit.Estimates{Values: make([]float64, nt), Stderr: make([]float64, nt), Shots: make([]int64, nt), Cov: cluster.NewSparseSym(nt)}
	for k, j := range sys.TermString {
		data.Values[k], data.Stderr[k], data.Shots[k] = est.Values[j], est.Stderr[j], est.Shots[j]
		for m := k; m < nt; m++ {
			data.Cov.Set(k, m, est.Cov.At(j, sys.TermString[m]))
		}
	}
	fr, err := fit.Fit(&fit.Problem{Lattice: l, Terms: terms, Data: data, Beta: beta}, fit.Options{Order: 4})
	if err != nil {
		panic(err)
	}
	c, err := stationary.Combine(sys, est, d, stationary.ExpansionEstimate{Theta: fr.Theta, Propagate: fr.Propagate}, stationary.CombineOptions{})
	if err != nil {
		panic(err)
	}
	use, _ := c.Choose(fr.Truncation.Exact)
	fmt.Println(use, c.DOF)
	for k, t := range terms {
		fmt.Printf("%s %.2f\n", t.Key(), c.Theta[sys.Params().Of[k]])
	}
	// Output:
	// combined 6
	// ZZ 0 1 1.00
	// ZZ 1 2 0.80
	// ZZ 2 3 1.20
	// X 0 0.50
	// X 1 0.70
	// X 2 0.60
	// X 3 0.40
}
