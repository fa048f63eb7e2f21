package cluster

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/lapack/gonum"
)

// MaxDenseQubits is the largest number of qubits Diagonalize accepts. A
// dense Hermitian problem on 12 qubits holds five 4096×4096 float64
// matrices (670 MB) and takes minutes; larger systems need matrix-free
// thermal typicality (package validate).
const MaxDenseQubits = 12

// Spectrum is the complete eigendecomposition H = V diag(E) V^† of a
// Hamiltonian: eigenvalues in ascending order and orthonormal eigenvectors.
//
// Eigenvectors are stored as columns of a row-major Dim×Dim matrix, real
// when the Hamiltonian matrix is real and as separate real and imaginary
// parts otherwise, so that all later products run through real BLAS.
//
// A Spectrum keeps its workspace: Factorize on the same value reuses the
// memory, which matters when millions of small clusters are diagonalised.
// A Spectrum is not safe for concurrent modification.
type Spectrum struct {
	nq, dim int
	real    bool
	values  []float64
	// vecs holds V row-major: vecs[b*dim+k] is component b of eigenvector k.
	// In the complex case vecs[dim*dim:] holds the imaginary parts.
	vecs []float64

	work    []float64 // LAPACK workspace
	scratch []float64 // Hermitian path: the second 2·dim² buffer
	z       []float64 // Hermitian path: tridiagonal eigenvectors
	diag    []float64 // Hermitian path: tridiagonal, reflector scales, phases
	sub     []float64
	tau     []float64
	phase   []float64
	tmp     []float64
}

// Diagonalize returns the spectrum of h. Terms with an odd number of Y
// letters and a nonzero coefficient make the matrix complex; otherwise
// the real symmetric solver is used. It refuses more than MaxDenseQubits
// qubits before allocating anything.
func Diagonalize(h *Hamiltonian) (*Spectrum, error) {
	var s Spectrum
	if err := s.Factorize(h); err != nil {
		return nil, err
	}
	return &s, nil
}

// Factorize computes the spectrum of h into s, reusing the memory of s.
// Any Thermal built on s becomes invalid.
//
// Real matrices are reduced to tridiagonal form by LAPACK Dsytrd (gonum).
// Complex Hermitian matrices are reduced to a real symmetric tridiagonal
// matrix by Householder reflections and a diagonal phase transformation;
// see eigen_hermitian.go for why this was chosen over the real 2D×2D
// embedding. Both then use the implicit QL solver of eigen_tridiag.go.
func (s *Spectrum) Factorize(h *Hamiltonian) error {
	if h.NumQubits > MaxDenseQubits {
		return fmt.Errorf("cluster: %d qubits exceed the dense diagonalisation limit of %d (MaxDenseQubits); use the matrix-free thermal typicality of package validate for larger systems",
			h.NumQubits, MaxDenseQubits)
	}
	if err := h.check(); err != nil {
		return err
	}
	s.nq = h.NumQubits
	s.dim = h.Dim()
	s.real = h.realMatrix()
	d := s.dim
	s.values = grow(s.values, d)
	var err error
	if s.real {
		s.vecs = grow(s.vecs, d*d)
		h.fillReal(s.vecs)
		err = s.solveReal()
	} else {
		s.vecs = grow(s.vecs, 2*d*d)
		h.fillComplex(s.vecs[:d*d], s.vecs[d*d:])
		err = s.solveHermitian()
	}
	if err != nil {
		return err
	}
	for _, v := range s.values {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return errors.New("cluster: eigenvalue is not finite")
		}
	}
	snapDegenerate(s.values)
	return nil
}

// snapDegenerate replaces each run of eigenvalues closer than the solver's
// rounding error (64 eps max|E|) by its mean. Exact degeneracies come out
// of the solver split by a few eps·|E|, and at large beta that split would
// weight the members of a multiplet unequally (by exp(beta·split)),
// breaking symmetries of expectations; levels that close cannot be
// resolved numerically anyway.
func snapDegenerate(vals []float64) {
	n := len(vals)
	if n < 2 {
		return
	}
	tol := 64 * 0x1p-52 * math.Max(math.Abs(vals[0]), math.Abs(vals[n-1]))
	for i := 0; i < n; {
		j := i + 1
		sum := vals[i]
		for j < n && vals[j]-vals[j-1] <= tol {
			sum += vals[j]
			j++
		}
		if j-i > 1 {
			mean := sum / float64(j-i)
			for k := i; k < j; k++ {
				vals[k] = mean
			}
		}
		i = j
	}
}

// solveReal diagonalises the real symmetric matrix in s.vecs: LAPACK
// Dsytrd and Dorgtr (gonum) reduce it to tridiagonal form, and the
// tridiagonal problem is solved by implicit QL on the rows of Q^T (see
// tridiagEigen for why not Dsteqr).
func (s *Spectrum) solveReal() error {
	d := s.dim
	a := s.vecs
	if d == 1 {
		s.values[0] = a[0]
		a[0] = 1
		return nil
	}
	if d <= smallReductionDim {
		s.sub = grow(s.sub, d)
		householderReduce(d, a, s.values, s.sub)
		s.z = grow(s.z, d*d)
		transpose(d, s.z, a)
		if err := tridiagEigen(d, s.values, s.sub, s.z); err != nil {
			return err
		}
		transpose(d, a, s.z)
		return nil
	}
	var impl gonum.Implementation
	s.sub = grow(s.sub, d)
	s.tau = grow(s.tau, d)
	s.work = grow(s.work, 1)
	impl.Dsytrd(blas.Upper, d, a, d, s.values, s.sub, s.tau, s.work, -1)
	lwork := int(s.work[0])
	impl.Dorgtr(blas.Upper, d, a, d, s.tau, s.work, -1)
	lwork = max(lwork, int(s.work[0]), d)
	s.work = grow(s.work, lwork)
	impl.Dsytrd(blas.Upper, d, a, d, s.values, s.sub, s.tau, s.work, lwork)
	impl.Dorgtr(blas.Upper, d, a, d, s.tau, s.work, lwork)
	s.z = grow(s.z, d*d)
	transpose(d, s.z, a)
	if err := tridiagEigen(d, s.values, s.sub, s.z); err != nil {
		return err
	}
	transpose(d, a, s.z)
	return nil
}

// transpose writes the transpose of the n×n matrix src into dst.
func transpose(n int, dst, src []float64) {
	const blk = 32
	for i0 := 0; i0 < n; i0 += blk {
		for j0 := 0; j0 < n; j0 += blk {
			for i := i0; i < min(i0+blk, n); i++ {
				for j := j0; j < min(j0+blk, n); j++ {
					dst[j*n+i] = src[i*n+j]
				}
			}
		}
	}
}

// NumQubits returns the number of qubits of the diagonalised Hamiltonian.
func (s *Spectrum) NumQubits() int { return s.nq }

// Dim returns the Hilbert space dimension.
func (s *Spectrum) Dim() int { return s.dim }

// IsReal reports whether the eigenvectors are real.
func (s *Spectrum) IsReal() bool { return s.real }

// Values returns a copy of the eigenvalues in ascending order.
func (s *Spectrum) Values() []float64 {
	return append([]float64(nil), s.values...)
}

// Vector stores eigenvector k (the eigenvector of Values()[k]) in dst,
// which is allocated when it is too short, and returns it. Component b is
// the amplitude of the computational basis state whose bit q is qubit q.
func (s *Spectrum) Vector(k int, dst []complex128) []complex128 {
	if k < 0 || k >= s.dim {
		panic(fmt.Sprintf("cluster: eigenvector %d out of range [0,%d)", k, s.dim))
	}
	d := s.dim
	if cap(dst) < d {
		dst = make([]complex128, d)
	}
	dst = dst[:d]
	for b := range dst {
		re := s.vecs[b*d+k]
		im := 0.0
		if !s.real {
			im = s.vecs[d*d+b*d+k]
		}
		dst[b] = complex(re, im)
	}
	return dst
}

// grow returns buf resliced to length n, reallocating when it is too short.
func grow(buf []float64, n int) []float64 {
	if cap(buf) < n {
		return make([]float64, n)
	}
	return buf[:n]
}
