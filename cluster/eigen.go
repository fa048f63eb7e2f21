package cluster

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"slices"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/lapack/gonum"
)

// MaxDenseQubits is the largest number of qubits Diagonalize accepts. A
// dense Hermitian problem on 12 qubits holds five 4096×4096 float64
// matrices (670 MB) and takes minutes; larger systems need matrix-free
// thermal typicality (package validate).
const MaxDenseQubits = 12

// Spectrum is the complete eigendecomposition H = V diag(E) V^† of a
// Hamiltonian: eigenvalues and orthonormal eigenvectors.
//
// When H has a Symmetry, the decomposition is block-sparse: H is written
// in the symmetry's frame, the basis states are grouped into sectors, and
// each sector is diagonalised on its own, so that V is block diagonal in
// the frame's basis and every eigenvector lies in one sector. Within a
// sector, eigenvectors are stored as the columns of a row-major d×d
// matrix, real when the Hamiltonian matrix (in the frame) is real and as
// separate real and imaginary parts otherwise, so that all later products
// run through real BLAS. Without a symmetry there is one sector holding
// every basis state in order.
//
// A Spectrum keeps its workspace: Factorize on the same value reuses the
// memory, which matters when millions of small clusters are diagonalised.
// A Spectrum is not safe for concurrent modification.
type Spectrum struct {
	blocks
	dim int
	// values holds the eigenvalues sector by sector, ascending within
	// each sector; level j of sector s is values[basis.start[s]+j].
	values []float64
	// vecs holds the eigenvectors of sector s from vecOff[s]: row-major
	// d×d, vecs[vecOff[s]+i*d+j] is component i (the sector's i-th basis
	// state) of its level j, followed in the complex case by the d×d
	// imaginary parts.
	vecs   []float64
	vecOff []int
	// rank[k] is the position in values of the k-th lowest level.
	rank []int32

	work    []float64 // LAPACK workspace
	scratch []float64 // Hermitian path: the second 2·d² buffer
	z       []float64 // Hermitian path: tridiagonal eigenvectors
	sub     []float64
	tau     []float64
	phase   []float64
	tmp     []float64
	sorted  []float64 // levels in ascending order, for snapDegenerate
}

// Diagonalize returns the spectrum of h, in the blocks of the symmetry
// DetectSymmetry finds. Terms with an odd number of Y letters (in the
// symmetry's frame) and a nonzero coefficient make the matrix complex;
// otherwise the real symmetric solver is used. It refuses more than
// MaxDenseQubits qubits before allocating anything.
func Diagonalize(h *Hamiltonian) (*Spectrum, error) {
	var s Spectrum
	if err := s.Factorize(h); err != nil {
		return nil, err
	}
	return &s, nil
}

// Factorize computes the spectrum of h into s, reusing the memory of s,
// in the blocks of the symmetry DetectSymmetry finds. Any Thermal built
// on s becomes invalid.
//
// Real matrices are reduced to tridiagonal form by LAPACK Dsytrd (gonum).
// Complex Hermitian matrices are reduced to a real symmetric tridiagonal
// matrix by Householder reflections and a diagonal phase transformation;
// see eigen_hermitian.go for why this was chosen over the real 2D×2D
// embedding. Both then use the implicit QL solver of eigen_tridiag.go.
func (s *Spectrum) Factorize(h *Hamiltonian) error {
	if err := h.check(); err != nil {
		return err
	}
	return s.FactorizeWith(h, DetectSymmetry(h))
}

// FactorizeWith is Factorize in the blocks of sym; NoSymmetry gives the
// dense decomposition. It returns an error when h does not have sym.
func (s *Spectrum) FactorizeWith(h *Hamiltonian, sym Symmetry) error {
	hf, err := s.setup(h, sym)
	if err != nil {
		return err
	}
	bb := s.basis()
	s.dim = h.Dim()
	s.values = grow(s.values, s.dim)
	parts := 1
	if !s.real {
		parts = 2
	}
	s.vecOff = s.vecOff[:0]
	total := 0
	for sec := 0; sec < bb.numSectors(); sec++ {
		s.vecOff = append(s.vecOff, total)
		total += parts * bb.dim(sec) * bb.dim(sec)
	}
	s.vecs = grow(s.vecs, total)
	for sec := 0; sec < bb.numSectors(); sec++ {
		d := bb.dim(sec)
		vals := s.values[bb.start[sec] : bb.start[sec]+d]
		v := s.vecs[s.vecOff[sec] : s.vecOff[sec]+parts*d*d]
		if s.real {
			bb.fillReal(hf, sec, v)
			err = s.solveReal(d, v, vals)
		} else {
			bb.fillComplex(hf, sec, v[:d*d], v[d*d:])
			err = s.solveHermitian(d, v, vals)
		}
		if err != nil {
			return err
		}
	}
	for _, v := range s.values {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return errors.New("cluster: eigenvalue is not finite")
		}
	}
	s.rankLevels()
	return nil
}

// rankLevels orders the levels of all sectors and snaps degenerate runs
// across sectors as snapDegenerate does within one.
func (s *Spectrum) rankLevels() {
	d := s.dim
	if cap(s.rank) < d {
		s.rank = make([]int32, d)
	}
	s.rank = s.rank[:d]
	for k := range s.rank {
		s.rank[k] = int32(k)
	}
	if s.basis().numSectors() > 1 {
		vals := s.values
		slices.SortStableFunc(s.rank, func(a, b int32) int { return cmp.Compare(vals[a], vals[b]) })
	}
	s.sorted = grow(s.sorted, d)
	for k, i := range s.rank {
		s.sorted[k] = s.values[i]
	}
	snapDegenerate(s.sorted)
	for k, i := range s.rank {
		s.values[i] = s.sorted[k]
	}
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

// solveReal diagonalises the real symmetric d×d matrix a in place: on
// return values holds its eigenvalues in ascending order and a its
// eigenvectors as columns. LAPACK Dsytrd and Dorgtr (gonum) reduce it to
// tridiagonal form, and the tridiagonal problem is solved by implicit QL
// on the rows of Q^T (see tridiagEigen for why not Dsteqr).
func (s *Spectrum) solveReal(d int, a, values []float64) error {
	if d == 1 {
		values[0] = a[0]
		a[0] = 1
		return nil
	}
	s.sub = grow(s.sub, d)
	s.z = grow(s.z, d*d)
	if d <= smallReductionDim {
		householderReduce(d, a, values, s.sub)
	} else {
		var impl gonum.Implementation
		s.tau = grow(s.tau, d)
		s.work = grow(s.work, 1)
		impl.Dsytrd(blas.Upper, d, a, d, values, s.sub, s.tau, s.work, -1)
		lwork := int(s.work[0])
		impl.Dorgtr(blas.Upper, d, a, d, s.tau, s.work, -1)
		lwork = max(lwork, int(s.work[0]), d)
		s.work = grow(s.work, lwork)
		impl.Dsytrd(blas.Upper, d, a, d, values, s.sub, s.tau, s.work, lwork)
		impl.Dorgtr(blas.Upper, d, a, d, s.tau, s.work, lwork)
	}
	transpose(d, s.z, a)
	if err := tridiagEigen(d, values, s.sub, s.z); err != nil {
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

// IsReal reports whether the eigenvectors are real (in the frame of the
// symmetry; see Vector).
func (s *Spectrum) IsReal() bool { return s.real }

// Symmetry returns the symmetry whose blocks the spectrum was computed in.
func (s *Spectrum) Symmetry() Symmetry { return s.sym }

// Values returns a copy of the eigenvalues in ascending order.
func (s *Spectrum) Values() []float64 {
	out := make([]float64, s.dim)
	for k, i := range s.rank {
		out[k] = s.values[i]
	}
	return out
}

// Vector stores eigenvector k (the eigenvector of Values()[k]) in dst,
// which is allocated when it is too short, and returns it. Component b is
// the amplitude of the computational basis state whose bit q is qubit q;
// eigenvectors computed in a rotated frame (ParityX, ParityY) are rotated
// back, at a cost of O(NumQubits · Dim).
func (s *Spectrum) Vector(k int, dst []complex128) []complex128 {
	if k < 0 || k >= s.dim {
		panic(fmt.Sprintf("cluster: eigenvector %d out of range [0,%d)", k, s.dim))
	}
	bb := s.basis()
	i := int(s.rank[k])
	sec := int(bb.sector[bb.states[i]]) // values and states share the grouping
	d, j := bb.dim(sec), i-bb.start[sec]
	if cap(dst) < s.dim {
		dst = make([]complex128, s.dim)
	}
	dst = dst[:s.dim]
	clear(dst)
	v := s.vecs[s.vecOff[sec]:]
	for r, b := range bb.states[bb.start[sec]:bb.start[sec+1]] {
		im := 0.0
		if !s.real {
			im = v[d*d+r*d+j]
		}
		dst[b] = complex(v[r*d+j], im)
	}
	if u, ok := s.sym.frameUnitary(); ok {
		rotateBack(s.nq, u, dst)
	}
	return dst
}

// rotateBack applies (U^†)^{⊗n} to the state vector v, undoing the frame
// change H -> U^{⊗n} H U^{†⊗n}.
func rotateBack(n int, u [2][2]complex128, v []complex128) {
	a, b := cmplx.Conj(u[0][0]), cmplx.Conj(u[1][0])
	c, d := cmplx.Conj(u[0][1]), cmplx.Conj(u[1][1])
	for q := 0; q < n; q++ {
		bit := 1 << uint(q)
		for i := range v {
			if i&bit != 0 {
				continue
			}
			x0, x1 := v[i], v[i|bit]
			v[i], v[i|bit] = a*x0+b*x1, c*x0+d*x1
		}
	}
}

// grow returns buf resliced to length n, reallocating when it is too short.
func grow(buf []float64, n int) []float64 {
	if cap(buf) < n {
		return make([]float64, n)
	}
	return buf[:n]
}
