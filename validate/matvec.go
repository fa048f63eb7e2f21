package validate

import (
	"fmt"
	"math"
	"math/bits"
	"runtime"
	"slices"
	"sync/atomic"

	"golang.org/x/sync/errgroup"

	"warmfit/cluster"
	"warmfit/lattice"
)

// MaxOperatorQubits is the largest number of qubits an Operator accepts:
// a state vector of 2^30 complex amplitudes already takes 16 GiB.
const MaxOperatorQubits = 30

// chunkBits sets the number of amplitudes (2^chunkBits) one parallel task
// handles. It depends on nothing but this constant, so partial sums come
// in a fixed order and results are identical for every worker count.
const chunkBits = 12

// Operator is a Hamiltonian H = sum_k c_k P_k on n qubits prepared for
// matrix-free application to state vectors of length 2^n (qubit q is
// bit q of the basis index). Terms with the same X mask are grouped: they
// all send |b> to |b XOR X>, so one pass over the vector serves the group.
// The diagonal (Z-only terms) is tabulated once.
//
// A Hamiltonian whose terms all have an even number of Y letters is a real
// symmetric matrix; Operator then also acts on real vectors, at half the
// memory and a fraction of the arithmetic.
type Operator struct {
	n       int
	real    bool
	diag    []float64 // nil when there is no Z-only term
	groups  []flipGroup
	norm1   float64
	workers int
}

// flipGroup holds the terms sharing the flip mask x. Term j contributes
// coef_j (-1)^popcount(b&z_j) to <b^x|H|b>, with coef_j = c_j i^{nY_j}:
// real when nY_j is even (then stored in cr), imaginary otherwise (ci).
type flipGroup struct {
	x  uint64
	z  []uint64
	cr []float64
	ci []float64
	// constant is set when every member has z = 0, so that the matrix
	// element does not depend on b (bare X strings, the common field
	// term); kr + i ki is then that element.
	constant bool
	kr, ki   float64
}

// NewOperator builds the operator of H = sum_k terms[k].Coeff P_k on n
// qubits. Repeated Pauli strings add. It reports a site outside 0..n-1, a
// bad letter or a coefficient that is not finite. workers <= 0 means
// runtime.GOMAXPROCS(0).
func NewOperator(n int, terms []lattice.Term, workers int) (*Operator, error) {
	if n < 1 || n > MaxOperatorQubits {
		return nil, fmt.Errorf("validate: %d qubits outside the supported range 1..%d", n, MaxOperatorQubits)
	}
	ops := make([]cluster.PauliString, len(terms))
	coeffs := make([]float64, len(terms))
	for k, t := range terms {
		p, err := termPauli(n, t)
		if err != nil {
			return nil, fmt.Errorf("validate: term %d (%s): %w", k, t.Key(), err)
		}
		if math.IsNaN(t.Coeff) || math.IsInf(t.Coeff, 0) {
			return nil, fmt.Errorf("validate: term %d (%s): coefficient %v is not finite", k, t.Key(), t.Coeff)
		}
		ops[k], coeffs[k] = p, t.Coeff
	}
	return newOperator(n, ops, coeffs, workers), nil
}

// termPauli converts a term to its Pauli string, checking its sites.
func termPauli(n int, t lattice.Term) (cluster.PauliString, error) {
	for _, s := range t.Sites {
		if s < 0 || s >= n {
			return cluster.PauliString{}, fmt.Errorf("site %d outside 0..%d", s, n-1)
		}
	}
	return cluster.ParsePauli(t.Pauli, t.Sites)
}

func newOperator(n int, ops []cluster.PauliString, coeffs []float64, workers int) *Operator {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	op := &Operator{n: n, real: true, workers: workers}

	// Merge repeated strings and drop zero coefficients, in a fixed order.
	merged := map[cluster.PauliString]float64{}
	var order []cluster.PauliString
	for k, p := range ops {
		if _, ok := merged[p]; !ok {
			order = append(order, p)
		}
		merged[p] += coeffs[k]
	}
	slices.SortFunc(order, func(a, b cluster.PauliString) int {
		if a.X != b.X {
			return cmpUint(a.X, b.X)
		}
		return cmpUint(a.Z, b.Z)
	})
	var diagOps []cluster.PauliString
	var diagCoeffs []float64
	for _, p := range order {
		c := merged[p]
		if c == 0 {
			continue
		}
		op.norm1 += math.Abs(c)
		if p.X == 0 {
			diagOps = append(diagOps, p)
			diagCoeffs = append(diagCoeffs, c)
			continue
		}
		if len(op.groups) == 0 || op.groups[len(op.groups)-1].x != p.X {
			op.groups = append(op.groups, flipGroup{x: p.X})
		}
		g := &op.groups[len(op.groups)-1]
		g.z = append(g.z, p.Z)
		// c i^{nY}: nY = popcount(X&Z); the Z part of a Y letter is in z
		// too, which accounts for the (-1)^popcount(b&Z) of Apply.
		ny := p.NumY()
		re, im := 0.0, 0.0
		switch ny & 3 {
		case 0:
			re = c
		case 1:
			im = c
		case 2:
			re = -c
		case 3:
			im = -c
		}
		if im != 0 {
			op.real = false
		}
		g.cr = append(g.cr, re)
		g.ci = append(g.ci, im)
	}
	for i := range op.groups {
		g := &op.groups[i]
		g.constant = true
		for j, z := range g.z {
			if z != 0 {
				g.constant = false
			}
			g.kr += g.cr[j]
			g.ki += g.ci[j]
		}
	}
	if len(diagOps) > 0 {
		op.diag = make([]float64, 1<<uint(n))
		op.parallel(func(_, c int) {
			lo, hi := op.chunk(c)
			for b := lo; b < hi; b++ {
				var d float64
				for k, p := range diagOps {
					if bits.OnesCount64(uint64(b)&p.Z)&1 == 0 {
						d += diagCoeffs[k]
					} else {
						d -= diagCoeffs[k]
					}
				}
				op.diag[b] = d
			}
		})
	}
	return op
}

func cmpUint(a, b uint64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// NumQubits returns n.
func (op *Operator) NumQubits() int { return op.n }

// Dim returns the Hilbert-space dimension 2^n.
func (op *Operator) Dim() int { return 1 << uint(op.n) }

// IsReal reports whether H is a real symmetric matrix (no term with an
// odd number of Y letters), so that ApplyReal may be used.
func (op *Operator) IsReal() bool { return op.real }

// Norm1 returns sum_k |c_k| over the merged terms, a rigorous bound on the
// spectral radius of H since every Pauli string has unit norm.
func (op *Operator) Norm1() float64 { return op.norm1 }

// Apply sets dst = H src. Both must have length Dim and must not overlap.
func (op *Operator) Apply(dst, src []complex128) {
	op.checkLen(len(dst), len(src))
	op.parallel(func(_, c int) {
		lo, hi := op.chunk(c)
		op.applyComplex(dst, src, nil, lo, hi, 1, 0, 0, 0)
	})
}

// ApplyReal sets dst = H src for a real Hamiltonian (IsReal must hold).
func (op *Operator) ApplyReal(dst, src []float64) {
	if !op.real {
		panic("validate: ApplyReal on a Hamiltonian with imaginary matrix elements")
	}
	op.checkLen(len(dst), len(src))
	op.parallel(func(_, c int) {
		lo, hi := op.chunk(c)
		op.applyReal(dst, src, nil, lo, hi, 1, 0, 0, 0)
	})
}

func (op *Operator) checkLen(lens ...int) {
	for _, l := range lens {
		if l != op.Dim() {
			panic(fmt.Sprintf("validate: vector length %d, want %d", l, op.Dim()))
		}
	}
}

// numChunks returns the number of parallel tasks a pass over a vector is
// cut into.
func (op *Operator) numChunks() int {
	if op.n <= chunkBits {
		return 1
	}
	return 1 << uint(op.n-chunkBits)
}

// chunk returns the index range of chunk c.
func (op *Operator) chunk(c int) (lo, hi int) {
	if op.n <= chunkBits {
		return 0, op.Dim()
	}
	return c << chunkBits, (c + 1) << chunkBits
}

// parallel runs fn(worker, chunk) for every chunk, on at most op.workers
// goroutines. Each chunk must write only its own slots; then the result
// does not depend on which worker ran it.
func (op *Operator) parallel(fn func(worker, chunk int)) {
	nc := op.numChunks()
	w := min(op.workers, nc)
	if w <= 1 {
		for c := 0; c < nc; c++ {
			fn(0, c)
		}
		return
	}
	var next atomic.Int64
	var g errgroup.Group
	g.SetLimit(w)
	for i := 0; i < w; i++ {
		g.Go(func() error {
			for {
				c := int(next.Add(1) - 1)
				if c >= nc {
					return nil
				}
				fn(i, c)
			}
		})
	}
	_ = g.Wait() // the tasks return no errors
}

// applyComplex computes, for a in [lo, hi),
//
//	y = alpha (H src)[a] + beta src[a] + gamma dst[a];  dst[a] = y;
//	psi[a] += c y (when psi is not nil),
//
// and returns sum |y|^2 and sum |psi[a]|^2 over the range. dst[a] is read
// only when gamma is not zero, so it may hold garbage otherwise; dst may be
// the same slice as neither src nor psi.
func (op *Operator) applyComplex(dst, src, psi []complex128, lo, hi int, alpha, beta, gamma, c float64) (ny, npsi float64) {
	for a := lo; a < hi; a++ {
		var acc complex128
		if op.diag != nil {
			acc = complex(op.diag[a], 0) * src[a]
		}
		for gi := range op.groups {
			g := &op.groups[gi]
			b := uint64(a) ^ g.x
			var sr, si float64
			if g.constant {
				sr, si = g.kr, g.ki
			} else {
				for j, z := range g.z {
					// Flip the sign bit for odd parity: branch-free.
					s := uint64(bits.OnesCount64(b&z)&1) << 63
					sr += math.Float64frombits(math.Float64bits(g.cr[j]) ^ s)
					si += math.Float64frombits(math.Float64bits(g.ci[j]) ^ s)
				}
			}
			acc += complex(sr, si) * src[b]
		}
		y := complex(alpha, 0)*acc + complex(beta, 0)*src[a]
		if gamma != 0 {
			y += complex(gamma, 0) * dst[a]
		}
		dst[a] = y
		ny += real(y)*real(y) + imag(y)*imag(y)
		if psi != nil {
			p := psi[a] + complex(c, 0)*y
			psi[a] = p
			npsi += real(p)*real(p) + imag(p)*imag(p)
		}
	}
	return ny, npsi
}

// applyReal is applyComplex for a real Hamiltonian on real vectors.
func (op *Operator) applyReal(dst, src, psi []float64, lo, hi int, alpha, beta, gamma, c float64) (ny, npsi float64) {
	for a := lo; a < hi; a++ {
		var acc float64
		if op.diag != nil {
			acc = op.diag[a] * src[a]
		}
		for gi := range op.groups {
			g := &op.groups[gi]
			b := uint64(a) ^ g.x
			var s float64
			if g.constant {
				s = g.kr
			} else {
				for j, z := range g.z {
					sb := uint64(bits.OnesCount64(b&z)&1) << 63
					s += math.Float64frombits(math.Float64bits(g.cr[j]) ^ sb)
				}
			}
			acc += s * src[b]
		}
		y := alpha*acc + beta*src[a]
		if gamma != 0 {
			y += gamma * dst[a]
		}
		dst[a] = y
		ny += y * y
		if psi != nil {
			p := psi[a] + c*y
			psi[a] = p
			npsi += p * p
		}
	}
	return ny, npsi
}
