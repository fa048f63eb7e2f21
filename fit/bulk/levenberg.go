package bulk

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/mat"
)

// lsqProblem is a weighted least-squares problem in the free parameters
// x: eval fills the weighted residuals r_i = (model_i - data_i)/sigma_i
// and, when jac is not nil, the Jacobian dr_i/dx_j.
type lsqProblem struct {
	nRes, nPar   int
	eval         func(x, r []float64, jac *mat.Dense) error
	lower, upper []float64
}

// lsqResult is the outcome of levenbergMarquardt.
type lsqResult struct {
	x          []float64
	chi2       float64
	jac        *mat.Dense // at x
	iterations int
	converged  bool
	reason     string
	atBound    []bool
}

const (
	lmMaxIterations = 200
	lmStepTol       = 1e-7 // scaled step |D dx| below which the fit has converged
)

// levenbergMarquardt minimises |r(x)|^2 from x0 by Marquardt's damped
// Gauss–Newton method (D. W. Marquardt, J. SIAM 11, 431 (1963)) in the
// scaled form of J. J. Moré ("The Levenberg–Marquardt algorithm:
// implementation and theory", Lecture Notes in Mathematics 630, 105
// (1978)): each step solves
//
//	min |J dx + r|^2 + lambda |D dx|^2
//
// as the linear least-squares problem [J; sqrt(lambda) D] dx = [-r; 0] by
// QR (not through the normal equations, whose condition number is the
// square), with D_j the largest column norm of J seen so far, which makes
// the method invariant to the units of the parameters. lambda is divided by
// 10 after a step that lowers chi^2 and multiplied by 10 after one that
// does not (Marquardt's rule). Steps are clipped to the bounds, and a
// parameter on a bound that chi^2 pushes outwards is held there for the
// step (an active set), so that the others take full Gauss–Newton steps
// instead of zigzagging against the bound. The fit has
// converged when the scaled step |D_j dx_j| falls below 1e-7 for every
// parameter, which is far below the parameter's own standard error.
func levenbergMarquardt(prob lsqProblem, x0 []float64) (lsqResult, error) {
	n, k := prob.nRes, prob.nPar
	if n < k {
		return lsqResult{}, errors.New("fewer data points than free parameters")
	}
	x := append([]float64(nil), x0...)
	r := make([]float64, n)
	jac := mat.NewDense(n, k, nil)
	if err := prob.eval(x, r, jac); err != nil {
		return lsqResult{}, err
	}
	chi2 := sumSq(r)
	d := make([]float64, k)
	lambda := 1e-3
	xTry := make([]float64, k)
	rTry := make([]float64, n)
	aug := mat.NewDense(n+k, k, nil)
	rhs := mat.NewVecDense(n+k, nil)
	var step mat.VecDense
	res := lsqResult{reason: "iteration limit reached"}
	for it := 1; it <= lmMaxIterations; it++ {
		res.iterations = it
		for j := range k {
			d[j] = max(d[j], mat.Norm(jac.ColView(j), 2))
			if d[j] == 0 {
				d[j] = 1
			}
		}
		aug.Zero()
		aug.Slice(0, n, 0, k).(*mat.Dense).Copy(jac)
		for j := range k {
			aug.Set(n+j, j, math.Sqrt(lambda)*d[j])
			if pinnedAtBound(x[j], prob.lower[j], prob.upper[j], jac.ColView(j), r) {
				for i := range n {
					aug.Set(i, j, 0)
				}
			}
		}
		for i := range n {
			rhs.SetVec(i, -r[i])
		}
		for j := range k {
			rhs.SetVec(n+j, 0)
		}
		var qr mat.QR
		qr.Factorize(aug)
		if err := qr.SolveVecTo(&step, false, rhs); err != nil {
			lambda *= 10
			continue
		}
		scaled := 0.0
		for j := range k {
			xTry[j] = clamp(x[j]+step.AtVec(j), prob.lower[j], prob.upper[j])
			scaled = max(scaled, math.Abs((xTry[j]-x[j])*d[j]))
		}
		err := prob.eval(xTry, rTry, nil)
		chi2Try := math.Inf(1)
		if err == nil {
			chi2Try = sumSq(rTry)
		}
		if chi2Try < chi2 {
			copy(x, xTry)
			chi2 = chi2Try
			if err := prob.eval(x, r, jac); err != nil {
				return lsqResult{}, err
			}
			lambda = max(lambda/10, 1e-12)
			if scaled < lmStepTol {
				res.converged, res.reason = true, "converged"
				break
			}
			continue
		}
		if scaled < lmStepTol {
			res.converged, res.reason = true, "converged (no smaller chi^2 nearby)"
			break
		}
		lambda *= 10
		if lambda > 1e16 {
			res.reason = "no step lowers chi^2 (damping limit reached)"
			break
		}
	}
	res.x, res.chi2, res.jac = x, chi2, jac
	res.atBound = make([]bool, k)
	for j := range k {
		res.atBound[j] = x[j] == prob.lower[j] || x[j] == prob.upper[j]
	}
	return res, nil
}

func clamp(v, lo, hi float64) float64 { return min(max(v, lo), hi) }

// pinnedAtBound reports whether a parameter at a bound would leave it
// along the steepest descent of chi^2: the gradient component 2 J_j . r is
// positive at a lower bound or negative at an upper one.
func pinnedAtBound(x, lo, hi float64, col mat.Vector, r []float64) bool {
	if x != lo && x != hi {
		return false
	}
	g := mat.Dot(col, mat.NewVecDense(len(r), r))
	return (x == lo && g > 0) || (x == hi && g < 0)
}

func sumSq(r []float64) float64 {
	var s float64
	for _, v := range r {
		s += v * v
	}
	return s
}
