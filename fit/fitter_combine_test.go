package fit

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"warmfit/lattice"
)

// TestPropagateAndWithParameters: Propagate is the fit's first-order map
// from data to parameters: a refit of perturbed data moves the
// parameters by it (a finite-difference check of a derivative, common
// practice), and its sandwich with the data variances is the fit's own
// variance (the delta method); WithParameters replaces the estimate,
// its error bars and the covariance ScaleEnergy reads, and notes why.
func TestPropagateAndWithParameters(t *testing.T) {
	lat, err := lattice.Open("chain:5")
	if err != nil {
		t.Fatal(err)
	}
	var terms []lattice.Term
	for i := 0; i+1 < 5; i++ {
		terms = append(terms, lattice.Term{Pauli: "ZZ", Sites: []int{i, i + 1}, Coeff: 0.8 + 0.1*float64(i)})
	}
	for i := 0; i < 5; i++ {
		terms = append(terms, lattice.Term{Pauli: "X", Sites: []int{i}, Coeff: 0.5 - 0.05*float64(i)})
	}
	vals, err := expansionExpect(lat, terms, coeffsOf(terms), 0.3, 5)
	if err != nil {
		t.Fatal(err)
	}
	data := func(shift int, h float64) *Estimates {
		est := &Estimates{Values: append([]float64(nil), vals...), Stderr: make([]float64, len(vals)), Shots: make([]int64, len(vals))}
		for k := range est.Stderr {
			est.Stderr[k] = 1e-3 * (1 + 0.1*float64(k))
		}
		if shift >= 0 {
			est.Values[shift] += h
		}
		return est
	}
	fitOf := func(est *Estimates) *Result {
		res, err := Fit(&Problem{Lattice: lat, Terms: append([]lattice.Term(nil), terms...), Data: est, Beta: 0.3}, Options{Order: 5, Tol: 1e-8})
		if err != nil || !res.Converged {
			t.Fatalf("fit: %v", err)
		}
		return res
	}
	base := fitOf(data(-1, 0))
	nt, np := len(terms), base.Params.NumParams()
	const h = 1e-5
	for _, k := range []int{0, 6} {
		de := make([]float64, nt)
		de[k] = 1
		pred, err := base.Propagate(de)
		if err != nil {
			t.Fatal(err)
		}
		moved := fitOf(data(k, h))
		for q := range np {
			got := (moved.Theta[q] - base.Theta[q]) / h
			if math.Abs(got-pred[q]) > 1e-3*(1+math.Abs(pred[q])) {
				t.Errorf("data %d, parameter %d: refit moves by %.6g per unit, Propagate says %.6g", k, q, got, pred[q])
			}
		}
	}
	variance := make([]float64, np)
	est := data(-1, 0)
	for k := range nt {
		de := make([]float64, nt)
		de[k] = 1
		col, err := base.Propagate(de)
		if err != nil {
			t.Fatal(err)
		}
		for q := range np {
			variance[q] += col[q] * col[q] * est.Stderr[k] * est.Stderr[k]
		}
	}
	for q := range np {
		if v := base.ThetaStderr[q] * base.ThetaStderr[q]; math.Abs(variance[q]-v) > 1e-6*v {
			t.Errorf("parameter %d: Propagate's variance %.6g, the fit's %.6g", q, variance[q], v)
		}
	}

	theta := make([]float64, np)
	cov := mat.NewSymDense(np, nil)
	for q := range np {
		theta[q] = base.Theta[q] + 0.01
		cov.SetSym(q, q, 4e-6)
	}
	out, err := base.WithParameters(theta, cov, "replaced for the test")
	if err != nil {
		t.Fatal(err)
	}
	for k, term := range out.Terms {
		q := out.Params.Of[k]
		if term.Coeff != theta[q] || out.Coeffs[k] != theta[q] || math.Abs(term.Stderr-2e-3) > 1e-15 || math.Abs(out.ThetaStderr[q]-2e-3) > 1e-15 {
			t.Errorf("term %d: coeff %v stderr %v, want %v and 0.002", k, term.Coeff, term.Stderr, theta[q])
		}
	}
	if col, err := out.covColumn(2); err != nil || col[2] != 4e-6 || col[1] != 0 {
		t.Errorf("covariance column 2: %v %v", col, err)
	}
	if _, err := out.Propagate(make([]float64, nt)); err == nil {
		t.Error("the replaced result still propagates the expansion's data")
	}
	if base.Theta[0] == theta[0] || !strings.Contains(out.Notes[len(out.Notes)-1], "replaced for the test") {
		t.Errorf("the original was modified or the note is missing: %v", out.Notes)
	}
}
