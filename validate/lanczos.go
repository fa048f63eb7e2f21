package validate

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// spectralBounds estimates an interval [lo, hi] containing the spectrum
// of H by the Lanczos method (Lanczos 1950; Golub & Van Loan, Matrix
// Computations, ch. 10) from a random start vector, using the vectors a
// and b as workspace (their content is destroyed). The extreme Ritz values
// lie inside the spectrum; each is widened by its residual bound
// |beta_m s_m| = |H y - theta y|, within which some eigenvalue lies
// (Parlett, The Symmetric Eigenvalue Problem, 1980), and by a safety margin
// of 1% of the width, then clipped to the rigorous bound [-Norm1, Norm1].
// The Chebyshev recurrence verifies the result (chebyshev.go).
//
// No reorthogonalisation is done: loss of orthogonality only creates
// copies of converged Ritz values, never spurious extreme ones.
func spectralBounds(o *vecOps, a, b stateVec, seed uint64) (lo, hi float64, steps int, err error) {
	norm1 := o.op.Norm1()
	if norm1 == 0 {
		return 0, 0, 0, nil
	}
	const (
		maxSteps = 120
		checkAt  = 8     // test convergence every checkAt steps
		relTol   = 0.005 // residual bound relative to the width
		margin   = 0.01  // safety margin relative to the width
	)
	dim := o.op.Dim()
	o.random(a, seed, lanczosStream)
	_, n2 := o.dot(a, a)
	o.scaleTo(a, 1/math.Sqrt(n2), a)
	var alphas, betas []float64 // betas[j] couples steps j and j+1
	v, prev := a, b
	beta := 0.0
	for j := 0; j < min(maxSteps, dim); j++ {
		// w = H v - beta prev, written over prev.
		o.step(prev, v, stateVec{}, 1, 0, -beta, 0)
		alpha, _ := o.dot(v, prev)
		nw := o.axpby(-alpha, v, 1, prev)
		alphas = append(alphas, alpha)
		beta = math.Sqrt(nw)
		steps = j + 1
		invariant := beta <= 1e-12*norm1
		if invariant || steps%checkAt == 0 || steps == min(maxSteps, dim) {
			tlo, thi, rlo, rhi, err := ritzExtremes(alphas, betas, beta)
			if err != nil {
				return 0, 0, steps, err
			}
			width := thi - tlo
			if invariant || (rlo <= relTol*width && rhi <= relTol*width) || steps == min(maxSteps, dim) {
				lo = max(tlo-rlo-margin*width, -norm1)
				hi = min(thi+rhi+margin*width, norm1)
				if !(hi > lo) {
					// A one-point spectrum cannot happen for traceless H
					// with a nonzero term; fall back to the rigorous bound.
					return -norm1, norm1, steps, nil
				}
				return lo, hi, steps, nil
			}
		}
		betas = append(betas, beta)
		o.scaleTo(prev, 1/beta, prev)
		v, prev = prev, v
	}
	return -norm1, norm1, steps, nil
}

// lanczosStream tags the random stream of the Lanczos start vector, apart
// from those of the typicality vectors.
const lanczosStream = 1 << 62

// ritzExtremes diagonalises the Lanczos tridiagonal matrix and returns its
// smallest and largest eigenvalues with their residual bounds
// |next * (last component of the Ritz vector)|.
func ritzExtremes(alphas, betas []float64, next float64) (tlo, thi, rlo, rhi float64, err error) {
	m := len(alphas)
	t := mat.NewSymDense(m, nil)
	for i, a := range alphas {
		t.SetSym(i, i, a)
	}
	for i, b := range betas {
		t.SetSym(i, i+1, b)
	}
	var eig mat.EigenSym
	if !eig.Factorize(t, true) {
		return 0, 0, 0, 0, fmt.Errorf("validate: Lanczos tridiagonal eigensolver failed at %d steps", m)
	}
	vals := eig.Values(nil)
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	// Values are ascending.
	tlo, thi = vals[0], vals[m-1]
	rlo = math.Abs(next * vecs.At(m-1, 0))
	rhi = math.Abs(next * vecs.At(m-1, m-1))
	return tlo, thi, rlo, rhi, nil
}
