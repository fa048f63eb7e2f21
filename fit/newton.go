package fit

import (
	"errors"
	"fmt"
	"math"
	"time"

	"gonum.org/v1/gonum/mat"

	"warmfit/cluster"
)

// thermalEval is what the fitter needs from one evaluation of the model
// at given coefficients: log(Z/2^N), the expectations <E_k> and, when
// asked for, the response R = d<E>/d lambda (negative semidefinite).
type thermalEval struct {
	logZ     float64
	expect   []float64
	response termMatrix
	raw      *cluster.Result // the full series, when the expansion made it
}

// evaluator computes the thermal quantities at term coefficients lambda.
type evaluator func(lambda []float64, response bool) (*thermalEval, error)

// Curvature at a lower order. The gradient of the dual at order L needs
// only the expectations at order L; its Hessian needs the response, whose
// Kubo–Mori sums cost several times the diagonalisations they start from.
// The response of the order-(L-1) expansion, accumulated in the first
// iterate's pass over the clusters (cluster.Options.ResponseOrder) and
// kept for the order's later steps, differs from the order-L one by the
// truncation of the response series, a few per cent where the expansion
// converges. Newton with that curvature and the exact
// gradient converges linearly at the rate ||I - P_{L-1}^{-1} P_L||, so a
// fit that starts from the order-(L-1) solution needs two or three steps;
// the line search on the exact G keeps every step a descent step
// (Nocedal and Wright, Numerical Optimization, 2nd ed., Sec. 3.3 on
// quasi-Newton directions). When the lower-order curvature is not
// positive definite, its steps stall (a full step shrinks the gradient by
// less than stallRatio: the first time the response is evaluated afresh,
// the second time), or the line search fails, the minimisation switches
// to the exact response for the rest of the order: never less robust
// than exact Newton, only slower.

// stallRatio: a full step with the lower-order curvature that does not
// reduce the scaled gradient below this fraction of its value is a
// stall.
const stallRatio = 0.5

// maxStalls is how many stalls switch to the exact curvature.
const maxStalls = 2

// newtonProblem is the minimisation of the dual
// G(theta) = log Z(A theta) + beta theta . A^T e at one expansion order.
type newtonProblem struct {
	params *Params
	beta   float64
	values []float64 // e_k, per term
	// sigma[q] is the standard deviation of (A^T e)_q, the data noise of
	// parameter q's gradient component; 0 for exact data.
	sigma   []float64
	tol     float64 // on |r_q| / sigma_q
	absTol  float64 // on |r_q| / |members of q| where sigma_q = 0
	maxIter int
	maxStep float64 // largest beta |Delta lambda| per Newton step
	eval    evaluator
	// exactEval, when not nil, evaluates the same order with the exact
	// response: eval then returns a lower-order response (curvatureOrder)
	// and the minimisation falls back on exactEval when that fails.
	exactEval      evaluator
	order          int // the expansion order L
	curvatureOrder int // the order of eval's response
	// reuse keeps the lower-order response of the first iterate for the
	// following steps (it costs about a forward pass at order L-1 on top
	// of each evaluation) until a step stalls; the error bars then
	// evaluate it again at the solution (fitter.errorBarCurvature).
	reuse bool
	logf  func(format string, args ...any)
	// deadline, when not zero, stops the minimisation once passed.
	deadline time.Time
	// now reads the clock for the deadline; nil means time.Now.
	now func() time.Time
	// minIter forces that many Newton steps even when the start already
	// meets the tolerance: a refit at another order from a solution must
	// move by the change the order makes, or the truncation error would
	// read zero.
	minIter int
	// measured, when not nil, marks the terms with data: the residual
	// then runs over measured terms only, r = A_m^T (e_m - <E>_m), and
	// G is not a valid objective (see matchMoments).
	measured []bool
}

// newtonState is an iterate with its evaluation.
type newtonState struct {
	theta  []float64
	lambda []float64
	ev     *thermalEval
	g      float64   // G(theta)
	resid  []float64 // r = A^T (e - <E>); the gradient of G is beta r
}

// newtonOutcome is the end of a minimisation: the best iterate reached
// and, for a converged one, the parameter-space Hessian there.
type newtonOutcome struct {
	state       *newtonState
	converged   bool
	reason      string // why it did not converge
	iterations  int
	evaluations int
	gradSigma   float64            // max |r_q| / sigma_q over noisy parameters
	gradAbs     float64            // max |r_q| / |q| over exact parameters
	hessian     *cluster.SparseSym // P = -A^T R A at curvatureTheta (positive semidefinite)
	// responseOrder is the order of the response in hessian or jacobian
	// and curvatureTheta the parameters it was evaluated at (the state's
	// unless the response was reused).
	responseOrder  int
	curvatureTheta []float64
	// jacobian is J = dr/dtheta = -A_m^T R A of moment matching (set
	// instead of hessian when some terms have no data).
	jacobian *mat.Dense
	notes    []string
}

// maxCoefficient bounds beta |lambda| during a fit: beyond it the Gibbs
// state is essentially a ground state and no cluster expansion describes
// it, so the iteration is diverging (typically because the data lie
// outside the expectations any Gibbs state of the template can produce).
const maxCoefficient = 30

// maxBacktracks bounds the halvings of one line search (a step of
// 2^-20 of the Newton step makes no progress worth an evaluation).
const maxBacktracks = 20

// maxNonConvex is how many iterates with a Hessian that is not positive
// definite a minimisation tolerates before giving up.
const maxNonConvex = 3

// state evaluates the dual at theta.
func (np *newtonProblem) state(theta []float64, response bool) (*newtonState, error) {
	s := &newtonState{
		theta:  append([]float64(nil), theta...),
		lambda: make([]float64, np.params.NumTerms()),
		resid:  make([]float64, np.params.NumParams()),
	}
	np.params.Expand(s.lambda, s.theta)
	ev, err := np.eval(s.lambda, response)
	if err != nil {
		return nil, err
	}
	if math.IsNaN(ev.logZ) || math.IsInf(ev.logZ, 0) {
		return nil, fmt.Errorf("log Z is %v", ev.logZ)
	}
	diff := make([]float64, len(s.lambda))
	var dual float64
	for k, e := range np.values {
		x := ev.expect[k]
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return nil, fmt.Errorf("expectation of term %d is %v", k, x)
		}
		if np.measured != nil && !np.measured[k] {
			continue
		}
		diff[k] = e - x
		dual += s.lambda[k] * e
	}
	s.ev = ev
	s.g = ev.logZ + np.beta*dual
	np.params.Reduce(s.resid, diff)
	return s, nil
}

// criterion returns the scaled gradient: the largest |r_q|/sigma_q over
// parameters with noisy data and the largest |r_q|/|q| over exact ones.
func (np *newtonProblem) criterion(resid []float64) (sig, abs float64) {
	for q, r := range resid {
		if s := np.sigma[q]; s > 0 {
			sig = math.Max(sig, math.Abs(r)/s)
		} else {
			abs = math.Max(abs, math.Abs(r)/float64(len(np.params.Members[q])))
		}
		if math.IsNaN(r) {
			return math.NaN(), math.NaN()
		}
	}
	return sig, abs
}

func (np *newtonProblem) done(resid []float64) bool {
	sig, abs := np.criterion(resid)
	return sig <= np.tol && abs <= np.absTol
}

// progress is the scaled gradient as one number: the larger of the
// noisy and the exact criterion, each over its tolerance (<= 1 when
// done).
func (np *newtonProblem) progress(resid []float64) float64 {
	sig, abs := np.criterion(resid)
	return math.Max(sig/np.tol, abs/np.absTol)
}

// approximate reports whether the current curvature is of a lower order.
func (np *newtonProblem) approximate() bool { return np.exactEval != nil }

// switchToExact drops the lower-order curvature: it re-evaluates cur with
// the exact response and notes why.
func (np *newtonProblem) switchToExact(cur *newtonState, out *newtonOutcome, why string) (*newtonState, error) {
	out.notes = append(out.notes, fmt.Sprintf("order %d: Newton steps switched from the order-%d response to the exact one (%s)", np.order, np.curvatureOrder, why))
	np.eval, np.exactEval = np.exactEval, nil
	np.curvatureOrder, np.reuse = np.order, false
	next, err := np.state(cur.theta, true)
	out.evaluations++
	if err != nil {
		return nil, err
	}
	if np.logf != nil {
		np.logf("switched to the exact response: %s", why)
	}
	return next, nil
}

// hessian returns P = -A^T R A from the state's response.
func (np *newtonProblem) hessian(s *newtonState) *cluster.SparseSym {
	return np.params.project(s.ev.response, -1)
}

// roundoff bounds the floating-point noise of G at a state, below which
// the line search cannot tell values apart.
func (np *newtonProblem) roundoff(s *newtonState) float64 {
	var sum float64
	for k, e := range np.values {
		sum += math.Abs(s.lambda[k] * e)
	}
	return 1e-12 * (math.Abs(s.ev.logZ) + np.beta*sum + 1)
}

// minimize runs damped Newton on the dual from theta0 (the driver run
// with dualMethod): each step solves P d = -r by Jacobi-preconditioned
// conjugate gradients on the sparse parameter-space Hessian and
// backtracks on G until the Armijo condition holds (Nocedal and Wright,
// Numerical Optimization, 2nd ed., Alg. 3.1 and 7.1). P may be of a lower
// order than G (see "Curvature at a lower order" above). It stops when
// every gradient component is negligible against the data's noise.
func (np *newtonProblem) minimize(theta0 []float64) (*newtonOutcome, error) {
	return np.run(theta0, &dualMethod{np: np})
}

// dualMethod is the minimisation of G: Hessian steps, Armijo on G.
type dualMethod struct {
	np        *newtonProblem
	nonConvex int     // iterates whose Hessian was not positive definite
	slope     float64 // directional derivative of G along the last step
}

func (m *dualMethod) curvature(out *newtonOutcome, s *newtonState) {
	out.hessian = m.np.hessian(s)
}

func (m *dualMethod) direction(out *newtonOutcome, cur *newtonState, d []float64, polishing bool) (stepKind, string) {
	np := m.np
	n := len(d)
	diag := out.hessian.Diag()
	res, err := solveCG(out.hessian, diag, cur.resid, d, 1e-10, 10*n+100)
	for i := range d {
		d[i] = -d[i]
	}
	switch {
	case errors.Is(err, errNotPositive) && np.approximate():
		return stepSwitch, "the lower-order Hessian is not positive definite"
	case errors.Is(err, errNotPositive):
		// A truncated expansion need not be convex far from high
		// temperature. Fall back to the preconditioned gradient, but not
		// for long: a dual that stays non-convex has no reliable minimum
		// at this order.
		m.nonConvex++
		if m.nonConvex > maxNonConvex {
			return stepStop, fmt.Sprintf("the truncated expansion of log Z is not convex here (its Hessian was not positive definite at %d iterates): the temperature is too low for this order", m.nonConvex)
		}
		out.notes = append(out.notes, fmt.Sprintf("iteration %d: the Hessian of the order-truncated log Z is not positive definite here; took a preconditioned gradient step", out.iterations))
		for i, r := range cur.resid {
			d[i] = -r
			if diag[i] > 0 {
				d[i] = -r / diag[i]
			}
		}
	case err != nil && polishing:
		return stepDone, ""
	case err != nil && (res.Residual > 1e-3 || math.IsNaN(res.Residual)):
		if np.approximate() {
			return stepSwitch, fmt.Sprintf("Newton system with the lower-order Hessian not solved (%v)", err)
		}
		return stepStop, fmt.Sprintf("Newton system not solved (%v, relative residual %.2g): the Hessian is singular or badly conditioned; some parameters may not be determined by the data", err, res.Residual)
	}
	// Directional derivative of G along d: beta r . d (< 0 for a descent
	// direction).
	m.slope = np.beta * dot(cur.resid, d)
	switch {
	case polishing && !(m.slope < 0):
		return stepDone, ""
	case !(m.slope < 0) && np.approximate():
		return stepSwitch, fmt.Sprintf("no descent direction with the lower-order Hessian (slope %v)", m.slope)
	case !(m.slope < 0):
		return stepStop, fmt.Sprintf("no descent direction (slope %v)", m.slope)
	}
	return stepOK, ""
}

// accept is the Armijo condition on G (c = 1e-4) with the rounding slack
// of G.
func (m *dualMethod) accept(cur, next *newtonState, t float64) bool {
	const c1 = 1e-4
	return next.g <= cur.g+c1*t*m.slope+m.np.roundoff(cur)
}

func (m *dualMethod) noun() string    { return "gradient" }
func (m *dualMethod) logWord() string { return "" }
func (m *dualMethod) failure() string {
	return "no decrease of the dual: the gradient is below the floating-point resolution of log Z, or the expansion is not a valid log Z at this order and temperature"
}

// backtrack tries the steps t*d for t = scale, scale/2, ... until accept
// holds, evaluating the response only at the accepted point (a full step
// is accepted most of the time, so the first try evaluates it at once).
// failure says why no step was found when every try was evaluated.
func (np *newtonProblem) backtrack(cur *newtonState, d []float64, scale float64, out *newtonOutcome, accept func(next *newtonState, t float64) bool, failure string) (*newtonState, float64, error) {
	theta := make([]float64, len(cur.theta))
	t := scale
	var lastErr error
	for try := 0; try < maxBacktracks; try++ {
		for i := range theta {
			theta[i] = cur.theta[i] + t*d[i]
		}
		withResponse := try == 0 && !np.reuse
		next, err := np.state(theta, withResponse)
		out.evaluations++
		if err == nil && accept(next, t) {
			if !withResponse && !np.reuse {
				next, err = np.state(theta, true)
				out.evaluations++
				if err != nil {
					return nil, t, err
				}
			}
			return next, t, nil
		}
		if err != nil {
			lastErr = err
		}
		t /= 2
	}
	if lastErr != nil {
		return nil, t, fmt.Errorf("line search failed: %v", lastErr)
	}
	return nil, t, errors.New("line search found " + failure)
}

func (np *newtonProblem) hasNoise() bool {
	for _, s := range np.sigma {
		if s > 0 {
			return true
		}
	}
	return false
}

func (np *newtonProblem) hasExact() bool {
	for _, s := range np.sigma {
		if s == 0 {
			return true
		}
	}
	return false
}

func (np *newtonProblem) gradientText(out *newtonOutcome) string {
	return formatGradient(out.gradSigma, out.gradAbs, np.hasNoise(), np.hasExact())
}

func formatGradient(sig, abs float64, noise, exact bool) string {
	switch {
	case noise && exact:
		return fmt.Sprintf("%.3g sigma, exact terms %.3g", sig, abs)
	case exact:
		return fmt.Sprintf("%.3g (absolute, exact data)", abs)
	}
	return fmt.Sprintf("%.3g sigma", sig)
}
