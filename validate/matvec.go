package validate

import (
	"cmp"
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
// Members with z_j = 0 (bare X strings) are summed into the constant
// kr + i ki; the lists hold the others.
type flipGroup struct {
	x      uint64
	kr, ki float64
	z      []uint64
	cr     []float64
	ci     []float64
	// realCoef is set when every coefficient of the group is real, so the
	// complex kernel can scale by a real number.
	realCoef bool
}

// realSum is the real coefficient of the group's terms on basis state b:
// kr + sum_j (-1)^{parity(b & z_j)} cr_j.
func (g *flipGroup) realSum(b uint64) float64 {
	s := g.kr
	for j, z := range g.z {
		// Flip the sign bit for odd parity: branch-free.
		sb := uint64(bits.OnesCount64(b&z)&1) << 63
		s += math.Float64frombits(math.Float64bits(g.cr[j]) ^ sb)
	}
	return s
}

// NewOperator builds the operator of H = sum_k terms[k].Coeff P_k on n
// qubits. Repeated Pauli strings add. It reports a site outside 0..n-1, a
// bad letter or a coefficient that is not finite. workers <= 0 means
// runtime.GOMAXPROCS(0).
func NewOperator(n int, terms []lattice.Term, workers int) (*Operator, error) {
	if n < 1 || n > MaxOperatorQubits {
		return nil, fmt.Errorf("validate: %d qubits outside the supported range 1..%d", n, MaxOperatorQubits)
	}
	h, err := cluster.NewHamiltonian(n, terms)
	if err != nil {
		return nil, fmt.Errorf("validate: %w", err)
	}
	return newOperator(n, h.Ops, h.Coeffs, workers), nil
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
			return cmp.Compare(a.X, b.X)
		}
		return cmp.Compare(a.Z, b.Z)
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
		var z []uint64
		var cr, ci []float64
		g.realCoef = true
		for j := range g.z {
			if g.ci[j] != 0 {
				g.realCoef = false
			}
			if g.z[j] == 0 {
				g.kr += g.cr[j]
				g.ki += g.ci[j]
				continue
			}
			z, cr, ci = append(z, g.z[j]), append(cr, g.cr[j]), append(ci, g.ci[j])
		}
		g.z, g.cr, g.ci = z, cr, ci
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
// Each call allocates scratch of one chunk per worker; the thermal
// routines reuse theirs instead.
func (op *Operator) Apply(dst, src []complex128) {
	op.checkLen(len(dst), len(src))
	newVecOps(op, false).step(stateVec{c: dst}, stateVec{c: src}, stateVec{}, 1, 0, 0, 0)
}

// ApplyReal sets dst = H src for a real Hamiltonian (IsReal must hold).
func (op *Operator) ApplyReal(dst, src []float64) {
	if !op.real {
		panic("validate: ApplyReal on a Hamiltonian with imaginary matrix elements")
	}
	op.checkLen(len(dst), len(src))
	newVecOps(op, true).step(stateVec{r: dst}, stateVec{r: src}, stateVec{}, 1, 0, 0, 0)
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
// and returns sum |y|^2 and sum |psi[a]|^2 over the range. acc is scratch
// of at least hi-lo amplitudes. dst[a] is read only when gamma is not
// zero, so it may hold garbage otherwise; dst may be the same slice as
// neither src nor psi. The loop runs term group by term group over the
// range, so each inner loop streams through memory with one flip mask.
func (op *Operator) applyComplex(acc, dst, src, psi []complex128, lo, hi int, alpha, beta, gamma, c float64) (ny, npsi float64) {
	acc = acc[:hi-lo]
	if op.diag != nil {
		d, s := op.diag[lo:hi], src[lo:hi]
		for i := range acc {
			acc[i] = complex(d[i], 0) * s[i]
		}
	} else {
		clear(acc)
	}
	for gi := range op.groups {
		g := &op.groups[gi]
		base := uint64(lo) ^ g.x
		switch {
		case len(g.z) == 0 && g.realCoef:
			k := g.kr
			for i := range acc {
				v := src[base^uint64(i)]
				acc[i] += complex(k*real(v), k*imag(v))
			}
		case len(g.z) == 0:
			k := complex(g.kr, g.ki)
			for i := range acc {
				acc[i] += k * src[base^uint64(i)]
			}
		case g.realCoef:
			for i := range acc {
				b := base ^ uint64(i)
				s := g.realSum(b)
				v := src[b]
				acc[i] += complex(s*real(v), s*imag(v))
			}
		default:
			for i := range acc {
				b := base ^ uint64(i)
				sr, si := g.kr, g.ki
				for j, z := range g.z {
					sb := uint64(bits.OnesCount64(b&z)&1) << 63
					sr += math.Float64frombits(math.Float64bits(g.cr[j]) ^ sb)
					si += math.Float64frombits(math.Float64bits(g.ci[j]) ^ sb)
				}
				acc[i] += complex(sr, si) * src[b]
			}
		}
	}
	ca, cb, cg, cc := complex(alpha, 0), complex(beta, 0), complex(gamma, 0), complex(c, 0)
	for i, h := range acc {
		a := lo + i
		y := ca*h + cb*src[a]
		if gamma != 0 {
			y += cg * dst[a]
		}
		dst[a] = y
		ny += real(y)*real(y) + imag(y)*imag(y)
		if psi != nil {
			p := psi[a] + cc*y
			psi[a] = p
			npsi += real(p)*real(p) + imag(p)*imag(p)
		}
	}
	return ny, npsi
}

// applyReal is applyComplex for a real Hamiltonian on real vectors.
func (op *Operator) applyReal(acc, dst, src, psi []float64, lo, hi int, alpha, beta, gamma, c float64) (ny, npsi float64) {
	acc = acc[:hi-lo]
	if op.diag != nil {
		d, s := op.diag[lo:hi], src[lo:hi]
		for i := range acc {
			acc[i] = d[i] * s[i]
		}
	} else {
		clear(acc)
	}
	for gi := range op.groups {
		g := &op.groups[gi]
		base := uint64(lo) ^ g.x
		if len(g.z) == 0 {
			k := g.kr
			for i := range acc {
				acc[i] += k * src[base^uint64(i)]
			}
			continue
		}
		for i := range acc {
			b := base ^ uint64(i)
			acc[i] += g.realSum(b) * src[b]
		}
	}
	for i, h := range acc {
		a := lo + i
		y := alpha*h + beta*src[a]
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
