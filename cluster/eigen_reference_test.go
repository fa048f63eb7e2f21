package cluster

import (
	"math"
	"math/cmplx"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
)

// Reference constructions for the tests, built the slow obvious way from
// the textbook Pauli matrices and Kronecker products, independently of
// the bit-mask arithmetic used by the package.

// pauliMatrix returns the 2×2 matrix of one letter (I, X, Y or Z).
func pauliMatrix(letter byte) [2][2]complex128 {
	switch letter {
	case 'X':
		return [2][2]complex128{{0, 1}, {1, 0}}
	case 'Y':
		return [2][2]complex128{{0, -1i}, {1i, 0}}
	case 'Z':
		return [2][2]complex128{{1, 0}, {0, -1}}
	default:
		return [2][2]complex128{{1, 0}, {0, 1}}
	}
}

// kronMatrix returns the dense 2^n×2^n matrix of p as the Kronecker
// product P_{n-1} ⊗ ... ⊗ P_0 (qubit q is bit q of the basis index, so
// qubit 0 is the last, fastest factor).
func kronMatrix(n int, p PauliString) [][]complex128 {
	m := [][]complex128{{1}}
	for q := n - 1; q >= 0; q-- {
		letters := p.Letters([]int{q})
		f := pauliMatrix(letters[0])
		d := len(m)
		out := make([][]complex128, 2*d)
		for r := range out {
			out[r] = make([]complex128, 2*d)
		}
		for r1 := 0; r1 < d; r1++ {
			for c1 := 0; c1 < d; c1++ {
				for r2 := 0; r2 < 2; r2++ {
					for c2 := 0; c2 < 2; c2++ {
						out[2*r1+r2][2*c1+c2] = m[r1][c1] * f[r2][c2]
					}
				}
			}
		}
		m = out
	}
	return m
}

// kronHamiltonian returns the dense matrix sum_k c_k P_k from Kronecker
// products.
func kronHamiltonian(h *Hamiltonian) [][]complex128 {
	d := h.Dim()
	out := make([][]complex128, d)
	for r := range out {
		out[r] = make([]complex128, d)
	}
	for k, p := range h.Ops {
		m := kronMatrix(h.NumQubits, p)
		for r := range m {
			for c := range m[r] {
				out[r][c] += complex(h.Coeffs[k], 0) * m[r][c]
			}
		}
	}
	return out
}

// embedding returns the real symmetric 2D×2D matrix [[A,-B],[B,A]] of the
// Hermitian matrix A + iB.
func embedding(m [][]complex128) *mat.SymDense {
	d := len(m)
	e := mat.NewSymDense(2*d, nil)
	for r := 0; r < d; r++ {
		for c := r; c < d; c++ {
			a, b := real(m[r][c]), imag(m[r][c])
			e.SetSym(r, c, a)
			e.SetSym(d+r, d+c, a)
			e.SetSym(r, d+c, -b)
			e.SetSym(c, d+r, b)
		}
	}
	return e
}

// bruteThermal is an independent Gibbs state: the real embedding of the
// Kronecker-built Hamiltonian diagonalised by mat.EigenSym. Every level of
// the embedding appears twice, and tr(rho P) = tr(rho_E P_E) with rho_E
// the normalised Gibbs state of the embedding and P_E the embedding of P.
type bruteThermal struct {
	n     int
	logZ  float64
	rhoE  *mat.Dense
	level []float64
}

func newBruteThermal(h *Hamiltonian, beta float64) *bruteThermal {
	var eig mat.EigenSym
	if !eig.Factorize(embedding(kronHamiltonian(h)), true) {
		panic("reference eigensolver failed")
	}
	vals := eig.Values(nil)
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	e0 := vals[0]
	w := make([]float64, len(vals))
	var z float64
	for i, v := range vals {
		w[i] = math.Exp(-beta * (v - e0))
		z += w[i]
	}
	for i := range w {
		w[i] /= z
	}
	n2 := len(vals)
	scaled := mat.NewDense(n2, n2, nil)
	for r := 0; r < n2; r++ {
		for c := 0; c < n2; c++ {
			scaled.Set(r, c, vecs.At(r, c)*w[c])
		}
	}
	var rho mat.Dense
	rho.Mul(scaled, vecs.T())
	// The embedding doubles Z.
	return &bruteThermal{n: h.NumQubits, logZ: -beta*e0 + math.Log(z) - math.Ln2, rhoE: &rho, level: vals}
}

func (b *bruteThermal) expect(p PauliString) float64 {
	pe := embedding(kronMatrix(b.n, p))
	var prod mat.Dense
	prod.Mul(b.rhoE, pe)
	return mat.Trace(&prod)
}

// randomHamiltonian returns a random 2-local Hamiltonian on an open chain
// of n qubits: every single-qubit letter on every site and every pair of
// letters on every bond, coefficients uniform in [-1, 1]. With complex
// false only operators with an even number of Y letters are kept.
func randomHamiltonian(n int, complex bool, rng *rand.Rand) *Hamiltonian {
	h := &Hamiltonian{NumQubits: n}
	add := func(letters string, qubits []int) {
		p, err := ParsePauli(letters, qubits)
		if err != nil {
			panic(err)
		}
		if !complex && !p.IsReal() {
			return
		}
		h.Ops = append(h.Ops, p)
		h.Coeffs = append(h.Coeffs, 2*rng.Float64()-1)
	}
	const letters = "XYZ"
	for q := 0; q < n; q++ {
		for _, a := range letters {
			add(string(a), []int{q})
		}
	}
	for q := 0; q+1 < n; q++ {
		for _, a := range letters {
			for _, b := range letters {
				add(string(a)+string(b), []int{q, q + 1})
			}
		}
	}
	return h
}

// denseMatrix returns the real and imaginary parts of the matrix of h,
// row-major, as the one-sector basis fills them.
func denseMatrix(h *Hamiltonian) (re, im []float64) {
	var bb blockBasis
	bb.build(h.NumQubits, oneSector)
	d := h.Dim()
	re, im = make([]float64, d*d), make([]float64, d*d)
	bb.fillComplex(h, 0, re, im)
	return re, im
}

// mustPauli parses a Pauli string or panics.
func mustPauli(letters string, qubits ...int) PauliString {
	p, err := ParsePauli(letters, qubits)
	if err != nil {
		panic(err)
	}
	return p
}

// eigenResidual returns max_k ||H v_k - E_k v_k|| with H the
// Kronecker-built matrix, and the largest deviation of V^† V from I.
func eigenResidual(h *Hamiltonian, s *Spectrum) (res, orth float64) {
	m := kronHamiltonian(h)
	d := s.Dim()
	vals := s.Values()
	vecs := make([][]complex128, d)
	for k := range vecs {
		vecs[k] = s.Vector(k, nil)
	}
	for k := 0; k < d; k++ {
		var norm float64
		for r := 0; r < d; r++ {
			var sum complex128
			for c := 0; c < d; c++ {
				sum += m[r][c] * vecs[k][c]
			}
			norm += cmplx.Abs(sum-complex(vals[k], 0)*vecs[k][r]) * cmplx.Abs(sum-complex(vals[k], 0)*vecs[k][r])
		}
		res = math.Max(res, math.Sqrt(norm))
		for l := 0; l < d; l++ {
			var dot complex128
			for r := 0; r < d; r++ {
				dot += cmplx.Conj(vecs[k][r]) * vecs[l][r]
			}
			if k == l {
				dot--
			}
			orth = math.Max(orth, cmplx.Abs(dot))
		}
	}
	return res, orth
}
