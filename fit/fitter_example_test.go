package fit_test

import (
	"fmt"
	"log"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/lattice"
	"warmfit/lattice/model"
)

// Learn a transverse-field Ising chain back from its exact expectation
// values. On 4 sites an order-4 expansion is exact, so the fit returns
// the coefficients it was given.
func ExampleFit() {
	lat, err := lattice.Open("chain:4")
	if err != nil {
		log.Fatal(err)
	}
	truth, err := model.Preset(lat, "tfim", map[string]float64{"J": 1, "hx": 0.6})
	if err != nil {
		log.Fatal(err)
	}
	const beta = 0.3

	// Exact expectations of every term (the expansion at order 4 covers
	// the whole chain).
	exp, err := cluster.NewExpansion(lat, truth)
	if err != nil {
		log.Fatal(err)
	}
	coeffs := make([]float64, len(truth))
	for k, t := range truth {
		coeffs[k] = t.Coeff
	}
	ev, err := exp.Evaluate(coeffs, beta, cluster.Options{Order: 4})
	if err != nil {
		log.Fatal(err)
	}
	data := &fit.Estimates{Values: ev.Expect[3], Stderr: make([]float64, len(truth))}

	// The template: the same terms, coefficients unknown.
	template := make([]lattice.Term, len(truth))
	for k, t := range truth {
		t.Coeff = 0
		template[k] = t
	}
	res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template, Data: data, Beta: beta}, fit.Options{Order: 4})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println("converged:", res.Converged)
	for _, t := range res.Terms {
		fmt.Printf("%-3s %v %.6f\n", t.Pauli, t.Sites, t.Coeff)
	}
	// Output:
	// converged: true
	// ZZ  [0 1] 1.000000
	// ZZ  [1 2] 1.000000
	// ZZ  [2 3] 1.000000
	// X   [0] 0.600000
	// X   [1] 0.600000
	// X   [2] 0.600000
	// X   [3] 0.600000
}
