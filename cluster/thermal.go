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
// The state inherits the block structure of its Spectrum: rho is block
// diagonal in the sectors of the symmetry, which makes expectations of
// operators that leave every sector (such as X_i under TotalZ) exactly
// zero and restricts the Kubo–Mori sums to pairs of sectors an operator
// connects.
//
// A Thermal refers to its Spectrum, which must not be re-factorised while
// the Thermal is in use. Set reuses the memory of a Thermal. A Thermal is
// not safe for concurrent use; give each goroutine its own.
type Thermal struct {
	spec *Spectrum
	beta float64

	gibbsSums
	weights []float64 // normalised Boltzmann weights, in the order of Spectrum.values
	// active[s] counts the levels of sector s with weight >= weightCut/Dim:
	// a prefix of the sector, whose levels ascend.
	active []int

	// From uOff[s], u holds sqrt(w_k) V_s[c,k] for the active levels k of
	// sector s, row c (the sector's c-th basis state) contiguous; in the
	// complex case row c is [real parts, imaginary parts].
	u     []float64
	uOff  []int
	pop   []float64 // diagonal of rho in the basis of the symmetry's frame
	sqrtW []float64

	resp responseWork
}

// gibbsSums are the Boltzmann sums of a set of levels at one beta.
type gibbsSums struct {
	logZ, energy, entropy, heatCap float64
}

// boltzmann computes the Gibbs sums of the levels e (in any order) at
// inverse temperature beta and stores their normalised weights in w.
// Every exponent is taken relative to the lowest level, so any finite
// beta gives finite sums.
func boltzmann(e []float64, beta float64, w []float64) (gibbsSums, error) {
	low := 0
	for k, v := range e {
		if v < e[low] {
			low = k
		}
	}
	e0 := e[low]
	// x_k = exp(-beta (E_k - E_0)) is in (0, 1] and x_low = 1, so
	// Z = exp(-beta E_0) (1 + sum_{k != low} x_k) never overflows.
	var rest float64
	for k, v := range e {
		w[k] = math.Exp(-beta * (v - e0))
		if k != low {
			rest += w[k]
		}
	}
	logShifted := math.Log1p(rest)
	var g gibbsSums
	g.logZ = -beta*e0 + logShifted
	norm := 1 / (1 + rest)
	var excite float64 // <H> - E_0, a sum of non-negative terms
	for k, v := range e {
		w[k] *= norm
		excite += w[k] * (v - e0)
	}
	g.energy = e0 + excite
	g.entropy = beta*excite + logShifted
	// beta^2 Var(H), with beta inside the square and vanishing weights
	// skipped so that a huge beta cannot produce Inf·0.
	for k, v := range e {
		if w[k] == 0 {
			continue
		}
		x := beta * ((v - e0) - excite)
		g.heatCap += w[k] * x * x
	}
	if math.IsNaN(g.logZ) || math.IsInf(g.logZ, 0) || math.IsNaN(g.heatCap) || math.IsInf(g.heatCap, 0) {
		return g, fmt.Errorf("cluster: thermal sums not finite at beta %v", beta)
	}
	return g, nil
}

// checkBeta reports an inverse temperature that is not finite and
// non-negative.
func checkBeta(beta float64) error {
	if math.IsNaN(beta) || math.IsInf(beta, 0) || beta < 0 {
		return fmt.Errorf("cluster: inverse temperature %v must be finite and non-negative", beta)
	}
	return nil
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
	if err := checkBeta(beta); err != nil {
		return err
	}
	if s == nil || s.dim == 0 {
		return errors.New("cluster: thermal state of an empty spectrum")
	}
	t.spec, t.beta = s, beta
	t.weights = grow(t.weights, s.dim)
	g, err := boltzmann(s.values, beta, t.weights)
	if err != nil {
		return err
	}
	t.gibbsSums = g
	bb := s.basis()
	cut := weightCut / float64(s.dim)
	t.active = t.active[:0]
	for sec := 0; sec < bb.numSectors(); sec++ {
		na := 0
		for j, w := range t.weights[bb.start[sec]:bb.start[sec+1]] {
			if w >= cut {
				na = j + 1
			}
		}
		t.active = append(t.active, na)
	}
	t.fillAmplitudes()
	return nil
}

// width returns the length of a row of u in sector sec.
func (t *Thermal) width(sec int) int {
	if t.spec.real {
		return t.active[sec]
	}
	return 2 * t.active[sec]
}

// fillAmplitudes computes u = V sqrt(w) on the active states of every
// sector and the diagonal of rho.
func (t *Thermal) fillAmplitudes() {
	s := t.spec
	bb := s.basis()
	t.uOff = t.uOff[:0]
	total := 0
	for sec := 0; sec < bb.numSectors(); sec++ {
		t.uOff = append(t.uOff, total)
		total += bb.dim(sec) * t.width(sec)
	}
	t.u = grow(t.u, total)
	t.pop = grow(t.pop, s.dim)
	t.sqrtW = grow(t.sqrtW, s.dim)
	for k, w := range t.weights {
		t.sqrtW[k] = math.Sqrt(w)
	}
	for sec := 0; sec < bb.numSectors(); sec++ {
		d, na, width := bb.dim(sec), t.active[sec], t.width(sec)
		sw := t.sqrtW[bb.start[sec] : bb.start[sec]+na]
		v := s.vecs[s.vecOff[sec]:]
		for c, b := range bb.states[bb.start[sec]:bb.start[sec+1]] {
			row := t.u[t.uOff[sec]+c*width : t.uOff[sec]+(c+1)*width]
			for k, x := range v[c*d : c*d+na] {
				row[k] = x * sw[k]
			}
			if !s.real {
				for k, x := range v[d*d+c*d : d*d+c*d+na] {
					row[na+k] = x * sw[k]
				}
			}
			t.pop[b] = floats.Dot(row, row)
		}
	}
}

// row returns the row of u of basis state b.
func (t *Thermal) row(b uint64) []float64 {
	bb := t.spec.basis()
	sec := int(bb.sector[b])
	w := t.width(sec)
	o := t.uOff[sec] + int(bb.local[b])*w
	return t.u[o : o+w]
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
	for k, i := range t.spec.rank {
		dst[k] = t.weights[i]
	}
	return dst
}

// Expect returns tr(rho P). P must act within the qubits of the
// Hamiltonian; otherwise Expect panics. The cost is O(Dim) for diagonal
// operators (only Z letters, in the symmetry's frame) and O(Dim · active
// states of a sector) otherwise; operators that move every state out of
// its sector have expectation zero at no cost beyond O(Dim).
func (t *Thermal) Expect(p PauliString) float64 {
	s := t.spec
	if !p.within(s.nq) {
		panic(fmt.Sprintf("cluster: Pauli string acts outside qubits 0..%d", s.nq-1))
	}
	p = s.sym.frameOp(p)
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
	if s.sym.sectorKind() != oneSector && bits.OnesCount64(p.X)&1 == 1 {
		// P changes the popcount parity, so it leaves every sector.
		return 0
	}
	sector := s.basis().sector
	hb := uint64(1) << uint(63-bits.LeadingZeros64(p.X))
	var sum float64
	// Pairs {c, c^X} inside one sector (rho vanishes between sectors).
	for c := uint64(0); c < uint64(d); c++ {
		e := c ^ p.X
		if c&hb != 0 || sector[c] != sector[e] {
			continue
		}
		rc, re := t.row(c), t.row(e)
		if s.real {
			// P is symmetric, so both matrix elements agree.
			if (nY>>1+bits.OnesCount64(c&p.Z))&1 == 0 {
				sum += floats.Dot(rc, re)
			} else {
				sum -= floats.Dot(rc, re)
			}
			continue
		}
		// Complex: the pair contributes 2 Re(i^k rho[c, c^X]) with
		// rho[c,e] = sum_k u_ck conj(u_ek).
		na := len(rc) / 2
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
