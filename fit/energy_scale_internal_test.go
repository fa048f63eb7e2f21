package fit

import (
	"math"
	"testing"

	"warmfit/lattice"
)

// The covariance columns ScaleEnergy uses must agree with the fit's own
// variances on the diagonal and be symmetric (Cov(theta) is a covariance
// matrix), both for a fit with every term measured (P^{-1} B P^{-1} by
// conjugate gradients, against dense Cholesky variances) and for moment
// matching with unmeasured grouped terms (J^{-1} B J^{-T} by LU, against
// momentVariances).
func TestCovColumnMatchesVariances(t *testing.T) {
	lat, err := lattice.Open("chain:5")
	if err != nil {
		t.Fatal(err)
	}
	var terms []lattice.Term
	for i := 0; i+1 < 5; i++ {
		terms = append(terms, lattice.Term{Pauli: "ZZ", Sites: []int{i, i + 1}, Coeff: 0.8 + 0.1*float64(i), Group: "J"})
	}
	for i := 0; i < 5; i++ {
		terms = append(terms, lattice.Term{Pauli: "X", Sites: []int{i}, Coeff: 0.5 - 0.05*float64(i)})
	}
	vals, err := expansionExpect(lat, terms, coeffsOf(terms), 0.3, 5)
	if err != nil {
		t.Fatal(err)
	}
	for _, missing := range [][]int{nil, {1}} {
		est := &Estimates{Values: append([]float64(nil), vals...), Stderr: make([]float64, len(vals)), Shots: make([]int64, len(vals))}
		for k := range est.Stderr {
			est.Stderr[k] = 1e-3 * (1 + 0.1*float64(k))
		}
		for _, k := range missing {
			est.Values[k], est.Stderr[k] = math.NaN(), math.NaN()
		}
		est.Missing = missing
		tmpl := append([]lattice.Term(nil), terms...)
		res, err := Fit(&Problem{Lattice: lat, Terms: tmpl, Data: est}, Options{Order: 5})
		if err != nil || !res.Converged || res.covColumn == nil {
			t.Fatalf("missing %v: err %v, converged %v, covColumn %v", missing, err, res != nil && res.Converged, res != nil && res.covColumn != nil)
		}
		if moment := res.ErrorMethod == "dense LU, moment matching"; moment != (missing != nil) {
			t.Errorf("missing %v: error method %q", missing, res.ErrorMethod)
		}
		np := res.Params.NumParams()
		cols := make([][]float64, np)
		for q := range cols {
			if cols[q], err = res.covColumn(q); err != nil {
				t.Fatal(err)
			}
		}
		for q := 0; q < np; q++ {
			if v := res.ThetaStderr[q] * res.ThetaStderr[q]; math.Abs(cols[q][q]-v) > 1e-8*v {
				t.Errorf("missing %v, parameter %d: covariance column gives variance %v, the fit %v", missing, q, cols[q][q], v)
			}
			for p := 0; p < q; p++ {
				if d := math.Abs(cols[q][p] - cols[p][q]); d > 1e-8*math.Sqrt(cols[p][p]*cols[q][q]) {
					t.Errorf("missing %v: Cov[%d][%d] = %v but Cov[%d][%d] = %v", missing, p, q, cols[q][p], q, p, cols[p][q])
				}
			}
		}
	}
}

func coeffsOf(terms []lattice.Term) []float64 {
	c := make([]float64, len(terms))
	for k, t := range terms {
		c[k] = t.Coeff
	}
	return c
}
