package validate

import (
	"fmt"
	"math"

	"warmfit/lattice"
)

// TypicalSampler gives the outcome distributions of a Gibbs state in
// product bases for systems beyond dense diagonalisation, by thermal
// typicality (TypicalThermal): with thermal vectors |phi_r> =
// exp(-beta H/2)|r>,
//
//	p_b(x) = sum_r |<x|U_b|phi_r>|² / sum_r <phi_r|phi_r>,
//
// the ratio estimator of <x|U_b rho U_b^†|x> (Hams & De Raedt, PRE 62,
// 4365 (2000)). Its statistical error falls as 1/sqrt(R Z_eff) with R
// vectors, as that of every typicality estimate. It keeps the R
// normalised vectors (16 bytes per amplitude each). A TypicalSampler is
// safe for concurrent use.
type TypicalSampler struct {
	n    int
	vecs [][]complex128 // normalised thermal vectors
	w    []float64      // their weights, summing to 1
}

// maxTypicalSamplerBytes bounds the vectors a TypicalSampler keeps.
const maxTypicalSamplerBytes = 2 << 30

// NewTypicalSampler computes opt.Vectors thermal vectors (16 when 0) of
// the n-qubit Hamiltonian sum_k terms[k].Coeff P_k at inverse
// temperature beta and keeps them for Distribution.
func NewTypicalSampler(n int, terms []lattice.Term, beta float64, opt TypicalityOptions) (*TypicalSampler, error) {
	run, err := newTypicalRun(n, terms, beta, nil, opt)
	if err != nil {
		return nil, err
	}
	if need := int64(run.opt.Vectors) * 16 << uint(n); need > maxTypicalSamplerBytes {
		return nil, fmt.Errorf("validate: typicality sampler for %d qubits keeps %d vectors of %d MiB, above %d MiB", n, run.opt.Vectors, (16<<uint(n))>>20, maxTypicalSamplerBytes>>20)
	}
	s := &TypicalSampler{n: n, vecs: make([][]complex128, run.opt.Vectors)}
	logW := make([]float64, run.opt.Vectors)
	run.visit = func(r int, psi stateVec, npsi, lw float64) {
		v := make([]complex128, 1<<uint(n))
		f := 1 / math.Sqrt(npsi)
		if psi.r != nil {
			for i, a := range psi.r {
				v[i] = complex(a*f, 0)
			}
		} else {
			for i, a := range psi.c {
				v[i] = a * complex(f, 0)
			}
		}
		s.vecs[r], logW[r] = v, lw
	}
	if _, err := run.do(); err != nil {
		return nil, err
	}
	top := math.Inf(-1)
	for _, lw := range logW {
		top = max(top, lw)
	}
	s.w = make([]float64, len(logW))
	var sum float64
	for r, lw := range logW {
		s.w[r] = math.Exp(lw - top)
		sum += s.w[r]
	}
	for r := range s.w {
		s.w[r] /= sum
	}
	return s, nil
}

// NumQubits returns the number of qubits.
func (s *TypicalSampler) NumQubits() int { return s.n }

// Vectors returns the number of thermal vectors.
func (s *TypicalSampler) Vectors() int { return len(s.vecs) }

// Distribution returns the estimated outcome probabilities in basis (one
// letter X/Y/Z per qubit): entry x for the outcome whose bit q is the
// digit of qubit q, as Sampler.Distribution.
func (s *TypicalSampler) Distribution(basis string) ([]float64, error) {
	if len(basis) != s.n {
		return nil, fmt.Errorf("validate: basis %q has %d letters for %d qubits", basis, len(basis), s.n)
	}
	for i := 0; i < len(basis); i++ {
		if c := basis[i]; c != 'X' && c != 'Y' && c != 'Z' {
			return nil, fmt.Errorf("validate: basis %q: letter %q at qubit %d is not X, Y or Z", basis, c, i)
		}
	}
	p := make([]float64, 1<<uint(s.n))
	v := make([]complex128, len(p))
	for r, vec := range s.vecs {
		copy(v, vec)
		rotateToBasis(v, basis)
		w := s.w[r]
		for i, a := range v {
			p[i] += w * (real(a)*real(a) + imag(a)*imag(a))
		}
	}
	return p, nil
}
