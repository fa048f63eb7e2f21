package fit

import (
	"warmfit/cluster"
	"warmfit/lattice"
)

// expansionExpect evaluates <E_k> at coefficients by the order-L
// expansion: data a fit at the same order matches exactly.
func expansionExpect(lat *lattice.Lattice, terms []lattice.Term, coeffs []float64, beta float64, order int) ([]float64, error) {
	exp, err := cluster.NewExpansion(lat, terms)
	if err != nil {
		return nil, err
	}
	res, err := exp.Evaluate(coeffs, beta, cluster.Options{Order: order})
	if err != nil {
		return nil, err
	}
	return res.Expect[order-1], nil
}
