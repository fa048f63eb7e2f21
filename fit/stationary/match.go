package stationary

import (
	"errors"
	"fmt"
	"math"
	"time"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"warmfit/fit"
)

// ThermalMatch is the fit of the multipliers the constraints leave free
// to the measured term expectations, at a known beta.
type ThermalMatch struct {
	Beta float64
	// Chi2 is sum_k (e_k - <E_k>)²/stderr_k² over Terms terms at the
	// optimum, with DOF = Terms - free multipliers. Far above DOF, no
	// Gibbs state of the learned direction reproduces the data: the
	// maximum-entropy consistency test fails (a non-thermal state, or a
	// wrong beta).
	Chi2        float64
	DOF, Terms  int
	Evaluations int

	// Chi2Direction is Chi2 with the noise of the learned direction
	// added to that of the data (directionNoise; zero when not computed):
	// a direction off by its error bars moves the expectations of the
	// Gibbs state by much more than their shot noise, so Chi2 alone
	// rejects thermal data. DirectionRank is the number of error
	// directions propagated.
	Chi2Direction float64
	DirectionRank int
	// DirectionShare is the share of the direction's variance that the
	// propagated error directions carry (1 when all of it).
	DirectionShare float64

	a    []float64
	tCov *mat.SymDense
	null [][]float64
	// For directionNoise: the terms used, their standard errors, the
	// whitened residuals and Jacobian (d model / d t) at the optimum.
	use      []int
	stderr   []float64
	z        []float64
	jac      [][]float64
	evaluate Evaluator
	response ResponseEvaluator
	evalTime time.Duration // spent in evaluate
	// directionComplete: every error direction was propagated.
	directionComplete bool
}

// thermalMatch minimises the chi² of the term expectations over the free
// multipliers t (a = aPart + null t) by damped Gauss-Newton with central
// differences, started from the first-order high-temperature relation
// <E_k> = -beta lambda_k (Pauli strings square to one).
func thermalMatch(sys *System, est *fit.Estimates, g Gauge, aPart []float64, null [][]float64, combine func([]float64) []float64) (*ThermalMatch, error) {
	p := sys.params
	var use []int
	for k := range sys.terms {
		j := sys.TermString[k]
		if v := est.Values[j]; !math.IsNaN(v) && est.Stderr[j] > 0 {
			use = append(use, k)
		}
	}
	nt := len(null)
	if len(use) <= nt {
		return nil, fmt.Errorf("stationary: thermal match needs more than %d measured terms, have %d", nt, len(use))
	}
	m := &ThermalMatch{Beta: g.Beta, Terms: len(use), DOF: len(use) - nt, null: null}
	aOf := func(t []float64) []float64 {
		a := append([]float64(nil), aPart...)
		for j, nv := range null {
			floats.AddScaled(a, t[j], nv)
		}
		return a
	}
	lambdaOf := func(t []float64) []float64 {
		lam := make([]float64, p.NumTerms())
		p.Expand(lam, combine(aOf(t)))
		return lam
	}
	resid := func(t []float64) ([]float64, error) {
		start := time.Now()
		f, err := g.Evaluate(lambdaOf(t), g.Beta)
		m.evalTime += time.Since(start)
		m.Evaluations++
		if err != nil {
			return nil, err
		}
		z := make([]float64, len(use))
		for i, k := range use {
			j := sys.TermString[k]
			z[i] = (est.Values[j] - f[k]) / est.Stderr[j]
			if math.IsNaN(z[i]) || math.IsInf(z[i], 0) {
				return nil, fmt.Errorf("stationary: thermal match: expectation of term %s is %v", sys.terms[k].Key(), f[k])
			}
		}
		return z, nil
	}
	// Start: least squares of e_k = -beta lambda_k(t), linear in t.
	base := lambdaOf(make([]float64, nt))
	cols := make([][]float64, nt)
	for j := range nt {
		tj := make([]float64, nt)
		tj[j] = 1
		lj := lambdaOf(tj)
		cols[j] = make([]float64, len(use))
		for i, k := range use {
			cols[j][i] = -g.Beta * (lj[k] - base[k]) / est.Stderr[sys.TermString[k]]
		}
	}
	b := make([]float64, len(use))
	for i, k := range use {
		j := sys.TermString[k]
		b[i] = (est.Values[j] + g.Beta*base[k]) / est.Stderr[j]
	}
	t, err := leastSquares(cols, b)
	if err != nil {
		return nil, fmt.Errorf("stationary: thermal match start: %w", err)
	}
	z, err := resid(t)
	if err != nil {
		return nil, err
	}
	chi2 := floats.Dot(z, z)
	var jac [][]float64
	for iter := 0; iter < 30; iter++ {
		jac = make([][]float64, nt)
		scale := max(floats.Norm(t, math.Inf(1)), 1e-6)
		for j := range nt {
			h := 1e-4 * scale
			tp, tm := append([]float64(nil), t...), append([]float64(nil), t...)
			tp[j] += h
			tm[j] -= h
			zp, err := resid(tp)
			if err != nil {
				return nil, err
			}
			zm, err := resid(tm)
			if err != nil {
				return nil, err
			}
			jac[j] = make([]float64, len(use))
			for i := range zp {
				// d(model)/dt = -dz/dt
				jac[j][i] = -(zp[i] - zm[i]) / (2 * h)
			}
		}
		step, err := leastSquares(jac, z)
		if err != nil {
			return nil, fmt.Errorf("stationary: thermal match: %w", err)
		}
		improved := false
		for half := 0; half < 20; half++ {
			tn := append([]float64(nil), t...)
			floats.Add(tn, step)
			zn, err := resid(tn)
			if err == nil {
				if c := floats.Dot(zn, zn); c <= chi2 {
					rel := (chi2 - c) / max(chi2, 1)
					t, z, chi2, improved = tn, zn, c, true
					if rel < 1e-10 {
						improved = false
					}
					break
				}
			}
			floats.Scale(0.5, step)
		}
		if !improved {
			break
		}
	}
	m.a, m.Chi2 = aOf(t), chi2
	m.use, m.z, m.jac, m.evaluate, m.response = use, z, jac, g.Evaluate, g.Response
	m.stderr = make([]float64, len(use))
	for i, k := range use {
		m.stderr[i] = est.Stderr[sys.TermString[k]]
	}
	// Covariance of t: (J^T J)^{-1} in stderr units.
	jtj := mat.NewSymDense(nt, nil)
	for i := range nt {
		for j := i; j < nt; j++ {
			jtj.SetSym(i, j, floats.Dot(jac[i], jac[j]))
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(jtj) {
		return nil, errors.New("stationary: thermal match: the data do not constrain the free multipliers")
	}
	m.tCov = mat.NewSymDense(nt, nil)
	if err := ch.InverseTo(m.tCov); err != nil {
		return nil, err
	}
	return m, nil
}

// leastSquares solves min |sum_j x_j cols[j] - b| by QR (gonum).
func leastSquares(cols [][]float64, b []float64) ([]float64, error) {
	n, r := len(cols), len(b)
	a := mat.NewDense(r, n, nil)
	for j, c := range cols {
		a.SetCol(j, c)
	}
	var x mat.Dense
	if err := x.Solve(a, mat.NewVecDense(r, b)); err != nil {
		return nil, err
	}
	return mat.Col(nil, 0, &x), nil
}
