package cluster

import (
	"errors"
	"fmt"
	"math"
	"math/bits"
)

// Block diagonalisation of one cluster of a model that conserves the total
// S^z. The basis states with k up spins... precisely, k set bits (Z = -1,
// S^z = -1/2, on each set bit) span the sector m = n/2 - k; the cluster
// Hamiltonian maps it to itself, so its spectrum is the union of the
// sector spectra. When the spin flip F = prod X commutes with H0 the
// sector -m is the image of m with the same energies, and the m = 0 sector
// splits into F-even and F-odd blocks spanned by (|b> ± |b̄>)/sqrt 2 for
// the states b below their complement b̄. Their matrix elements are
// <r'±|A|r±> = <r'|A|r> ± <r̄'|A|r> for any A commuting with F (derived
// from F A F = A).

// levelSet is the spectrum of one cluster: zero-field energies, the S^z
// eigenvalue of each level and, when asked for, the Hellmann–Feynman
// elements d[p][n] = <n|H_p|n>, all in one eigenbasis of H0 that is also
// an eigenbasis of S^z. Spin-flip images are listed as levels of their own.
type levelSet struct {
	e0, m []float64
	d     [][]float64
}

func (ls *levelSet) reset(couplings int, withD bool) {
	ls.e0, ls.m = ls.e0[:0], ls.m[:0]
	if !withD {
		ls.d = nil
		return
	}
	if len(ls.d) != couplings {
		ls.d = make([][]float64, couplings)
	}
	for p := range ls.d {
		ls.d[p] = ls.d[p][:0]
	}
}

// sectorWork is one worker's scratch space for block diagonalisation.
type sectorWork struct {
	idx    []int32        // basis state -> position in the current block
	states []uint64       // block basis (representatives when split by F)
	spec   Spectrum       // workspace of the solvers with eigenvectors
	eig    eigenvalueWork // workspace of the eigenvalue-only solvers
	real   bool           // the current block's matrix is real
	values []float64      // its eigenvalues
	// vecs holds the block's matrix, then its eigenvectors as columns
	// (row-major d×d, imaginary parts in a second d×d when complex).
	vecs []float64
	dk   []float64   // Hellmann–Feynman elements of the current block
	dks  [][]float64 // the same, kept per coupling
	// Scratch of the isotropic blocks (uniform_su2.go): a row, the
	// matrix of one transposition, H_p and H_p V.
	tmp, span, hp, hv []float64
}

// u1Block is one block: states with a fixed number of set bits, split by
// spin-flip parity (+1 or -1) or not (0).
type u1Block struct {
	n, ones, parity int
}

func (b u1Block) magnetization() float64 { return float64(b.n)/2 - float64(b.ones) }

// u1Blocks lists the blocks to diagonalise and whether each has a
// spin-flipped image sector to be listed as well.
func u1Blocks(n int, flip bool) (blocks []u1Block, image []bool) {
	for k := 0; k <= n; k++ {
		switch {
		case flip && 2*k == n:
			blocks = append(blocks, u1Block{n, k, 1}, u1Block{n, k, -1})
			image = append(image, false, false)
		case flip && 2*k > n:
		default:
			blocks = append(blocks, u1Block{n, k, 0})
			image = append(image, flip)
		}
	}
	return blocks, image
}

func binomial(n, k int) int {
	r := 1
	for j := 1; j <= k; j++ {
		r = r * (n - k + j) / j
	}
	return r
}

// basis fills w.states with the block's basis in ascending order and
// w.idx with their positions.
func (w *sectorWork) basis(b u1Block) int {
	full := uint64(1)<<uint(b.n) - 1
	return w.fillBasis(b.n, b.ones, func(s uint64) bool { return b.parity == 0 || s < s^full })
}

// fillBasis fills w.states with the n-bit masks of ones set bits that keep
// accepts, in ascending order, and w.idx with their positions: the one
// enumeration behind the S^z blocks and the total-spin tableaux.
func (w *sectorWork) fillBasis(n, ones int, keep func(uint64) bool) int {
	if len(w.idx) < 1<<n {
		w.idx = make([]int32, 1<<n)
	}
	w.states = w.states[:0]
	if ones == 0 {
		w.idx[0] = 0
		w.states = append(w.states, 0)
		return 1
	}
	full := uint64(1)<<uint(n) - 1
	// Gosper's hack walks the masks with ones set bits in order.
	for s := uint64(1)<<uint(ones) - 1; s <= full; {
		if keep(s) {
			w.idx[s] = int32(len(w.states))
			w.states = append(w.states, s)
		}
		c := s & -s
		r := s + c
		s = (((r ^ s) >> 2) / c) | r
	}
	return len(w.states)
}

// eachElement calls f(i, j, re, im) for every contribution of ops to the
// block matrix element <i|A|j> in the current basis. Images outside the
// block (parts of individual Pauli strings that the sum conserving S^z
// cancels, or that a coupling breaking it contributes off the block) are
// dropped: only the block of A is wanted.
func (w *sectorWork) eachElement(b u1Block, ops []weightedOp, f func(i, j int, re, im float64)) {
	full := uint64(1)<<uint(b.n) - 1
	for j, s := range w.states {
		for _, o := range ops {
			t := s ^ o.op.X
			if bits.OnesCount64(t) != b.ones {
				continue
			}
			sign := 1.0
			if b.parity != 0 {
				if c := t ^ full; c < t {
					t = c
					sign = float64(b.parity)
				}
			}
			z := iPow(o.op.phaseExp(s))
			v := sign * o.c
			f(int(w.idx[t]), j, v*real(z), v*imag(z))
		}
	}
}

// u1Levels appends the levels of a cluster of n sites to ls, block by
// block. h0 is the zero-field Hamiltonian, ops[p] the coupling operators;
// with withD the Hellmann–Feynman elements are computed, from eigenvectors
// unless values has a single non-zero coupling (then <n|H_0|n> = E_n /
// value_0, no eigenvectors needed).
func (w *sectorWork) u1Levels(ls *levelSet, n int, h0 []weightedOp, ops [][]weightedOp, values []float64, sym *uniformSymmetry, withD bool) error {
	ls.reset(len(ops), withD)
	scaled := withD && len(ops) == 1 && values[0] != 0
	vectors := withD && !scaled && !sym.diagonal
	real := true
	for _, o := range h0 {
		real = real && o.op.IsReal()
	}
	for len(w.dks) < len(ops) {
		w.dks = append(w.dks, nil)
	}
	blocks, image := u1Blocks(n, sym.flip)
	for bi, b := range blocks {
		d := w.basis(b)
		vals, err := w.blockSpectrum(b, d, h0, real, sym.diagonal, vectors)
		if err != nil {
			return fmt.Errorf("block of %d states (S^z = %g): %v", d, b.magnetization(), err)
		}
		if withD {
			for p := range ops {
				w.dks[p] = append(w.dks[p][:0], w.blockElements(b, d, ops[p], vals, values, p, scaled, sym)...)
			}
		}
		copies := 1
		if image[bi] {
			copies = 2
		}
		for c := 0; c < copies; c++ {
			m := b.magnetization()
			if c == 1 {
				m = -m
			}
			for _, e := range vals {
				ls.e0 = append(ls.e0, e)
				ls.m = append(ls.m, m)
			}
			if !withD {
				continue
			}
			for p, dk := range w.dks[:len(ops)] {
				sign := 1.0
				if c == 1 {
					sign = sym.flipSign[p]
				}
				for _, x := range dk {
					ls.d[p] = append(ls.d[p], sign*x)
				}
			}
		}
	}
	return nil
}

// blockSpectrum returns the eigenvalues of H0 on the current block (in
// ascending order unless diagonal, in basis order then), leaving the
// eigenvectors in w.vecs when vectors is set. The dense solvers are the
// package's: Spectrum's for eigenvectors, eigenvalueWork's for
// eigenvalues alone.
func (w *sectorWork) blockSpectrum(b u1Block, d int, h0 []weightedOp, real, diagonal, vectors bool) ([]float64, error) {
	w.real = real
	w.values = grow(w.values, d)
	if diagonal {
		clear(w.values)
		w.eachElement(b, h0, func(i, j int, re, _ float64) {
			if i == j {
				w.values[i] += re
			}
		})
		return w.values, nil
	}
	size := d * d
	if !real {
		size *= 2
	}
	w.vecs = grow(w.vecs, size)
	clear(w.vecs)
	if real {
		w.eachElement(b, h0, func(i, j int, re, _ float64) { w.vecs[i*d+j] += re })
	} else {
		w.eachElement(b, h0, func(i, j int, re, im float64) {
			w.vecs[i*d+j] += re
			w.vecs[d*d+i*d+j] += im
		})
	}
	var err error
	switch {
	case vectors && real:
		err = w.spec.solveReal(d, w.vecs, w.values)
	case vectors:
		err = w.spec.solveHermitian(d, w.vecs, w.values)
	case real:
		err = w.eig.realValues(d, w.vecs, w.values)
	default:
		err = w.eig.hermitianValues(d, w.vecs[:d*d], w.vecs[d*d:], w.values)
	}
	if err != nil {
		return nil, err
	}
	for _, v := range w.values {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, errors.New("eigenvalue is not finite")
		}
	}
	return w.values, nil
}

// blockElements returns <k|H_p|k> for the eigenvectors k of the current
// block: E_k / value_p when scaled, the diagonal of H_p when H0 is
// diagonal (the basis states are eigenvectors), and otherwise
// sum_{ij} conj(V_ik) (H_p)_ij V_jk from the eigenvectors in w.vecs.
// An F-odd coupling has zero elements in an F-split block.
func (w *sectorWork) blockElements(b u1Block, d int, ops []weightedOp, vals, values []float64, p int, scaled bool, sym *uniformSymmetry) []float64 {
	w.dk = grow(w.dk, d)
	dk := w.dk
	clear(dk)
	switch {
	case scaled:
		for k, e := range vals {
			dk[k] = e / values[p]
		}
	case b.parity != 0 && sym.flipSign[p] < 0:
	case sym.diagonal:
		w.eachElement(b, ops, func(i, j int, re, _ float64) {
			if i == j {
				dk[i] += re
			}
		})
	case w.real:
		v := w.vecs
		w.eachElement(b, ops, func(i, j int, re, _ float64) {
			if re == 0 {
				return
			}
			vi, vj := v[i*d:i*d+d], v[j*d:j*d+d]
			for k := range dk {
				dk[k] += re * vi[k] * vj[k]
			}
		})
	default:
		v := w.vecs
		w.eachElement(b, ops, func(i, j int, re, im float64) {
			ir, ii := v[i*d:i*d+d], v[d*d+i*d:d*d+i*d+d]
			jr, ji := v[j*d:j*d+d], v[d*d+j*d:d*d+j*d+d]
			for k := range dk {
				// Re(conj(a) (re + i im) b) with a = V_ik, b = V_jk.
				dk[k] += re*(ir[k]*jr[k]+ii[k]*ji[k]) - im*(ir[k]*ji[k]-ii[k]*jr[k])
			}
		})
	}
	return dk
}
