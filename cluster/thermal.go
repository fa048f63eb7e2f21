package cluster

import (
	"errors"
	"fmt"
	"math"
	"math/bits"

	"gonum.org/v1/gonum/floats"
)

// weightCut is the total Boltzmann weight the thermal sums may drop:
// states whose normalised weight is below weightCut/Dim are left out of
// expectations and responses, which changes results by less than
// weightCut in absolute terms and makes low temperatures cheap.
const weightCut = 1e-18

// Thermal is the Gibbs state rho = exp(-beta H)/Z of a diagonalised
// Hamiltonian. All quantities are evaluated relative to the ground-state
// energy (log-sum-exp), so any finite beta gives finite results.
//
// A Thermal refers to its Spectrum, which must not be re-factorised while
// the Thermal is in use. Set reuses the memory of a Thermal. A Thermal is
// not safe for concurrent use; give each goroutine its own.
type Thermal struct {
	spec *Spectrum
	beta float64

	logZ, energy, entropy, heatCap float64
	weights                        []float64 // normalised Boltzmann weights, ascending energy
	active                         int       // states with weight >= weightCut/Dim: a prefix

	// u holds sqrt(w_k) V[c,k] for k < active, row c contiguous; in the
	// complex case row c is [real parts, imaginary parts] (length 2·active).
	u     []float64
	pop   []float64 // diagonal of rho in the computational basis
	sqrtW []float64

	resp responseWork
}

// NewThermal returns the Gibbs state of s at inverse temperature beta.
// beta must be finite and non-negative; beta = 0 is infinite temperature.
func NewThermal(s *Spectrum, beta float64) (*Thermal, error) {
	var t Thermal
	if err := t.Set(s, beta); err != nil {
		return nil, err
	}
	return &t, nil
}

// Set makes t the Gibbs state of s at inverse temperature beta, reusing
// the memory of t.
func (t *Thermal) Set(s *Spectrum, beta float64) error {
	if math.IsNaN(beta) || math.IsInf(beta, 0) || beta < 0 {
		return fmt.Errorf("cluster: inverse temperature %v must be finite and non-negative", beta)
	}
	if s == nil || s.dim == 0 {
		return errors.New("cluster: thermal state of an empty spectrum")
	}
	t.spec, t.beta = s, beta
	d := s.dim
	e := s.values
	e0 := e[0]

	// x_k = exp(-beta (E_k - E_0)) is in (0, 1] and x_0 = 1, so
	// Z = exp(-beta E_0) (1 + sum_{k>0} x_k) never overflows.
	t.weights = grow(t.weights, d)
	w := t.weights
	rest := 0.0
	w[0] = 1
	for k := 1; k < d; k++ {
		w[k] = math.Exp(-beta * (e[k] - e0))
		rest += w[k]
	}
	logShifted := math.Log1p(rest)
	t.logZ = -beta*e0 + logShifted
	norm := 1 / (1 + rest)
	cut := weightCut / float64(d)
	t.active = 0
	var excite float64 // <H> - E_0, a sum of non-negative terms
	for k := range w {
		w[k] *= norm
		if w[k] >= cut {
			t.active = k + 1
		}
		excite += w[k] * (e[k] - e0)
	}
	t.energy = e0 + excite
	t.entropy = beta*excite + logShifted
	// beta^2 Var(H), with beta inside the square and vanishing weights
	// skipped so that a huge beta cannot produce Inf·0.
	t.heatCap = 0
	for k := range w {
		if w[k] == 0 {
			continue
		}
		x := beta * ((e[k] - e0) - excite)
		t.heatCap += w[k] * x * x
	}
	if math.IsNaN(t.logZ) || math.IsInf(t.logZ, 0) || math.IsNaN(t.heatCap) || math.IsInf(t.heatCap, 0) {
		return fmt.Errorf("cluster: thermal sums not finite at beta %v", beta)
	}
	t.fillAmplitudes()
	return nil
}

// fillAmplitudes computes u = V sqrt(w) on the active states and the
// diagonal of rho.
func (t *Thermal) fillAmplitudes() {
	s := t.spec
	d, na := s.dim, t.active
	width := na
	if !s.real {
		width = 2 * na
	}
	t.u = grow(t.u, d*width)
	t.pop = grow(t.pop, d)
	t.sqrtW = grow(t.sqrtW, na)
	sw := t.sqrtW
	for k := range sw {
		sw[k] = math.Sqrt(t.weights[k])
	}
	for c := 0; c < d; c++ {
		row := t.u[c*width : (c+1)*width]
		vr := s.vecs[c*d : c*d+na]
		for k, v := range vr {
			row[k] = v * sw[k]
		}
		if !s.real {
			vi := s.vecs[d*d+c*d : d*d+c*d+na]
			for k, v := range vi {
				row[na+k] = v * sw[k]
			}
		}
		t.pop[c] = floats.Dot(row, row)
	}
}

// Spectrum returns the spectrum t was built from.
func (t *Thermal) Spectrum() *Spectrum { return t.spec }

// Beta returns the inverse temperature.
func (t *Thermal) Beta() float64 { return t.beta }

// LogZ returns log tr exp(-beta H).
func (t *Thermal) LogZ() float64 { return t.logZ }

// Energy returns <H>.
func (t *Thermal) Energy() float64 { return t.energy }

// Entropy returns the von Neumann entropy -tr rho log rho in nats,
// evaluated as beta (<H> - E_0) + log(Z exp(beta E_0)) so that both terms
// are non-negative.
func (t *Thermal) Entropy() float64 { return t.entropy }

// HeatCapacity returns beta^2 (<H^2> - <H>^2).
func (t *Thermal) HeatCapacity() float64 { return t.heatCap }

// Weights stores the normalised Boltzmann weights exp(-beta E_k)/Z, in the
// order of Spectrum().Values(), in dst (allocated when too short) and
// returns it.
func (t *Thermal) Weights(dst []float64) []float64 {
	if cap(dst) < len(t.weights) {
		dst = make([]float64, len(t.weights))
	}
	dst = dst[:len(t.weights)]
	copy(dst, t.weights)
	return dst
}

// Expect returns tr(rho P). P must act within the qubits of the
// Hamiltonian; otherwise Expect panics. The cost is O(Dim) for diagonal
// operators (only Z letters) and O(Dim · active states) otherwise.
func (t *Thermal) Expect(p PauliString) float64 {
	s := t.spec
	if !p.within(s.nq) {
		panic(fmt.Sprintf("cluster: Pauli string acts outside qubits 0..%d", s.nq-1))
	}
	d := s.dim
	if p.X == 0 {
		var sum float64
		for c := 0; c < d; c++ {
			if bits.OnesCount64(uint64(c)&p.Z)&1 == 0 {
				sum += t.pop[c]
			} else {
				sum -= t.pop[c]
			}
		}
		return sum
	}
	nY := p.NumY()
	if s.real && nY&1 == 1 {
		// rho is real symmetric and P imaginary antisymmetric.
		return 0
	}
	na := t.active
	hb := uint64(1) << uint(63-bits.LeadingZeros64(p.X))
	var sum float64
	if s.real {
		// Pairs {c, c^X}: P is symmetric, so both matrix elements agree.
		for c := uint64(0); c < uint64(d); c++ {
			if c&hb != 0 {
				continue
			}
			dc := floats.Dot(t.u[c*uint64(na):(c+1)*uint64(na)], t.u[(c^p.X)*uint64(na):((c^p.X)+1)*uint64(na)])
			if (nY>>1+bits.OnesCount64(c&p.Z))&1 == 0 {
				sum += dc
			} else {
				sum -= dc
			}
		}
		return 2 * sum
	}
	// Complex: the pair contributes 2 Re(i^k rho[c, c^X]) with
	// rho[c,e] = sum_k u_ck conj(u_ek).
	w := 2 * na
	for c := uint64(0); c < uint64(d); c++ {
		if c&hb != 0 {
			continue
		}
		e := c ^ p.X
		rc := t.u[c*uint64(w) : (c+1)*uint64(w)]
		re := t.u[e*uint64(w) : (e+1)*uint64(w)]
		switch p.phaseExp(c) {
		case 0:
			sum += floats.Dot(rc, re)
		case 2:
			sum -= floats.Dot(rc, re)
		case 1: // Re(i rho) = -Im rho
			sum -= floats.Dot(rc[na:], re[:na]) - floats.Dot(rc[:na], re[na:])
		case 3:
			sum += floats.Dot(rc[na:], re[:na]) - floats.Dot(rc[:na], re[na:])
		}
	}
	return 2 * sum
}

// ExpectAll stores tr(rho ops[i]) in dst[i]. dst must have at least
// len(ops) elements.
func (t *Thermal) ExpectAll(ops []PauliString, dst []float64) {
	if len(dst) < len(ops) {
		panic(fmt.Sprintf("cluster: ExpectAll needs %d destination slots, have %d", len(ops), len(dst)))
	}
	for i, p := range ops {
		dst[i] = t.Expect(p)
	}
}
