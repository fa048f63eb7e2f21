package validate

import (
	"fmt"
	"math"
	"math/bits"
	"math/rand/v2"
	"slices"
	"strings"
	"sync"
	"testing"

	"gonum.org/v1/gonum/mat"

	"warmfit/lattice"
)

// This file holds a deliberately naive dense reference for the tests of
// the matrix-free and free-fermion code: Hamiltonians and observables are
// built as Kronecker products of 2x2 Pauli matrices (no bit tricks) and
// diagonalised with gonum's EigenSym, complex Hermitian matrices through
// the real embedding A + iB -> [[A, -B], [B, A]] (each eigenvalue twice).

// The parity blocks of the reference must not change its answers.
func TestKronRefParityBlocks(t *testing.T) {
	tf, _ := TFIMChainTerms(6, 1, 0.7, false)
	xx, _ := XXChainTerms(6, 1, true)
	xx = append(xx, lattice.Term{Pauli: "XY", Sites: []int{1, 2}, Coeff: 0.3}) // complex, still even
	for _, terms := range [][]lattice.Term{tf, xx} {
		a := newKronRefBlocks(t, 6, terms, true)
		b := newKronRefBlocks(t, 6, terms, false)
		if a.frame == 0 && len(terms) == len(tf) {
			t.Error("TFIM reference not rotated")
		}
		const beta = 0.9
		if d := a.logZ(beta) - b.logZ(beta); math.Abs(d) > 1e-12 {
			t.Errorf("ln Z differs by %g", d)
		}
		ra, rb := a.rho(beta), b.rho(beta)
		for _, o := range []obsSpec{{"X", []int{1}}, {"ZZ", []int{2, 3}}, {"XY", []int{0, 1}}, {"YZY", []int{2, 3, 4}}, {"Z", []int{5}}} {
			if d := a.expect(ra, o.letters, o.sites) - b.expect(rb, o.letters, o.sites); math.Abs(d) > 1e-12 {
				t.Errorf("<%s%v> differs by %g", o.letters, o.sites, d)
			}
		}
	}
}

// kronMatrix is a dense complex matrix stored as real and imaginary parts.
type kronMatrix struct {
	dim    int
	re, im []float64
}

func pauli2x2(letter byte) kronMatrix {
	switch letter {
	case 'X':
		return kronMatrix{2, []float64{0, 1, 1, 0}, []float64{0, 0, 0, 0}}
	case 'Y':
		return kronMatrix{2, []float64{0, 0, 0, 0}, []float64{0, -1, 1, 0}}
	case 'Z':
		return kronMatrix{2, []float64{1, 0, 0, -1}, []float64{0, 0, 0, 0}}
	}
	return kronMatrix{2, []float64{1, 0, 0, 1}, []float64{0, 0, 0, 0}}
}

// kron returns a ⊗ b.
func kron(a, b kronMatrix) kronMatrix {
	d := a.dim * b.dim
	out := kronMatrix{d, make([]float64, d*d), make([]float64, d*d)}
	for i := 0; i < a.dim; i++ {
		for j := 0; j < a.dim; j++ {
			ar, ai := a.re[i*a.dim+j], a.im[i*a.dim+j]
			for k := 0; k < b.dim; k++ {
				for l := 0; l < b.dim; l++ {
					br, bi := b.re[k*b.dim+l], b.im[k*b.dim+l]
					idx := (i*b.dim+k)*d + j*b.dim + l
					out.re[idx] = ar*br - ai*bi
					out.im[idx] = ar*bi + ai*br
				}
			}
		}
	}
	return out
}

// kronPauli is the 2^n matrix of letters on sites: qubit q is bit q of
// the index, so qubit n-1 is the leftmost factor.
func kronPauli(n int, letters string, sites []int) kronMatrix {
	m := kronMatrix{1, []float64{1}, []float64{0}}
	for q := n - 1; q >= 0; q-- {
		l := byte('I')
		for i, s := range sites {
			if s == q {
				l = letters[i]
			}
		}
		m = kron(m, pauli2x2(l))
	}
	return m
}

func kronHamiltonian(n int, terms []lattice.Term) kronMatrix {
	d := 1 << uint(n)
	h := kronMatrix{d, make([]float64, d*d), make([]float64, d*d)}
	for _, t := range terms {
		p := kronPauli(n, t.Pauli, t.Sites)
		for i := range h.re {
			h.re[i] += t.Coeff * p.re[i]
			h.im[i] += t.Coeff * p.im[i]
		}
	}
	return h
}

func (m kronMatrix) isReal() bool {
	for _, v := range m.im {
		if v != 0 {
			return false
		}
	}
	return true
}

// embed returns the real symmetric form of m: m itself when it is real,
// [[A, -B], [B, A]] otherwise.
func (m kronMatrix) embed(real bool) *mat.SymDense {
	if real {
		return mat.NewSymDense(m.dim, append([]float64(nil), m.re...))
	}
	d := m.dim
	e := mat.NewSymDense(2*d, nil)
	for i := 0; i < d; i++ {
		for j := i; j < d; j++ {
			a, b := m.re[i*d+j], m.im[i*d+j]
			e.SetSym(i, j, a)
			e.SetSym(d+i, d+j, a)
			e.SetSym(i, d+j, -b)
			e.SetSym(j, d+i, b) // element (d+i, j) = B_ij, stored symmetric
		}
	}
	return e
}

// The reference of the 10-qubit transverse-field Ising chain with random
// couplings is shared by the free-fermion and typicality tests: one dense
// diagonalisation of 1024 x 1024 is the slowest step of the suite.
const tfim10Beta = 0.7

func tfim10Terms() []lattice.Term {
	return randomTFIM(rand.New(rand.NewPCG(41, 42)), 10, false)
}

// random8Reference returns a random 8-qubit Hamiltonian (real or with
// imaginary matrix elements) and its dense reference, shared by tests.
func random8Reference(t testing.TB, real bool) ([]lattice.Term, *kronRef) {
	terms := randomTerms(rand.New(rand.NewPCG(51, 52)), 8, real)
	return terms, cachedKronRef(t, "random8", 8, terms)
}

var (
	kronRefMu    sync.Mutex
	kronRefCache = map[string]*kronRef{}
)

// cachedKronRef returns the reference for (key, n, terms), computing it
// once per test binary.
func cachedKronRef(t testing.TB, key string, n int, terms []lattice.Term) *kronRef {
	t.Helper()
	kronRefMu.Lock()
	defer kronRefMu.Unlock()
	full := fmt.Sprintf("%s/%d/%v", key, n, terms)
	if r, ok := kronRefCache[full]; ok {
		return r
	}
	r := newKronRef(t, n, terms)
	kronRefCache[full] = r
	return r
}

// kronRef is the dense spectral decomposition of a Hamiltonian.
type kronRef struct {
	n     int
	real  bool // no embedding
	frame int  // 1: the matrices are in the Hadamard-rotated basis
	vals  []float64
	vecs  *mat.Dense

	rhoMu    sync.Mutex
	rhoCache map[float64]*mat.Dense
}

// cachedRho is rho(beta), computed once.
func (r *kronRef) cachedRho(beta float64) *mat.Dense {
	r.rhoMu.Lock()
	defer r.rhoMu.Unlock()
	if m, ok := r.rhoCache[beta]; ok {
		return m
	}
	if r.rhoCache == nil {
		r.rhoCache = map[float64]*mat.Dense{}
	}
	m := r.rho(beta)
	r.rhoCache[beta] = m
	return m
}

func newKronRef(t testing.TB, n int, terms []lattice.Term) *kronRef {
	t.Helper()
	return newKronRefBlocks(t, n, terms, true)
}

// newKronRefBlocks is newKronRef with the parity blocks optional.
func newKronRefBlocks(t testing.TB, n int, terms []lattice.Term, blocksAllowed bool) *kronRef {
	t.Helper()
	// A Hamiltonian whose terms all flip an even number of qubits (after
	// the global Hadamard X<->Z, Y -> -Y if need be, a unitary change of
	// basis) commutes with the parity Z_0...Z_{n-1}: its matrix splits into
	// blocks of even and odd basis states, each diagonalised on its own.
	frame := 0
	var rotated []lattice.Term
	switch {
	case evenFlips(terms):
		rotated = terms
	case evenFlips(hadamardTerms(terms)):
		frame, rotated = 1, hadamardTerms(terms)
	default:
		rotated = terms
		frame = -1 // no parity blocks
	}
	if !blocksAllowed {
		rotated, frame = terms, -1
	}
	h := kronHamiltonian(n, rotated)
	real := h.isReal()
	full := h.embed(real)
	dd := full.SymmetricDim()
	d := h.dim
	r := &kronRef{n: n, real: real, frame: max(frame, 0), vecs: mat.NewDense(dd, dd, nil)}
	var blocks [][]int
	if frame < 0 {
		blocks = [][]int{nil}
		for e := 0; e < dd; e++ {
			blocks[0] = append(blocks[0], e)
		}
	} else {
		blocks = make([][]int, 2)
		for e := 0; e < dd; e++ {
			p := bits.OnesCount(uint(e%d)) % 2
			blocks[p] = append(blocks[p], e)
		}
	}
	col := 0
	for _, idx := range blocks {
		m := len(idx)
		sub := mat.NewSymDense(m, nil)
		for i := 0; i < m; i++ {
			for j := i; j < m; j++ {
				sub.SetSym(i, j, full.At(idx[i], idx[j]))
			}
		}
		var eig mat.EigenSym
		if !eig.Factorize(sub, true) {
			t.Fatal("dense reference: EigenSym failed")
		}
		var v mat.Dense
		eig.VectorsTo(&v)
		r.vals = append(r.vals, eig.Values(nil)...)
		for j := 0; j < m; j++ {
			for i := 0; i < m; i++ {
				r.vecs.Set(idx[i], col+j, v.At(i, j))
			}
		}
		col += m
	}
	return r
}

// evenFlips reports whether every term has an even number of X and Y
// letters.
func evenFlips(terms []lattice.Term) bool {
	for _, t := range terms {
		if (strings.Count(t.Pauli, "X")+strings.Count(t.Pauli, "Y"))%2 == 1 {
			return false
		}
	}
	return true
}

// hadamardLetters maps letters under the global Hadamard: X <-> Z and
// Y -> -Y, returning the new letters and the sign.
func hadamardLetters(p string) (string, float64) {
	out := []byte(p)
	sign := 1.0
	for i, l := range out {
		switch l {
		case 'X':
			out[i] = 'Z'
		case 'Z':
			out[i] = 'X'
		case 'Y':
			sign = -sign
		}
	}
	return string(out), sign
}

func hadamardTerms(terms []lattice.Term) []lattice.Term {
	out := make([]lattice.Term, len(terms))
	for i, t := range terms {
		p, s := hadamardLetters(t.Pauli)
		out[i] = lattice.Term{Pauli: p, Sites: t.Sites, Coeff: s * t.Coeff}
	}
	return out
}

// weights returns e^{-beta (E_j - E_0)} and ln of their sum, with the
// shift E_0 the lowest (highest for negative beta) eigenvalue.
func (r *kronRef) weights(beta float64) (w []float64, shift float64) {
	shift = slices.Min(r.vals)
	if beta < 0 {
		shift = slices.Max(r.vals)
	}
	w = make([]float64, len(r.vals))
	for j, e := range r.vals {
		w[j] = math.Exp(-beta * (e - shift))
	}
	return w, shift
}

func (r *kronRef) logZ(beta float64) float64 {
	w, shift := r.weights(beta)
	var s float64
	for _, v := range w {
		s += v
	}
	if !r.real {
		s /= 2 // each eigenvalue appears twice in the embedding
	}
	return math.Log(s) - beta*shift
}

// moment returns <H^p> for p = 1, 2.
func (r *kronRef) moment(beta float64, p int) float64 {
	w, _ := r.weights(beta)
	var s, z float64
	for j, v := range w {
		s += v * math.Pow(r.vals[j], float64(p))
		z += v
	}
	return s / z
}

// rho returns the embedded Gibbs state (its trace with an embedded
// observable is the expectation).
func (r *kronRef) rho(beta float64) *mat.Dense {
	w, _ := r.weights(beta)
	var z float64
	for _, v := range w {
		z += v
	}
	d := len(w)
	scaled := mat.DenseCopyOf(r.vecs)
	for j := 0; j < d; j++ {
		for i := 0; i < d; i++ {
			scaled.Set(i, j, scaled.At(i, j)*w[j]/z)
		}
	}
	rho := mat.NewDense(d, d, nil)
	rho.Mul(scaled, r.vecs.T())
	return rho
}

// expect returns tr(rho O) for the observable letters on sites.
func (r *kronRef) expect(rho *mat.Dense, letters string, sites []int) float64 {
	sign := 1.0
	if r.frame == 1 {
		letters, sign = hadamardLetters(letters)
	}
	return sign * r.expectInFrame(rho, letters, sites)
}

func (r *kronRef) expectInFrame(rho *mat.Dense, letters string, sites []int) float64 {
	o := kronPauli(r.n, letters, sites)
	d := o.dim
	var s float64
	if r.real {
		// tr(rho Im O) vanishes for real symmetric rho.
		for i := 0; i < d; i++ {
			for j := 0; j < d; j++ {
				s += rho.At(i, j) * o.re[j*d+i]
			}
		}
		return s
	}
	for i := 0; i < 2*d; i++ {
		for j := 0; j < 2*d; j++ {
			// element (j, i) of the embedding of O
			var e float64
			jj, ii := j%d, i%d
			switch {
			case (j < d) == (i < d):
				e = o.re[jj*d+ii]
			case j < d: // top right: -B
				e = -o.im[jj*d+ii]
			default: // bottom left: B
				e = o.im[jj*d+ii]
			}
			s += rho.At(i, j) * e
		}
	}
	return s
}

// expMinus returns exp(-tau H) r.
func (r *kronRef) expMinus(tau float64, v []complex128) []complex128 {
	if r.frame != 0 {
		panic("expMinus in a rotated basis")
	}
	d := 1 << uint(r.n)
	dd := len(r.vals)
	x := make([]float64, dd)
	for i := 0; i < d; i++ {
		x[i] = real(v[i])
		if !r.real {
			x[d+i] = imag(v[i])
		}
	}
	// y = V e^{-tau Lambda} V^T x
	c := make([]float64, dd)
	for j := 0; j < dd; j++ {
		var s float64
		for i := 0; i < dd; i++ {
			s += r.vecs.At(i, j) * x[i]
		}
		c[j] = s * math.Exp(-tau*r.vals[j])
	}
	out := make([]complex128, d)
	for i := 0; i < dd; i++ {
		var s float64
		for j := 0; j < dd; j++ {
			s += r.vecs.At(i, j) * c[j]
		}
		if i < d {
			out[i] += complex(s, 0)
		} else {
			out[i-d] += complex(0, s)
		}
	}
	if r.real {
		// The real path ignored imag(v); add its image separately.
		for i := 0; i < d; i++ {
			x[i] = imag(v[i])
		}
		for j := 0; j < dd; j++ {
			var s float64
			for i := 0; i < dd; i++ {
				s += r.vecs.At(i, j) * x[i]
			}
			c[j] = s * math.Exp(-tau*r.vals[j])
		}
		for i := 0; i < d; i++ {
			var s float64
			for j := 0; j < dd; j++ {
				s += r.vecs.At(i, j) * c[j]
			}
			out[i] += complex(0, s)
		}
	}
	return out
}

// denseApply returns H v with the Kronecker matrix.
func (m kronMatrix) apply(v []complex128) []complex128 {
	out := make([]complex128, m.dim)
	for i := 0; i < m.dim; i++ {
		var s complex128
		for j := 0; j < m.dim; j++ {
			s += complex(m.re[i*m.dim+j], m.im[i*m.dim+j]) * v[j]
		}
		out[i] = s
	}
	return out
}
