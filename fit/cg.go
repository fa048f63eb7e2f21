package fit

import (
	"errors"
	"math"

	"warmfit/cluster"
)

// errNotPositive reports a search direction of non-positive curvature met
// by conjugate gradients: the matrix is not positive definite.
var errNotPositive = errors.New("matrix is not positive definite")

// cgResult describes one conjugate-gradient solve.
type cgResult struct {
	Iterations int
	Residual   float64 // final ||b - M x|| / ||b||
	// Curvature is true when a direction of non-positive curvature
	// stopped the iteration; x then holds the last iterate before it.
	Curvature bool
}

// solveCG solves M x = b for a symmetric positive definite M by conjugate
// gradients with the Jacobi (diagonal) preconditioner, starting from
// x = 0, until ||b - M x|| <= tol ||b|| or maxIter steps (Hestenes and
// Stiefel 1952; preconditioned form as in Saad, Iterative Methods for
// Sparse Linear Systems, Alg. 9.1). Diagonal entries that are not positive
// are treated as 1. It returns errNotPositive (with x the last iterate)
// when M shows non-positive curvature, and an error when the residual did
// not reach tol.
func solveCG(m *cluster.SparseSym, diag, b, x []float64, tol float64, maxIter int) (cgResult, error) {
	n := m.Dim()
	for i := range x {
		x[i] = 0
	}
	bnorm := norm2(b)
	if bnorm == 0 {
		return cgResult{}, nil
	}
	r := append([]float64(nil), b...)
	z := make([]float64, n)
	p := make([]float64, n)
	q := make([]float64, n)
	precond := func(dst, src []float64) {
		for i, v := range src {
			if d := diag[i]; d > 0 {
				dst[i] = v / d
			} else {
				dst[i] = v
			}
		}
	}
	precond(z, r)
	copy(p, z)
	rz := dot(r, z)
	var res cgResult
	for it := 1; it <= maxIter; it++ {
		m.MulVec(q, p)
		pq := dot(p, q)
		if !(pq > 0) {
			res.Iterations = it - 1
			res.Residual = norm2(r) / bnorm
			res.Curvature = true
			return res, errNotPositive
		}
		alpha := rz / pq
		for i := range x {
			x[i] += alpha * p[i]
			r[i] -= alpha * q[i]
		}
		res.Iterations = it
		res.Residual = norm2(r) / bnorm
		if res.Residual <= tol {
			return res, nil
		}
		precond(z, r)
		rzNew := dot(r, z)
		beta := rzNew / rz
		rz = rzNew
		for i := range p {
			p[i] = z[i] + beta*p[i]
		}
	}
	if math.IsNaN(res.Residual) {
		return res, errors.New("conjugate gradients produced NaN")
	}
	return res, errors.New("conjugate gradients did not reach the tolerance")
}

func dot(a, b []float64) float64 {
	var s float64
	for i, v := range a {
		s += v * b[i]
	}
	return s
}

func norm2(a []float64) float64 { return math.Sqrt(dot(a, a)) }

func maxAbs(a []float64) float64 {
	var m float64
	for _, v := range a {
		m = math.Max(m, math.Abs(v))
	}
	return m
}
