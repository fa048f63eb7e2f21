package fit

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"

	"warmfit/cluster"
	"warmfit/lattice"
)

// Fixing the energy scale of a fit at unknown temperature.
//
// The Gibbs state depends on beta and lambda only through theta =
// beta*lambda, so data alone fix theta, not beta. One calibrated
// coefficient lambda_r = V (a coupling known from elsewhere) or a known
// beta fixes the scale after the fit:
//
//	beta = theta_r / V,   lambda_q = theta_q / beta = V theta_q / theta_r,
//
// with error bars by the delta method on the fitted covariance of theta
// (the same linearisation as the fit's own error bars):
//
//	Var(beta)     = Var(theta_r)/V^2 + (theta_r/V^2)^2 sigma_V^2
//	Var(lambda_q) = (V/theta_r)^2 [Var(theta_q) - 2 (theta_q/theta_r) Cov(theta_q, theta_r)
//	                 + (theta_q/theta_r)^2 Var(theta_r)] + (theta_q/theta_r)^2 sigma_V^2,
//
// sigma_V the uncertainty of the calibration (0 when exact). With a known
// beta = B +- sigma_B instead, lambda_q = theta_q/B and Var(lambda_q) =
// Var(theta_q)/B^2 + (theta_q/B^2)^2 sigma_B^2.

// Calibration is what fixes the energy scale: either one term's known
// coefficient (Term, Value, ValueStderr) or the known inverse temperature
// (Term "", Beta, BetaStderr). Stderrs are 0 for exact knowledge.
type Calibration struct {
	Term               string // lattice.TermKey of the calibrated term
	Value, ValueStderr float64
	Beta, BetaStderr   float64
}

// String describes the calibration as a person writes it.
func (c Calibration) String() string {
	pm := func(v, s float64) string {
		if s > 0 {
			return fmt.Sprintf("%.6g +- %.3g", v, s)
		}
		return fmt.Sprintf("%.6g", v)
	}
	if c.Term == "" {
		return "beta = " + pm(c.Beta, c.BetaStderr)
	}
	return fmt.Sprintf("lambda(%s) = %s", c.Term, pm(c.Value, c.ValueStderr))
}

// EnergyScale is the inverse temperature recovered by ScaleEnergy.
type EnergyScale struct {
	Calibration Calibration
	// Beta and BetaStderr: the inverse temperature and its standard error
	// (NaN when the fit has no error bars).
	Beta, BetaStderr float64
	// Term is the index of the calibrated template term, -1 for a known beta.
	Term int
	// Method says how BetaStderr and the coefficients' error bars were
	// obtained.
	Method string
}

// ScaleEnergy turns a converged fit of beta*lambda (r.BetaKnown false)
// into a fit of lambda with the calibration c: it returns a copy of r
// whose coefficients, parameters, standard errors and truncation
// measures are in units of lambda, with EnergyScale set and Beta the
// recovered inverse temperature; r is not modified. Significance, the
// expectations and the convergence of the series do not depend on the
// scale and are shared.
//
// It is an error when beta is known already, when the fit did not
// converge, when the calibrated term is not a template term, or when the
// calibration and the fitted theta_r differ in sign or theta_r is 0 (beta
// would not be positive). A calibrated coefficient fitted with a relative
// error above 1/3 gives a warning: the scale is then poorly determined and
// the linearised error bars are rough.
func ScaleEnergy(r *Result, c Calibration) (*Result, error) {
	if err := checkScalable(r, c); err != nil {
		return nil, err
	}
	np := r.Params.NumParams()
	varTheta := make([]float64, np) // zero for exact data
	haveErr := r.ThetaStderr != nil
	if haveErr {
		for q, s := range r.ThetaStderr {
			varTheta[q] = s * s
		}
	}
	out := *r
	es := &EnergyScale{Calibration: c, Term: -1}
	out.Theta = make([]float64, np)
	out.ThetaStderr = nil
	if haveErr {
		out.ThetaStderr = make([]float64, np)
	}
	var warnings []string
	var err error
	if c.Term == "" {
		err = scaleByBeta(&out, es, r.Theta, varTheta)
	} else {
		warnings, err = scaleByTerm(&out, es, r, varTheta)
	}
	if err != nil {
		return nil, err
	}
	if !haveErr {
		es.BetaStderr = math.NaN()
	}
	out.EnergyScale = es
	out.Beta = es.Beta
	rescaleDerived(&out, r)
	out.Notes = nil
	for _, n := range r.Notes {
		if n != betaUnknownNote {
			out.Notes = append(out.Notes, n)
		}
	}
	out.Notes = append(out.Notes, fmt.Sprintf("beta not given: the fit learnt beta*lambda; the energy scale is fixed from %s, so beta = %s (%s)",
		c, formatPM(es.Beta, es.BetaStderr), es.Method))
	out.Warnings = slices.Clone(r.Warnings)
	out.rewriteScaleWarnings() // their numbers in units of lambda, with the recovered beta
	out.Warnings = append(out.Warnings, warnings...)
	if haveErr {
		out.ErrorMethod = r.ErrorMethod + "; energy scale by the delta method"
	}
	out.covColumn = nil // the covariance of lambda is not that of theta
	out.propagate = nil
	return &out, nil
}

// checkScalable refuses a fit whose scale is known or untrustworthy and a
// calibration that is not a finite number with a non-negative error.
func checkScalable(r *Result, c Calibration) error {
	if r.BetaKnown {
		return fmt.Errorf("the fit was made at a known beta %g: its coefficients are lambda already", r.Beta)
	}
	if r.EnergyScale != nil {
		return fmt.Errorf("the energy scale is fixed already (%s)", r.EnergyScale.Calibration)
	}
	if !r.Converged {
		return fmt.Errorf("the fit did not converge: no energy scale from its last iterate")
	}
	for _, v := range []float64{c.Value, c.ValueStderr, c.Beta, c.BetaStderr} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("calibration %s: not a finite number", c)
		}
	}
	if c.ValueStderr < 0 || c.BetaStderr < 0 {
		return fmt.Errorf("calibration %s: negative standard error", c)
	}
	return nil
}

// scaleByBeta fills out.Theta (and out.ThetaStderr when allocated) with
// lambda = theta/B for the calibration's known beta B +- sigma_B.
func scaleByBeta(out *Result, es *EnergyScale, theta, varTheta []float64) error {
	c := es.Calibration
	if !(c.Beta > 0) {
		return fmt.Errorf("calibration %s: beta must be positive", c)
	}
	b, sb := c.Beta, c.BetaStderr
	es.Beta, es.BetaStderr = b, sb
	for q := range theta {
		out.Theta[q] = theta[q] / b
		if out.ThetaStderr != nil {
			out.ThetaStderr[q] = math.Sqrt(varTheta[q]/(b*b) + sq(theta[q]/(b*b))*sb*sb)
		}
	}
	es.Method = "known beta: lambda = theta/beta"
	return nil
}

// scaleByTerm fills out.Theta (and out.ThetaStderr when allocated) with
// lambda_q = V theta_q / theta_r for the calibrated term r = V +- sigma_V,
// with the delta-method error bars of the package comment. It returns
// the warning of a poorly determined calibrated coefficient.
func scaleByTerm(out *Result, es *EnergyScale, r *Result, varTheta []float64) ([]string, error) {
	c := es.Calibration
	theta, haveErr := r.Theta, out.ThetaStderr != nil
	k := slices.IndexFunc(r.Terms, func(t lattice.Term) bool { return t.Key() == c.Term })
	if k < 0 {
		return nil, fmt.Errorf("calibration %s: %q is not a term of the template", c, c.Term)
	}
	es.Term = k
	ref := r.Params.Of[k]
	tr, v, sv := theta[ref], c.Value, c.ValueStderr
	if v == 0 || tr == 0 || math.Signbit(tr) != math.Signbit(v) {
		return nil, fmt.Errorf("calibration %s: the fitted beta*lambda of %s is %.4g, so beta = %.4g / %.4g would not be positive; check the sign convention (H = sum coeff P) and the term",
			c, c.Term, tr, tr, v)
	}
	var col []float64
	if haveErr {
		if r.covColumn == nil {
			return nil, fmt.Errorf("calibration %s: the fit's covariance is not available (a Result not made by Fit)", c)
		}
		var err error
		if col, err = r.covColumn(ref); err != nil {
			return nil, fmt.Errorf("calibration %s: covariance of the fitted coefficients: %v", c, err)
		}
	}
	es.Beta = tr / v
	es.BetaStderr = math.Sqrt(varTheta[ref]/(v*v) + sq(tr/(v*v))*sv*sv)
	for q := range theta {
		ratio := theta[q] / tr
		out.Theta[q] = v * ratio
		if haveErr {
			vq := sq(v/tr)*(varTheta[q]-2*ratio*col[q]+ratio*ratio*varTheta[ref]) + ratio*ratio*sv*sv
			if q == ref {
				vq = sv * sv // exactly V, up to the calibration's own error
			}
			out.ThetaStderr[q] = math.Sqrt(math.Max(vq, 0))
		}
	}
	es.Method = "delta method with the fitted covariance of beta*lambda: beta = theta_r / lambda_r"
	var warnings []string
	if haveErr && math.Sqrt(varTheta[ref]) > math.Abs(tr)/3 {
		warnings = append(warnings, fmt.Sprintf("the calibrated term %s is fitted as %.3g +- %.2g (beta*lambda): its relative error is above 1/3, so beta is poorly determined and its linearised error bar is rough; calibrate with a larger coefficient",
			c.Term, tr, math.Sqrt(varTheta[ref])))
	}
	return warnings, nil
}

// rescaleDerived recomputes from out.Theta and out.Beta what the
// parameters determine: the per-term coefficients and error bars, the
// truncation measures (coefficient differences, so units of lambda now)
// and the sufficient-temperature bound. r is the fit of beta*lambda.
func rescaleDerived(out, r *Result) {
	out.Coeffs = make([]float64, len(r.Coeffs))
	r.Params.Expand(out.Coeffs, out.Theta)
	out.Terms = make([]lattice.Term, len(r.Terms))
	for k, t := range r.Terms {
		t.Sites = slices.Clone(t.Sites)
		t.Coeff = out.Coeffs[k]
		if out.ThetaStderr != nil {
			t.Stderr, t.HasStderr = out.ThetaStderr[r.Params.Of[k]], true
		}
		out.Terms[k] = t
	}
	inv := 1 / out.Beta
	out.Truncation.Steps = make([]float64, len(r.Truncation.Steps))
	for i, s := range r.Truncation.Steps {
		out.Truncation.Steps[i] = s * inv
	}
	out.Truncation.Error *= inv
	if e := r.Truncation.ParamError; e != nil {
		out.Truncation.ParamError = make([]float64, len(e))
		for q, x := range e {
			out.Truncation.ParamError[q] = x * inv
		}
	}
	out.Truncation.StatError *= inv
	out.Truncation.Target *= inv
	out.Bound = cluster.SufficientBeta(out.Terms, out.Coeffs)
}

// CoefficientsAreLambda reports whether the coefficients are lambda (beta
// given, or the energy scale fixed by ScaleEnergy) rather than
// beta*lambda.
func (r *Result) CoefficientsAreLambda() bool { return r.BetaKnown || r.EnergyScale != nil }

func sq(x float64) float64 { return x * x }

func formatPM(v, s float64) string {
	if math.IsNaN(s) {
		return fmt.Sprintf("%.6g (no error bar)", v)
	}
	return fmt.Sprintf("%.6g +- %.2g", v, s)
}

// covColumnFunc returns column q of Cov(theta) at the solution.
type covColumnFunc func(q int) ([]float64, error)

// hessianCovColumn is column q of P^{-1} B P^{-1} (the delta method of
// a fit with every term measured): two conjugate-gradient solves.
func hessianCovColumn(p, b *cluster.SparseSym) covColumnFunc {
	return func(q int) ([]float64, error) {
		n := p.Dim()
		u := make([]float64, n)
		u[q] = 1
		x := make([]float64, n)
		diag := p.Diag()
		if _, err := solveCG(p, diag, u, x, 1e-12, 10*n+100); err != nil {
			return nil, err
		}
		y := make([]float64, n)
		b.MulVec(y, x)
		z := make([]float64, n)
		if _, err := solveCG(p, diag, y, z, 1e-12, 10*n+100); err != nil {
			return nil, err
		}
		return z, nil
	}
}

// momentCovColumn is column q of J^{-1} B J^{-T} (moment matching).
func momentCovColumn(j *mat.Dense, b *cluster.SparseSym) covColumnFunc {
	return func(q int) ([]float64, error) {
		n, _ := j.Dims()
		var lu mat.LU
		lu.Factorize(j)
		u := mat.NewVecDense(n, nil)
		u.SetVec(q, 1)
		var x mat.VecDense
		if err := lu.SolveVecTo(&x, true, u); err != nil {
			return nil, err
		}
		y := make([]float64, n)
		b.MulVec(y, x.RawVector().Data)
		var z mat.VecDense
		if err := lu.SolveVecTo(&z, false, mat.NewVecDense(n, y)); err != nil {
			return nil, err
		}
		return slices.Clone(z.RawVector().Data), nil
	}
}

// covColumn returns the covariance columns of the parameters at the
// solution out for the data covariance cov.
func (f *fitter) covColumn(out *newtonOutcome, cov termMatrix) covColumnFunc {
	b := f.params.project(cov, 1)
	if out.jacobian != nil {
		return momentCovColumn(out.jacobian, b)
	}
	return hessianCovColumn(out.hessian, b)
}
