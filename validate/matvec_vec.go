package validate

import (
	"math/bits"
	"math/rand/v2"

	"warmfit/cluster"
)

// stateVec is a state vector of 2^n amplitudes: real (r) for a real
// Hamiltonian, complex (c) otherwise; exactly one of the two is set.
type stateVec struct {
	r []float64
	c []complex128
}

// vecOps performs the vector passes of the Krylov methods on the chunks of
// an Operator. Partial sums of every pass go to fixed per-chunk slots and
// are added in chunk order, so results are bit-identical for any number of
// workers. A vecOps is not safe for concurrent use.
type vecOps struct {
	op   *Operator
	real bool
	part []float64 // two slots per chunk
	// Per-worker accumulators of one chunk for the matrix-vector product.
	accR [][]float64
	accC [][]complex128
}

func newVecOps(op *Operator, real bool) *vecOps {
	if real && !op.real {
		panic("validate: real vectors for a Hamiltonian with imaginary matrix elements")
	}
	o := &vecOps{op: op, real: real, part: make([]float64, 2*op.numChunks())}
	w := min(op.workers, op.numChunks())
	size := min(op.Dim(), 1<<chunkBits)
	for i := 0; i < w; i++ {
		if real {
			o.accR = append(o.accR, make([]float64, size))
		} else {
			o.accC = append(o.accC, make([]complex128, size))
		}
	}
	return o
}

func (o *vecOps) newVec() stateVec {
	if o.real {
		return stateVec{r: make([]float64, o.op.Dim())}
	}
	return stateVec{c: make([]complex128, o.op.Dim())}
}

// sums adds the per-chunk slots in order.
func (o *vecOps) sums() (s0, s1 float64) {
	for c := 0; c < len(o.part); c += 2 {
		s0 += o.part[c]
		s1 += o.part[c+1]
	}
	return s0, s1
}

// step sets dst = alpha H src + beta src + gamma dst and, when psi is set,
// psi += c dst; it returns |dst|^2 and |psi|^2. dst must differ from src
// and psi. With gamma = 0 the old content of dst is not read.
func (o *vecOps) step(dst, src, psi stateVec, alpha, beta, gamma, c float64) (ndst, npsi float64) {
	o.op.parallel(func(worker, ch int) {
		lo, hi := o.op.chunk(ch)
		var a, b float64
		if o.real {
			a, b = o.op.applyReal(o.accR[worker], dst.r, src.r, psi.r, lo, hi, alpha, beta, gamma, c)
		} else {
			a, b = o.op.applyComplex(o.accC[worker], dst.c, src.c, psi.c, lo, hi, alpha, beta, gamma, c)
		}
		o.part[2*ch], o.part[2*ch+1] = a, b
	})
	return o.sums()
}

// dot returns Re <u|v> and |v|^2.
func (o *vecOps) dot(u, v stateVec) (re, nv float64) {
	o.op.parallel(func(_, ch int) {
		lo, hi := o.op.chunk(ch)
		var s, n float64
		if o.real {
			for a := lo; a < hi; a++ {
				s += u.r[a] * v.r[a]
				n += v.r[a] * v.r[a]
			}
		} else {
			for a := lo; a < hi; a++ {
				x, y := u.c[a], v.c[a]
				s += real(x)*real(y) + imag(x)*imag(y)
				n += real(y)*real(y) + imag(y)*imag(y)
			}
		}
		o.part[2*ch], o.part[2*ch+1] = s, n
	})
	return o.sums()
}

// axpby sets y = a x + b y and returns |y|^2.
func (o *vecOps) axpby(a float64, x stateVec, b float64, y stateVec) float64 {
	o.op.parallel(func(_, ch int) {
		lo, hi := o.op.chunk(ch)
		var n float64
		if o.real {
			for i := lo; i < hi; i++ {
				v := a*x.r[i] + b*y.r[i]
				y.r[i] = v
				n += v * v
			}
		} else {
			ca, cb := complex(a, 0), complex(b, 0)
			for i := lo; i < hi; i++ {
				v := ca*x.c[i] + cb*y.c[i]
				y.c[i] = v
				n += real(v)*real(v) + imag(v)*imag(v)
			}
		}
		o.part[2*ch], o.part[2*ch+1] = n, 0
	})
	n, _ := o.sums()
	return n
}

// scaleTo sets dst = a x (the old dst is not read) and returns |dst|^2.
func (o *vecOps) scaleTo(dst stateVec, a float64, x stateVec) float64 {
	o.op.parallel(func(_, ch int) {
		lo, hi := o.op.chunk(ch)
		var n float64
		if o.real {
			for i := lo; i < hi; i++ {
				v := a * x.r[i]
				dst.r[i] = v
				n += v * v
			}
		} else {
			ca := complex(a, 0)
			for i := lo; i < hi; i++ {
				v := ca * x.c[i]
				dst.c[i] = v
				n += real(v)*real(v) + imag(v)*imag(v)
			}
		}
		o.part[2*ch], o.part[2*ch+1] = n, 0
	})
	n, _ := o.sums()
	return n
}

// random fills v with independent unit-modulus amplitudes, so that
// E[v v^dagger] = 1 and |v|^2 = 2^n exactly: random signs for real vectors,
// random fourth roots of unity for complex ones (their second and fourth
// moments equal those of uniform random phases, which is all typicality
// uses). Each chunk draws from its own PCG stream keyed by (seed, stream,
// chunk), so the vector does not depend on the number of workers.
func (o *vecOps) random(v stateVec, seed, stream uint64) {
	o.op.parallel(func(_, ch int) {
		lo, hi := o.op.chunk(ch)
		src := rand.NewPCG(seed, splitMix64(stream^splitMix64(uint64(ch))))
		if o.real {
			var word uint64
			for i := lo; i < hi; i++ {
				if (i-lo)&63 == 0 {
					word = src.Uint64()
				}
				if word&1 == 0 {
					v.r[i] = 1
				} else {
					v.r[i] = -1
				}
				word >>= 1
			}
		} else {
			phases := [4]complex128{1, 1i, -1, -1i}
			var word uint64
			for i := lo; i < hi; i++ {
				if (i-lo)&31 == 0 {
					word = src.Uint64()
				}
				v.c[i] = phases[word&3]
				word >>= 2
			}
		}
	})
}

// splitMix64 is the SplitMix64 output function (Steele, Lea, Flood 2014),
// used to turn structured stream numbers into well-spread PCG seeds.
func splitMix64(x uint64) uint64 {
	x += 0x9e3779b97f4a7c15
	x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9
	x = (x ^ (x >> 27)) * 0x94d049bb133111eb
	return x ^ (x >> 31)
}

// expect returns <v|P|v>, which is real for a Hermitian P.
func (o *vecOps) expect(p cluster.PauliString, v stateVec) float64 {
	ny := bits.OnesCount64(p.X & p.Z)
	if o.real && ny%2 == 1 {
		// An imaginary antisymmetric matrix has zero expectation in every
		// real vector.
		return 0
	}
	o.op.parallel(func(_, ch int) {
		lo, hi := o.op.chunk(ch)
		var sr, si float64
		if o.real {
			for a := lo; a < hi; a++ {
				b := uint64(a) ^ p.X
				t := v.r[a] * v.r[b]
				if bits.OnesCount64(b&p.Z)&1 == 0 {
					sr += t
				} else {
					sr -= t
				}
			}
		} else {
			for a := lo; a < hi; a++ {
				b := uint64(a) ^ p.X
				x, y := v.c[a], v.c[b]
				// conj(x) y
				tr := real(x)*real(y) + imag(x)*imag(y)
				ti := real(x)*imag(y) - imag(x)*real(y)
				if bits.OnesCount64(b&p.Z)&1 == 0 {
					sr += tr
					si += ti
				} else {
					sr -= tr
					si -= ti
				}
			}
		}
		o.part[2*ch], o.part[2*ch+1] = sr, si
	})
	sr, si := o.sums()
	// Multiply by i^{nY} and keep the real part.
	switch ny & 3 {
	case 0:
		return sr
	case 1:
		return -si
	case 2:
		return -sr
	default:
		return si
	}
}
