package cluster

import (
	"errors"
	"fmt"
	"math"
)

// Levels is the spectrum of a Hamiltonian without eigenvectors: every
// eigenvalue with the sector of its symmetry it belongs to. That is all
// thermodynamics needs (log Z, energy, entropy, heat capacity) and, under
// TotalZ, where every level has a definite total Z, also the
// magnetisation along z and its fluctuation. Each sector is reduced to
// tridiagonal form and only its eigenvalues are computed, which costs a
// fraction of a full diagonalisation.
//
// Levels are stored sector by sector, ascending within each sector.
// Factorize on the same value reuses the memory. A Levels is not safe for
// concurrent modification.
type Levels struct {
	blocks
	values  []float64
	a       []float64 // one sector's matrix
	weights []float64
	sectorW []float64 // Boltzmann weight of each sector
	solver  eigenvalueWork
}

// LevelSums are the thermal averages of Levels.Gibbs.
type LevelSums struct {
	LogZ, Energy, Entropy, HeatCapacity float64
	// ZKnown reports whether every level has a definite total Z (the
	// TotalZ symmetry). Then TotalZ = <M> with M = sum_i Z_i and
	// TotalZVariance = <M^2> - <M>^2, so that adding h M to the
	// Hamiltonian changes <M> at the rate -beta TotalZVariance.
	ZKnown                 bool
	TotalZ, TotalZVariance float64
}

// Factorize computes the eigenvalues of h into l, reusing the memory of
// l, in the blocks of the symmetry DetectSymmetry finds. It refuses more
// than MaxDenseQubits qubits before allocating anything.
func (l *Levels) Factorize(h *Hamiltonian) error {
	if err := h.check(); err != nil {
		return err
	}
	return l.FactorizeWith(h, DetectSymmetry(h))
}

// FactorizeWith is Factorize in the blocks of sym; NoSymmetry gives the
// dense eigenvalue problem. It returns an error when h does not have sym.
func (l *Levels) FactorizeWith(h *Hamiltonian, sym Symmetry) error {
	hf, err := l.setup(h, sym)
	if err != nil {
		return err
	}
	bb := l.basis()
	l.values = grow(l.values, h.Dim())
	for sec := 0; sec < bb.numSectors(); sec++ {
		d := bb.dim(sec)
		vals := l.values[bb.start[sec] : bb.start[sec]+d]
		if l.real {
			l.a = grow(l.a, d*d)
			bb.fillReal(hf, sec, l.a)
			err = l.solver.realValues(d, l.a, vals)
		} else {
			l.a = grow(l.a, 2*d*d)
			bb.fillComplex(hf, sec, l.a[:d*d], l.a[d*d:])
			err = l.solver.hermitianValues(d, l.a[:d*d], l.a[d*d:], vals)
		}
		if err != nil {
			return err
		}
	}
	for _, v := range l.values {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return errors.New("cluster: eigenvalue is not finite")
		}
	}
	return nil
}

// Symmetry returns the symmetry whose blocks the levels were computed in.
func (l *Levels) Symmetry() Symmetry { return l.sym }

// NumQubits returns the number of qubits of the Hamiltonian.
func (l *Levels) NumQubits() int { return l.nq }

// Len returns the number of levels, the Hilbert space dimension.
func (l *Levels) Len() int { return len(l.values) }

// Value returns level i (sector by sector, ascending within a sector).
func (l *Levels) Value(i int) float64 { return l.values[i] }

// Sector returns the label of the sector of level i: the number of qubits
// in state 1 under TotalZ, the parity of that number under the parities
// (in the symmetry's frame: for ParityX, the eigenvalue of prod_i X_i is
// +1 for label 0 and -1 for label 1), 0 without a symmetry.
func (l *Levels) Sector(i int) int {
	bb := l.basis()
	return bb.label[bb.sector[bb.states[i]]]
}

// TotalZ returns the total Z magnetisation sum_i <Z_i> of level i,
// NumQubits - 2·Sector(i), and whether it is defined (TotalZ symmetry).
func (l *Levels) TotalZ(i int) (float64, bool) {
	if l.sym != TotalZ {
		return 0, false
	}
	return float64(l.nq - 2*l.Sector(i)), true
}

// Gibbs returns the thermal sums of the levels at inverse temperature
// beta, which must be finite and non-negative.
func (l *Levels) Gibbs(beta float64) (LevelSums, error) {
	if err := checkBeta(beta); err != nil {
		return LevelSums{}, err
	}
	if len(l.values) == 0 {
		return LevelSums{}, fmt.Errorf("cluster: thermal sums of an empty spectrum")
	}
	l.weights = grow(l.weights, len(l.values))
	g, err := boltzmann(l.values, beta, l.weights)
	if err != nil {
		return LevelSums{}, err
	}
	out := LevelSums{LogZ: g.logZ, Energy: g.energy, Entropy: g.entropy, HeatCapacity: g.heatCap}
	if l.sym == TotalZ {
		// Every level of sector k has total Z n - 2k.
		bb := l.basis()
		out.ZKnown = true
		l.sectorW = grow(l.sectorW, bb.numSectors())
		for sec := range l.sectorW {
			var ws float64
			for _, w := range l.weights[bb.start[sec]:bb.start[sec+1]] {
				ws += w
			}
			l.sectorW[sec] = ws
			out.TotalZ += ws * float64(l.nq-2*bb.label[sec])
		}
		for sec, ws := range l.sectorW {
			dz := float64(l.nq-2*bb.label[sec]) - out.TotalZ
			out.TotalZVariance += ws * dz * dz
		}
	}
	return out, nil
}
