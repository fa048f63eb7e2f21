package fit

import (
	"fmt"
	"math"
	"time"
)

// The Newton driver. Minimising the dual and matching moments differ only
// in the linear system of a step (the sparse Hessian solved by conjugate
// gradients, or the dense Jacobian by LU) and in the merit function of the
// line search (G, or the weighted residual norm); the iteration around
// them — stopping rule, budget, step bound, backtracking, divergence
// guard, and the fall-back from a lower-order curvature to the exact one —
// is this one loop.

// stepKind is the verdict of a newtonMethod on one step.
type stepKind int

const (
	stepOK     stepKind = iota // d holds the step
	stepSwitch                 // the lower-order curvature failed: switch to the exact one
	stepStop                   // give up, for the reason given
	stepDone                   // polishing a converged point: it stands
)

// newtonMethod is what distinguishes the two uses of the driver.
type newtonMethod interface {
	// curvature stores in out the linear system of the state's
	// response (called only for states that carry one).
	curvature(out *newtonOutcome, s *newtonState)
	// direction sets d to the step from cur with the stored system.
	// polishing says cur already meets the tolerance (a step forced by
	// minIter). On stepSwitch or stepStop it also says why.
	direction(out *newtonOutcome, cur *newtonState, d []float64, polishing bool) (stepKind, string)
	// accept is the merit test of the line search for the step t*d just
	// chosen by direction.
	accept(cur, next *newtonState, t float64) bool
	// noun names the quantity the stopping rule watches ("gradient",
	// "residual"); failure says why no line-search step was found.
	noun() string
	failure() string
	// logWord labels the iteration lines of the log.
	logWord() string
}

// run iterates Newton steps of method m from theta0 until the stopping
// rule holds, the budget or the iteration limit is reached, or a step
// fails (Nocedal and Wright, Numerical Optimization, 2nd ed., Alg. 3.1
// with backtracking; Sec. 11.2 for the residual merit function).
func (np *newtonProblem) run(theta0 []float64, m newtonMethod) (*newtonOutcome, error) {
	out := &newtonOutcome{}
	cur, err := np.state(theta0, true)
	out.evaluations++
	if err != nil {
		return nil, fmt.Errorf("at the starting point: %v", err)
	}
	out.state = cur
	d := make([]float64, np.params.NumParams())
	stalls := 0
	fullStep := false    // the last step was the whole Newton step
	lastProgress := -1.0 // progress before the last step
	for {
		out.gradSigma, out.gradAbs = np.criterion(cur.resid)
		if math.IsNaN(out.gradSigma) || math.IsNaN(out.gradAbs) {
			out.reason = "the " + m.noun() + " is not a number"
			return out, nil
		}
		if np.approximate() && fullStep && lastProgress > 0 && np.progress(cur.resid) > stallRatio*lastProgress && !np.done(cur.resid) {
			stalls++
			switch {
			case stalls >= maxStalls:
				if cur, err = np.switchToExact(cur, out, fmt.Sprintf("%d full steps reduced the %s by less than a factor %g", stalls, m.noun(), 1/stallRatio)); err != nil {
					return nil, err
				}
			case cur.ev.response == nil:
				// The first remedy: the lower-order response here.
				if cur, err = np.state(cur.theta, true); err != nil {
					return nil, err
				}
				out.evaluations++
			}
			out.state = cur
		}
		if cur.ev.response != nil {
			m.curvature(out, cur)
			out.responseOrder, out.curvatureTheta = np.curvatureOrder, cur.theta
		}
		// polishing: a step forced by minIter from an already converged
		// point; if it cannot be taken, the point stands.
		polishing := np.done(cur.resid)
		if polishing && (out.iterations >= np.minIter || maxAbs(cur.resid) == 0) {
			out.converged = true
			return out, nil
		}
		if !np.deadline.IsZero() && np.clock().After(np.deadline) {
			out.reason = fmt.Sprintf("time budget exhausted after %d Newton iterations (%s %s)", out.iterations, m.noun(), np.gradientText(out))
			return out, nil
		}
		if out.iterations >= np.maxIter {
			out.reason = fmt.Sprintf("no convergence in %d Newton iterations (%s %s)", np.maxIter, m.noun(), np.gradientText(out))
			return out, nil
		}
		out.iterations++

		kind, why := m.direction(out, cur, d, polishing)
		switch {
		case kind == stepDone:
			out.converged = true
			return out, nil
		case kind == stepSwitch && np.approximate():
			if cur, err = np.switchToExact(cur, out, fmt.Sprintf("iteration %d: %s", out.iterations, why)); err != nil {
				return nil, err
			}
			out.state, fullStep = cur, false
			continue
		case kind != stepOK:
			out.reason = fmt.Sprintf("iteration %d: %s", out.iterations, why)
			return out, nil
		}
		scale := 1.0
		if big := np.beta * maxAbs(d); big > np.maxStep {
			scale = np.maxStep / big
		}
		next, t, err := np.backtrack(cur, d, scale, out, func(next *newtonState, t float64) bool { return m.accept(cur, next, t) }, m.failure())
		switch {
		case err != nil && polishing:
			out.converged = true
			return out, nil
		case err != nil && np.approximate():
			if cur, err = np.switchToExact(cur, out, fmt.Sprintf("iteration %d: %v", out.iterations, err)); err != nil {
				return nil, err
			}
			out.state, fullStep = cur, false
			continue
		case err != nil:
			out.reason = fmt.Sprintf("iteration %d: %v", out.iterations, err)
			return out, nil
		}
		if np.logf != nil {
			sig, abs := np.criterion(next.resid)
			np.logf("iteration %d%s: step %.3g, curvature order %d, %s %s", out.iterations, m.logWord(), t, np.curvatureOrder, m.noun(), formatGradient(sig, abs, np.hasNoise(), np.hasExact()))
		}
		lastProgress, fullStep = np.progress(cur.resid), t == 1
		cur = next
		out.state = cur
		if np.beta*maxAbs(cur.lambda) > maxCoefficient {
			out.reason = fmt.Sprintf("coefficients diverge (beta |lambda| reached %.3g): the data may lie outside the expectations any Gibbs state of this template can produce, or the temperature is too low for the expansion", np.beta*maxAbs(cur.lambda))
			out.gradSigma, out.gradAbs = np.criterion(cur.resid)
			if cur.ev.response != nil {
				m.curvature(out, cur)
				out.responseOrder, out.curvatureTheta = np.curvatureOrder, cur.theta
			}
			return out, nil
		}
	}
}

// clock reads the time for the deadline.
func (np *newtonProblem) clock() time.Time {
	if np.now != nil {
		return np.now()
	}
	return time.Now()
}
