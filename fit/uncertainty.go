package fit

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"warmfit/cluster"
)

// Error bars by the delta method. At the solution A^T <E>(A theta) =
// A^T e, so a perturbation de of the data moves the parameters by
// dtheta = (A^T R A)^{-1} A^T de with R = d<E>/d lambda (negative
// semidefinite). With P = -A^T R A (positive definite),
//
//	Cov(theta) = M Cov(e) M^T,  M = (A^T R A)^{-1} A^T = -P^{-1} A^T,
//	           = P^{-1} (A^T Cov(e) A) P^{-1},
//
// the sign of M dropping out of the covariance but not out of dtheta
// (propagate uses it).

// paramVariances returns diag(P^{-1} B P^{-1}) for positive definite P and
// positive semidefinite B (both in parameter space), and a word saying how
// it was computed. Up to denseLimit parameters it factorises P densely
// (Cholesky); beyond, it solves P x = u_q by conjugate gradients for every
// unit vector u_q on a neighbourhood of q large enough for an estimated
// relative accuracy of 1e-5 (localVariances), blocks of parameters in
// parallel, each task writing its own slots.
//
// order lists the parameters with neighbours close together (nil: as
// numbered); it only groups the local solves.
func paramVariances(p, b *cluster.SparseSym, denseLimit, workers int, order []int) ([]float64, string, error) {
	if p.Dim() <= denseLimit {
		v, err := denseVariances(p, b)
		return v, "dense Cholesky", err
	}
	v, err := localVariances(p, b, workers, order)
	return v, "local conjugate-gradient solves", err
}

func denseVariances(p, b *cluster.SparseSym) ([]float64, error) {
	n := p.Dim()
	var chol mat.Cholesky
	if ok := chol.Factorize(p.SymDense()); !ok {
		return nil, fmt.Errorf("the Hessian of the dual at the solution is not positive definite: some parameters are not determined by the data, or the expansion order is too low for this temperature")
	}
	if c := chol.Cond(); c > 1e14 {
		return nil, fmt.Errorf("the Hessian of the dual at the solution is singular to working precision (condition number %.2g): some parameters are not determined by the data", c)
	}
	var inv mat.SymDense
	if err := chol.InverseTo(&inv); err != nil {
		return nil, fmt.Errorf("inverting the Hessian: %v", err)
	}
	raw := inv.RawSymmetric()
	// inv is stored upper-triangular; copy to full rows for the sums.
	full := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			v := raw.Data[i*raw.Stride+j]
			full[i*n+j] = v
			full[j*n+i] = v
		}
	}
	// var_q = sum_{j,k} Pinv[q,j] B[j,k] Pinv[k,q]
	//       = sum_{j,k} B[j,k] Pinv[j,q] Pinv[k,q].
	vars := make([]float64, n)
	for j := 0; j < n; j++ {
		rj := full[j*n : (j+1)*n]
		cols, bvals := b.Row(j)
		for e, k32 := range cols {
			k, bv := int(k32), bvals[e]
			rk := full[k*n : (k+1)*n]
			for q := range vars {
				vars[q] += bv * rj[q] * rk[q]
			}
		}
	}
	return checkVariances(vars)
}

// errCovarianceNotPSD reports a data covariance that gives a negative
// variance.
var errCovarianceNotPSD = errors.New("the data covariance is not positive semidefinite")

// checkVariances turns rounding-level negative variances into zero and
// refuses real ones (a covariance estimate that is not positive
// semidefinite) and non-numbers.
func checkVariances(vars []float64) ([]float64, error) {
	scale := 0.0
	for _, v := range vars {
		scale = math.Max(scale, math.Abs(v))
	}
	for q, v := range vars {
		switch {
		case math.IsNaN(v) || math.IsInf(v, 0):
			return nil, fmt.Errorf("variance of parameter %d is %v", q, v)
		case v < 0 && v >= -1e-10*scale:
			vars[q] = 0
		case v < 0:
			return nil, fmt.Errorf("variance of parameter %d is negative (%.3g): %w", q, v, errCovarianceNotPSD)
		}
	}
	return vars, nil
}

// propagate returns the first-order change of the parameters for a change
// de of the data: dtheta = M de = (A^T R A)^{-1} A^T de = -P^{-1} A^T de.
func propagate(params *Params, p *cluster.SparseSym, de []float64) ([]float64, error) {
	rhs := make([]float64, params.NumParams())
	params.Reduce(rhs, de)
	x := make([]float64, len(rhs))
	if _, err := solveCG(p, p.Diag(), rhs, x, 1e-12, 10*len(rhs)+100); err != nil {
		return nil, err
	}
	for i := range x {
		x[i] = -x[i]
	}
	return x, nil
}

// chiSquare is the goodness of fit of tied parameters: the residuals
// r = e - <E> at the solution weighted by the data variances (diagonal
// approximation: the covariances between estimates are ignored).
type chiSquare struct {
	Value float64
	Dof   int
}

// residualChiSquare sums r_k^2/stderr_k^2 over terms with noisy data;
// dof = those terms minus the parameters fitted from them. It returns
// ok = false when there are no degrees of freedom.
func residualChiSquare(params *Params, values, stderr, expect []float64) (chiSquare, bool) {
	var c chiSquare
	noisy := 0
	for k, s := range stderr {
		if s > 0 {
			r := values[k] - expect[k]
			c.Value += r * r / (s * s)
			noisy++
		}
	}
	nparam := 0
	for _, m := range params.Members {
		all := true
		for _, k := range m {
			if stderr[k] <= 0 {
				all = false
			}
		}
		if all {
			nparam++
		}
	}
	c.Dof = noisy - nparam
	return c, c.Dof > 0
}
