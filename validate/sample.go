package validate

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"sort"

	"golang.org/x/sync/errgroup"

	"warmfit/cluster"
	"warmfit/lattice"
)

// sampleBlock is the number of eigenvectors whose rotated probabilities
// one task accumulates. It is fixed, so that the summation order, and with
// it every bit of the distribution, does not depend on the worker count.
const sampleBlock = 32

// Sampler draws exact snapshots of the Gibbs state of a whole small system
// in product bases: each qubit is measured in the eigenbasis of X, Y or Z.
// Outcome probabilities are the diagonal of U rho U^† with U the product
// of single-qubit rotations taking the measured basis to the computational
// one; they are computed once per basis from the eigenvectors (O(n 2^n)
// per thermally relevant eigenvector) and cached. A Sampler is not safe
// for concurrent use.
type Sampler struct {
	n       int
	spec    *cluster.Spectrum
	weights []float64
	active  int
	cache   map[string]basisDistribution
}

// basisDistribution holds the outcome probabilities of one basis and their
// running sums.
type basisDistribution struct {
	p, cdf []float64
}

// Count is one distinct outcome and how often it occurred. Outcome has one
// character per qubit, character i for qubit i: '0' for the +1 eigenvalue
// of the measured Pauli, '1' for -1.
type Count struct {
	Outcome string
	Count   int
}

// NewSampler diagonalises the n-qubit Hamiltonian sum_k terms[k].Coeff P_k
// (see ExactThermal for the size limit) and prepares sampling from its
// Gibbs state at inverse temperature beta.
func NewSampler(n int, terms []lattice.Term, beta float64) (*Sampler, error) {
	th, err := ExactThermal(n, terms, beta)
	if err != nil {
		return nil, err
	}
	return NewSamplerFromThermal(th), nil
}

// NewSamplerFromThermal samples from an existing Gibbs state.
func NewSamplerFromThermal(th *cluster.Thermal) *Sampler {
	return newSampler(th.Spectrum(), th.Weights(nil))
}

// newSampler samples the mixture sum_k weights[k] |v_k><v_k| of the
// eigenvectors of spec (weights in the order of spec.Values(), summing
// to one).
func newSampler(spec *cluster.Spectrum, weights []float64) *Sampler {
	s := &Sampler{n: spec.NumQubits(), spec: spec, weights: weights, cache: make(map[string]basisDistribution)}
	// Weights below 1e-18/D change no probability by more than 1e-18.
	cut := 1e-18 / float64(len(s.weights))
	for k, w := range s.weights {
		if w >= cut {
			s.active = k + 1
		}
	}
	return s
}

// NumQubits returns the number of qubits.
func (s *Sampler) NumQubits() int { return s.n }

// Distribution returns the exact outcome probabilities in the given basis
// (one letter X, Y or Z per qubit): element o is the probability of the
// outcome whose bit q is the digit of qubit q. The result is a fresh copy.
func (s *Sampler) Distribution(basis string) ([]float64, error) {
	dist, err := s.distribution(basis)
	if err != nil {
		return nil, err
	}
	return append([]float64(nil), dist.p...), nil
}

// Sample draws shots snapshots in the given basis using rng and returns
// the distinct outcomes with their counts, sorted by outcome string. The
// result depends only on the state, the basis and the state of rng.
func (s *Sampler) Sample(basis string, shots int, rng *rand.Rand) ([]Count, error) {
	if shots < 1 {
		return nil, fmt.Errorf("validate: number of shots %d must be positive", shots)
	}
	if rng == nil {
		return nil, errors.New("validate: Sample needs a random number generator")
	}
	dist, err := s.distribution(basis)
	if err != nil {
		return nil, err
	}
	cdf := dist.cdf
	total := cdf[len(cdf)-1]
	counts := make([]int, len(cdf))
	for range shots {
		u := rng.Float64() * total
		// First outcome whose cumulative probability exceeds u; outcomes
		// of zero probability can never be chosen.
		o := sort.Search(len(cdf), func(i int) bool { return cdf[i] > u })
		if o == len(cdf) {
			o = len(cdf) - 1
		}
		counts[o]++
	}
	var out []Count
	for o, c := range counts {
		if c > 0 {
			out = append(out, Count{Outcome: OutcomeString(uint64(o), s.n), Count: c})
		}
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Outcome < out[j].Outcome })
	return out, nil
}

// OutcomeString formats the outcome whose bit q is the digit of qubit q as
// n characters '0'/'1', character i for qubit i.
func OutcomeString(o uint64, n int) string {
	b := make([]byte, n)
	for q := range b {
		b[q] = '0' + byte(o>>uint(q)&1)
	}
	return string(b)
}

// distribution returns the cached outcome distribution of a basis.
func (s *Sampler) distribution(basis string) (basisDistribution, error) {
	if len(basis) != s.n {
		return basisDistribution{}, fmt.Errorf("validate: basis %q has %d letters for %d qubits", basis, len(basis), s.n)
	}
	for i := 0; i < len(basis); i++ {
		switch basis[i] {
		case 'X', 'Y', 'Z':
		default:
			return basisDistribution{}, fmt.Errorf("validate: basis %q: letter %q at qubit %d is not X, Y or Z", basis, basis[i], i)
		}
	}
	if dist, ok := s.cache[basis]; ok {
		return dist, nil
	}
	p, err := s.probabilities(basis)
	if err != nil {
		return basisDistribution{}, err
	}
	cdf := make([]float64, len(p))
	var acc float64
	for i, v := range p {
		acc += v
		cdf[i] = acc
	}
	if math.Abs(acc-1) > 1e-9 {
		return basisDistribution{}, fmt.Errorf("validate: outcome probabilities in basis %q sum to %v", basis, acc)
	}
	dist := basisDistribution{p: p, cdf: cdf}
	s.cache[basis] = dist
	return dist, nil
}

// probabilities computes sum_k w_k |U v_k|^2 over the thermally relevant
// eigenvectors, in fixed blocks summed in order.
func (s *Sampler) probabilities(basis string) ([]float64, error) {
	spec := s.spec
	d := spec.Dim()
	nb := (s.active + sampleBlock - 1) / sampleBlock
	partial := make([][]float64, nb)
	var g errgroup.Group
	g.SetLimit(runtime.GOMAXPROCS(0))
	for b := range nb {
		g.Go(func() error {
			acc := make([]float64, d)
			v := make([]complex128, d)
			for k := b * sampleBlock; k < min(s.active, (b+1)*sampleBlock); k++ {
				v = spec.Vector(k, v)
				rotateToBasis(v, basis)
				w := s.weights[k]
				for i, a := range v {
					acc[i] += w * (real(a)*real(a) + imag(a)*imag(a))
				}
			}
			partial[b] = acc
			return nil
		})
	}
	if err := g.Wait(); err != nil {
		return nil, err
	}
	p := make([]float64, d)
	for _, acc := range partial {
		for i, v := range acc {
			p[i] += v
		}
	}
	for i, v := range p {
		if math.IsNaN(v) || v < -1e-12 {
			return nil, fmt.Errorf("validate: invalid outcome probability %v in basis %q", v, basis)
		}
		p[i] = max(v, 0)
	}
	return p, nil
}

// rotateToBasis applies U = prod_q R_q to v, where R_q takes the
// eigenbasis of the measured letter of qubit q to the computational basis
// (+1 eigenvector to |0>): the Hadamard for X, the Hadamard after
// S^† = diag(1, -i) for Y, the identity for Z.
func rotateToBasis(v []complex128, basis string) {
	const h = 1 / math.Sqrt2
	for q := 0; q < len(basis); q++ {
		bit := 1 << uint(q)
		switch basis[q] {
		case 'X':
			for b := range v {
				if b&bit != 0 {
					continue
				}
				a, c := v[b], v[b|bit]
				v[b], v[b|bit] = (a+c)*h, (a-c)*h
			}
		case 'Y':
			for b := range v {
				if b&bit != 0 {
					continue
				}
				a, c := v[b], v[b|bit]
				ic := complex(imag(c), -real(c)) // -i c
				v[b], v[b|bit] = (a+ic)*h, (a-ic)*h
			}
		}
	}
}
