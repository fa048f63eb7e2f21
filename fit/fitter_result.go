package fit

import (
	"errors"
	"fmt"
	"math"
	"time"

	"gonum.org/v1/gonum/stat/distuv"

	"warmfit/cluster"
	"warmfit/lattice"
)

// Result is the outcome of Fit.
type Result struct {
	// Terms are the template terms with the fitted Coeff and, when the
	// error bars could be computed, Stderr (HasStderr set).
	Terms  []lattice.Term
	Params *Params
	// Theta and ThetaStderr are the fitted parameters and their
	// standard errors (nil when not computed); Coeffs = A Theta.
	Theta       []float64
	ThetaStderr []float64
	Coeffs      []float64
	// Expect holds <E_k> at the solution, at the order used.
	Expect []float64
	// Beta is the inverse temperature used; BetaKnown is false when the
	// problem gave none, in which case Beta is 1 and the coefficients
	// are the products beta*lambda.
	Beta      float64
	BetaKnown bool
	// EnergyScale is set by ScaleEnergy, which fixes the scale of a fit
	// of beta*lambda after the fact; Beta is then the recovered beta and
	// the coefficients are lambda (CoefficientsAreLambda).
	EnergyScale *EnergyScale
	// Order is the expansion order of the answer.
	Order int
	// StoppedByBudget is true when the automatic order was stopped by the
	// wall-clock Options.Budget rather than by the convergence or the
	// work limit: the order then depends on the machine and its load, and
	// a Warning says so.
	StoppedByBudget bool

	// Converged reports that Newton met the stopping rule; when false,
	// Reason says why and the other fields describe the best iterate.
	Converged  bool
	Reason     string
	Iterations int // Newton iterations at the answer's order
	// TotalIterations counts the Newton iterations over all orders
	// fitted (lower-order refits and the automatic selection included).
	TotalIterations int
	Evaluations     int // expansion evaluations over all orders
	// GradientSigma is max_q |A^T(e - <E>)|_q / sd((A^T e)_q) over
	// parameters with noisy data; GradientAbs the largest mean residual
	// |A^T(e - <E>)|_q / |q| over parameters with exact data.
	GradientSigma float64
	GradientAbs   float64
	// Exact is true when every data value is exact (zero stderr).
	Exact bool

	// ErrorMethod says how the error bars were computed ("" when they
	// were not).
	ErrorMethod string
	// ResponseOrder is the expansion order of the response R the error
	// bars use: Order, or Order-1 when the exact response was too
	// expensive to evaluate (Options.Curvature); 0 without error bars.
	ResponseOrder int
	Truncation    Truncation
	// Chi2 and Dof: goodness of fit of tied parameters (diagonal
	// approximation); Dof is 0 when the fit is not over-determined.
	Chi2   float64
	Dof    int
	Chi2P  float64 // upper-tail probability of Chi2 with Dof degrees of freedom
	Bound  cluster.ThresholdBound
	Series []cluster.Convergence // per-term convergence of <E_k> at the solution
	// Untrusted lists the terms whose expectation series has not settled
	// to SeriesTol[k] at the answer's order.
	Untrusted []int
	SeriesTol []float64

	// Unmeasured lists the terms that had no data and were fitted
	// through their group by moment matching on its measured members.
	Unmeasured []int

	Significance *Significance // nil without error bars

	Warnings []string // things that could make the result mislead
	Notes    []string // other facts worth knowing
	Elapsed  time.Duration

	// covColumn gives columns of Cov(Theta) (nil without error bars);
	// ScaleEnergy needs the covariance of the calibrated parameter.
	covColumn covColumnFunc
	// propagate maps a change of the data to the first-order change of
	// Theta (nil when not available; see Propagate).
	propagate func(de []float64) ([]float64, error)
	// scaleWarnings holds the positions in Warnings of the warnings that
	// quote numbers in the coefficients' units or beta; ScaleEnergy
	// writes them again in units of lambda with the recovered beta.
	scaleWarnings []scaleWarning
}

// scaleWarning is one warning whose numbers depend on the energy scale:
// its position in Result.Warnings and how to write it from the result.
type scaleWarning struct {
	at    int
	write func(r *Result) string
}

// betaUnknownNote is the note of a fit without beta.
const betaUnknownNote = "beta not given: the coefficients are the products beta*lambda, reported with beta = 1"

// exactSeriesTol is the tolerance on the expectation series for exact
// data (there is no data noise to compare with).
const exactSeriesTol = 1e-6

// seriesConvergence judges every term's expectation series at the
// solution of one order against a tenth of its data stderr (nil when the
// evaluation kept no per-order series).
func (f *fitter) seriesConvergence(of *orderFit, seriesStderr []float64) (conv []cluster.Convergence, tols []float64, untrusted []int) {
	raw := of.out.state.ev.raw
	if raw == nil {
		return nil, nil, nil
	}
	K := len(f.prob.Terms)
	conv = make([]cluster.Convergence, K)
	tols = make([]float64, K)
	series := make([]float64, raw.Order)
	for k, t := range f.prob.Terms {
		for o := range series {
			series[o] = raw.Expect[o][k]
		}
		tol := 0.1 * seriesStderr[k]
		if tol == 0 {
			tol = exactSeriesTol
		}
		tols[k] = tol
		c := cluster.Converge(series, len(t.Sites), tol)
		if f.exactOrder(of.order) {
			c.Trusted = true
		}
		conv[k] = c
		if !c.Trusted {
			untrusted = append(untrusted, k)
		}
	}
	return conv, tols, untrusted
}

// finish assembles the result of the fit at main (the answer) with the
// fits at lower orders in history (sorted by order, main last).
func (f *fitter) finish(main *orderFit, history []*orderFit, notes []string) (*Result, error) {
	out := main.out
	st := out.state
	K := len(f.prob.Terms)
	r := &Result{
		Params:        f.params,
		Theta:         st.theta,
		Coeffs:        st.lambda,
		Expect:        st.ev.expect,
		Beta:          f.beta,
		BetaKnown:     f.prob.Beta > 0,
		Order:         main.order,
		Converged:     out.converged,
		Reason:        out.reason,
		Iterations:    out.iterations,
		GradientSigma: out.gradSigma,
		GradientAbs:   out.gradAbs,
		Exact:         f.exact,
		Notes:         append([]string(nil), notes...),
	}
	r.Evaluations, r.TotalIterations = f.evaluations, f.iterations
	r.Notes = append(r.Notes, out.notes...)
	if note := f.unmeasuredNote(); note != "" {
		r.Notes = append(r.Notes, note)
		for k, ok := range f.measured {
			if !ok {
				r.Unmeasured = append(r.Unmeasured, k)
			}
		}
	}
	dataStderr, seriesStderr := f.termStderr()
	if !r.BetaKnown {
		r.Notes = append(r.Notes, betaUnknownNote)
	}

	// Error bars, only at a solution: the delta method linearises there.
	if r.Converged && !f.exact {
		t0 := time.Now()
		se, method, err := f.paramStderrAt(main)
		usedCov := f.cov
		if errors.Is(err, errCovarianceNotPSD) {
			if _, diagonal := f.cov.(diagMatrix); !diagonal {
				// An estimated covariance with dropped pairs need not be
				// positive semidefinite; the variances alone always are.
				r.Warnings = append(r.Warnings, "the estimated data covariance is not positive semidefinite here; error bars use the variances only (correlations between estimates ignored)")
				usedCov = diagMatrix(f.varDiag)
				se, method, err = f.paramStderrWith(out, usedCov)
			}
		}
		f.opt.logf("error bars of %d parameters (%s): %.2fs", f.params.NumParams(), method, time.Since(t0).Seconds())
		if err != nil {
			r.Warnings = append(r.Warnings, "error bars not available: "+err.Error())
		} else {
			r.ThetaStderr, r.ErrorMethod, r.ResponseOrder = se, method, out.responseOrder
			r.covColumn = f.covColumn(out, usedCov)
			if h := out.hessian; out.jacobian == nil && h != nil {
				r.propagate = func(de []float64) ([]float64, error) { return propagate(f.params, h, de) }
			}
			if out.responseOrder < main.order {
				r.Notes = append(r.Notes, fmt.Sprintf("error bars use the response at order %d, not %d (its evaluation costs several forward passes at this size; the difference is the truncation of the response series, under 1%% in the tests where the expansion converges, 1.4%% for tied parameters)", out.responseOrder, main.order))
			}
		}
	} else if r.Converged && f.exact {
		r.ThetaStderr = make([]float64, f.params.NumParams())
		r.ErrorMethod = "exact data"
		r.covColumn = func(int) ([]float64, error) { return make([]float64, f.params.NumParams()), nil }
	}

	r.Terms = make([]lattice.Term, K)
	for k, t := range f.prob.Terms {
		t.Sites = append([]int(nil), t.Sites...)
		t.Coeff = st.lambda[k]
		t.Stderr, t.HasStderr = math.NaN(), false
		if r.ThetaStderr != nil {
			t.Stderr, t.HasStderr = r.ThetaStderr[f.params.Of[k]], true
		}
		r.Terms[k] = t
	}

	// Truncation against statistics.
	statErr := 0.0
	if r.ThetaStderr != nil {
		statErr = median(r.ThetaStderr)
	}
	if r.Converged {
		r.Truncation = f.truncation(history, statErr)
		if r.ThetaStderr != nil {
			r.Truncation.perParameterRatio(r.ThetaStderr)
		}
	}

	// Convergence of every term's expectation series at the solution.
	r.Series, r.SeriesTol, r.Untrusted = f.seriesConvergence(main, seriesStderr)
	r.Bound = cluster.SufficientBeta(r.Terms, st.lambda)

	if f.params.Tied() && r.Converged {
		if c, ok := residualChiSquare(f.params, f.values, dataStderr, st.ev.expect); ok {
			r.Chi2, r.Dof = c.Value, c.Dof
			r.Chi2P = distuv.ChiSquared{K: float64(c.Dof)}.Survival(c.Value)
		}
	}
	if r.ThetaStderr != nil && !f.exact {
		r.Significance = NewSignificance(r.Theta, r.ThetaStderr, f.opt.FDR)
	}
	f.addWarnings(r)
	return r, nil
}

// addWarnings states plainly everything that could make the numbers
// mislead.
func (f *fitter) addWarnings(r *Result) {
	if !r.Converged {
		r.Warnings = append(r.Warnings, "the fit did NOT converge: "+r.Reason+"; the coefficients are the last iterate, not an estimate")
		return
	}
	tr := r.Truncation
	switch {
	case tr.Exact:
		r.Notes = append(r.Notes, fmt.Sprintf("order %d covers all %d sites: the expansion is exact, no truncation error", r.Order, f.sites))
	case !tr.Known:
		r.Warnings = append(r.Warnings, fmt.Sprintf("truncation error unknown: no lower order than %d could be fitted to compare with (the smallest order holding every term is %d)", r.Order, f.minL))
	case tr.StatError > 0 && f.opt.TruncationTarget <= 0:
		// Against statistics the warning asks whether truncation moves a
		// coefficient by more than its error bar; the target (a tenth of
		// the median stderr) only decides how far the automatic order
		// rises.
		switch {
		case tr.OverStderr > 0:
			r.addScaleWarning(func(r *Result) string {
				return fmt.Sprintf("truncation error %.3g exceeds the standard error of %d of %d parameters (up to %.3g times; median statistical error %.3g%s): the temperature may be too low for this order (%d)",
					r.Truncation.Error, r.Truncation.OverStderr, len(r.Truncation.ParamError), r.Truncation.MaxRatio, r.Truncation.StatError, r.unitsNote(), r.Order)
			})
		case !tr.OK:
			// Dimensionless, so that ScaleEnergy need not rewrite it.
			r.Notes = append(r.Notes, fmt.Sprintf("the truncation error is above the target (%g x the median statistical error) but below every parameter's standard error (at most %.2f of it): a higher order would move no coefficient beyond its error bar",
				f.opt.TruncationFraction, tr.MaxRatio))
		}
	case !tr.OK:
		r.addScaleWarning(func(r *Result) string {
			return fmt.Sprintf("truncation error %.3g exceeds the target %.3g%s: the temperature may be too low for this order (%d)",
				r.Truncation.Error, r.Truncation.Target, r.unitsNote(), r.Order)
		})
	}
	if n := len(r.Untrusted); n > 0 {
		crit := "0.1 x their stderr"
		if f.exact {
			crit = fmt.Sprintf("%g, the tolerance for exact data", exactSeriesTol)
		}
		r.Warnings = append(r.Warnings, fmt.Sprintf("%d of %d term expectations have not converged in the expansion at order %d (estimated truncation error above %s)", n, len(r.Terms), r.Order, crit))
		// beta > bound(lambda) is the same condition in either unit
		// system (bound(theta) = bound(lambda)/beta), so only the
		// numbers change when the scale is fixed.
		if r.Beta > r.Bound.Beta {
			r.addScaleWarning(func(r *Result) string {
				if !r.CoefficientsAreLambda() {
					return fmt.Sprintf("the products beta*lambda are beyond the sufficient convergence bound (beta = 1 by convention is above %.4g) and the series did not converge: the fitted coefficients may be unreliable", r.Bound.Beta)
				}
				return fmt.Sprintf("beta %.4g is above the sufficient convergence bound %.4g and the series did not converge: the fitted coefficients may be unreliable", r.Beta, r.Bound.Beta)
			})
		}
	}
	if r.Dof > 0 && r.Chi2P < 1e-3 {
		r.Warnings = append(r.Warnings, fmt.Sprintf("chi2/dof = %.3g over %d degrees of freedom (p = %.2g): the tied groups do not describe the data", r.Chi2/float64(r.Dof), r.Dof, r.Chi2P))
	}
}

// addScaleWarning appends a warning whose numbers depend on the energy
// scale and remembers how to write it again.
func (r *Result) addScaleWarning(write func(r *Result) string) {
	r.scaleWarnings = append(r.scaleWarnings, scaleWarning{at: len(r.Warnings), write: write})
	r.Warnings = append(r.Warnings, write(r))
}

// rewriteScaleWarnings writes the scale-dependent warnings again from r's
// (rescaled) numbers; r.Warnings must be r's own copy.
func (r *Result) rewriteScaleWarnings() {
	for _, w := range r.scaleWarnings {
		r.Warnings[w.at] = w.write(r)
	}
}

// unitsNote says in which units the truncation numbers are when that is
// not lambda.
func (r *Result) unitsNote() string {
	if r.CoefficientsAreLambda() {
		return ""
	}
	return " (units of beta*lambda)"
}
