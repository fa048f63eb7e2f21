package fit

import (
	"math"
	"math/rand/v2"
	"testing"

	"warmfit/lattice"
	"warmfit/lattice/model"
)

// uniformXXZ returns a tied (uniform) XXZ model with fields on the lattice.
func uniformXXZ(t *testing.T, spec string) (*lattice.Lattice, []lattice.Term) {
	t.Helper()
	lat, err := lattice.Open(spec)
	if err != nil {
		t.Fatal(err)
	}
	terms, params, err := model.PresetTerms(lat, "xxz", map[string]float64{"Jxy": 0.5, "Jz": 0.35, "hz": 0.25, "hx": 0.15})
	if err != nil {
		t.Fatal(err)
	}
	model.TieUniform(terms, params)
	return lat, terms
}

// The delta method against brute force: the Jacobian d theta / d e is
// measured by refitting with each data value moved by +-h (central
// differences), and Cov(theta) = J Cov(e) J^T must equal the error bars of
// Fit; propagate (M de, with the sign of M) must equal the change of the
// refit. The model is tied (4 parameters for 33 terms), so A is exercised,
// and Cov(e) is a non-uniform diagonal.
func TestDeltaMethodMatchesRefits(t *testing.T) {
	lat, terms := uniformXXZ(t, "square:2x3")
	const beta, order = 0.6, 4
	coeffs := make([]float64, len(terms))
	for k, t := range terms {
		coeffs[k] = t.Coeff
	}
	exp, err := expansionExpect(lat, terms, coeffs, beta, order)
	if err != nil {
		t.Fatal(err)
	}
	K := len(terms)
	rng := rand.New(rand.NewPCG(31, 32))
	stderr := make([]float64, K)
	for k := range stderr {
		stderr[k] = 1e-3 * (0.5 + rng.Float64())
	}
	fitWith := func(vals []float64) (*Result, *fitter) {
		p := &Problem{Lattice: lat, Terms: terms, Data: &Estimates{Values: vals, Stderr: stderr}, Beta: beta}
		opt := Options{Order: order, Tol: 1e-9, SkipTruncation: true}.withDefaults()
		f, err := newFitter(p, opt)
		if err != nil {
			t.Fatal(err)
		}
		res, err := f.fixedOrder(order, f.startingPoint())
		if err != nil || !res.Converged {
			t.Fatalf("fit: %v %+v", err, res)
		}
		return res, f
	}
	base, f := fitWith(exp)
	np := base.Params.NumParams()

	const h = 1e-5
	jac := make([][]float64, K) // jac[k][q] = d theta_q / d e_k
	for k := 0; k < K; k++ {
		up := append([]float64(nil), exp...)
		down := append([]float64(nil), exp...)
		up[k] += h
		down[k] -= h
		ru, _ := fitWith(up)
		rd, _ := fitWith(down)
		jac[k] = make([]float64, np)
		for q := range jac[k] {
			jac[k][q] = (ru.Theta[q] - rd.Theta[q]) / (2 * h)
		}
	}
	for q := 0; q < np; q++ {
		var v float64
		for k := 0; k < K; k++ {
			v += jac[k][q] * jac[k][q] * stderr[k] * stderr[k]
		}
		if got, want := base.ThetaStderr[q], math.Sqrt(v); math.Abs(got-want) > 1e-4*want {
			t.Errorf("parameter %s: delta-method stderr %.8g, refit Jacobian %.8g", base.Params.Names[q], got, want)
		}
	}

	// Sign and size of M de for one random direction.
	de := make([]float64, K)
	for k := range de {
		de[k] = 1e-6 * rng.NormFloat64()
	}
	out, err := f.fitOrder(order, base.Theta)
	if err != nil {
		t.Fatal(err)
	}
	pred, err := propagate(base.Params, out.out.hessian, de)
	if err != nil {
		t.Fatal(err)
	}
	for q := 0; q < np; q++ {
		var want float64
		for k := 0; k < K; k++ {
			want += jac[k][q] * de[k]
		}
		if math.Abs(pred[q]-want) > 1e-4*math.Abs(want)+1e-12 {
			t.Errorf("parameter %s: M de = %.6g, refits give %.6g", base.Params.Names[q], pred[q], want)
		}
	}
}
