package cluster

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/lapack/gonum"
)

// eigenvalueWork is the workspace of the eigenvalue-only solvers.
type eigenvalueWork struct {
	sub, tau, work, tmp []float64
}

// errTridiagValues reports a tridiagonal eigenvalue iteration that did
// not converge.
var errTridiagValues = errors.New("cluster: tridiagonal eigenvalue iteration did not converge")

// realValues stores the eigenvalues of the real symmetric d×d matrix a
// (destroyed) in values, ascending. The matrix is reduced to tridiagonal
// form without accumulating the transformation (LAPACK Dsytd2, or the
// blocked Dsytrd above smallReductionDim, whose small-block Dgemm
// overhead the unblocked one avoids), and the tridiagonal eigenvalues come
// from the root-free QL/QR of Pal, Walker and Kahan (LAPACK Dsterf): no
// eigenvector is ever formed.
func (w *eigenvalueWork) realValues(d int, a, values []float64) error {
	if d == 1 {
		values[0] = a[0]
		return nil
	}
	var impl gonum.Implementation
	w.sub = grow(w.sub, d)
	w.tau = grow(w.tau, d)
	if d <= smallReductionDim {
		impl.Dsytd2(blas.Lower, d, a, d, values, w.sub, w.tau)
	} else {
		w.work = grow(w.work, 1)
		impl.Dsytrd(blas.Lower, d, a, d, values, w.sub, w.tau, w.work, -1)
		w.work = grow(w.work, max(int(w.work[0]), d))
		impl.Dsytrd(blas.Lower, d, a, d, values, w.sub, w.tau, w.work, len(w.work))
	}
	if !impl.Dsterf(d, values, w.sub) {
		return errTridiagValues
	}
	return nil
}

// hermitianValues stores the eigenvalues of the Hermitian d×d matrix with
// real and imaginary parts ar and ai (destroyed) in values, ascending:
// the complex Householder reduction of eigen_hermitian.go, whose complex
// subdiagonal has the moduli of a real tridiagonal matrix with the same
// eigenvalues (the phases are a diagonal unitary similarity), then Dsterf.
func (w *eigenvalueWork) hermitianValues(d int, ar, ai, values []float64) error {
	if d == 1 {
		values[0] = ar[0]
		return nil
	}
	w.sub = grow(w.sub, d)
	w.tau = grow(w.tau, d)
	w.tmp = grow(w.tmp, 6*d)
	er, ei := w.tmp[4*d:5*d], w.tmp[5*d:]
	tridiagonalize(d, ar, ai, values, er, ei, w.tau, w.tmp[:4*d])
	for k := 0; k < d-1; k++ {
		w.sub[k] = math.Hypot(er[k], ei[k])
	}
	var impl gonum.Implementation
	if !impl.Dsterf(d, values, w.sub) {
		return errTridiagValues
	}
	return nil
}
