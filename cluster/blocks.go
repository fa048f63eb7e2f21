package cluster

import (
	"fmt"
	"math"
	"math/bits"
)

// sectorKind is how a symmetry groups the basis states of its frame.
type sectorKind uint8

const (
	oneSector  sectorKind = iota // the whole space
	byPopcount                   // number of qubits in state 1 (TotalZ)
	byParity                     // its parity (ParityZ, ParityX, ParityY)
)

func (s Symmetry) sectorKind() sectorKind {
	switch s {
	case TotalZ:
		return byPopcount
	case ParityZ, ParityX, ParityY:
		return byParity
	}
	return oneSector
}

// blockBasis groups the computational basis states (of the symmetry's
// frame) of nq qubits into sectors. Empty sectors are left out, so every
// sector has at least one state.
type blockBasis struct {
	nq   int
	kind sectorKind
	// Sector s holds states[start[s]:start[s+1]], ascending; label[s] is
	// its popcount (byPopcount), its parity (byParity) or 0.
	start  []int
	label  []int
	states []uint32
	// sector[b] and local[b] locate basis state b: states[start[sector[b]]+local[b]] == b.
	sector []uint8
	local  []int32
}

// build sets up the sectors of kind for nq qubits, keeping the current
// ones when they already match.
func (bb *blockBasis) build(nq int, kind sectorKind) {
	if bb.states != nil && bb.nq == nq && bb.kind == kind {
		return
	}
	bb.nq, bb.kind = nq, kind
	d := 1 << uint(nq)
	key := func(b int) int {
		switch kind {
		case byPopcount:
			return bits.OnesCount(uint(b))
		case byParity:
			return bits.OnesCount(uint(b)) & 1
		}
		return 0
	}
	counts := make([]int, nq+1)
	for b := 0; b < d; b++ {
		counts[key(b)]++
	}
	slot := make([]int, nq+1) // sector index of each key, -1 when empty
	bb.start, bb.label = bb.start[:0], bb.label[:0]
	pos := 0
	for k, c := range counts {
		slot[k] = -1
		if c == 0 {
			continue
		}
		slot[k] = len(bb.label)
		bb.label = append(bb.label, k)
		bb.start = append(bb.start, pos)
		pos += c
	}
	bb.start = append(bb.start, pos)
	bb.states = make([]uint32, d)
	bb.sector = make([]uint8, d)
	bb.local = make([]int32, d)
	fill := append([]int(nil), bb.start[:len(bb.label)]...)
	for b := 0; b < d; b++ {
		s := slot[key(b)]
		bb.sector[b] = uint8(s)
		bb.local[b] = int32(fill[s] - bb.start[s])
		bb.states[fill[s]] = uint32(b)
		fill[s]++
	}
}

// numSectors returns the number of (non-empty) sectors.
func (bb *blockBasis) numSectors() int { return len(bb.label) }

// dim returns the dimension of sector s.
func (bb *blockBasis) dim(s int) int { return bb.start[s+1] - bb.start[s] }

// fillReal writes the real matrix of h restricted to sector s, row-major,
// into a (length dim(s)^2). Matrix elements leading out of the sector
// are skipped: h must have the symmetry, so they cancel between terms.
// Operators with an odd number of Y letters must have zero coefficients.
func (bb *blockBasis) fillReal(h *Hamiltonian, s int, a []float64) {
	states := bb.states[bb.start[s]:bb.start[s+1]]
	d := len(states)
	clear(a[:d*d])
	for k, p := range h.Ops {
		c := h.Coeffs[k]
		if c == 0 {
			continue
		}
		for i, b := range states {
			t := uint64(b) ^ p.X
			if int(bb.sector[t]) != s {
				continue
			}
			a[int(bb.local[t])*d+i] += c * p.realSign(uint64(b))
		}
	}
}

// fillComplex writes the real and imaginary parts of the Hermitian
// matrix of h restricted to sector s into re and im.
func (bb *blockBasis) fillComplex(h *Hamiltonian, s int, re, im []float64) {
	states := bb.states[bb.start[s]:bb.start[s+1]]
	d := len(states)
	clear(re[:d*d])
	clear(im[:d*d])
	for k, p := range h.Ops {
		c := h.Coeffs[k]
		if c == 0 {
			continue
		}
		for i, b := range states {
			t := uint64(b) ^ p.X
			if int(bb.sector[t]) != s {
				continue
			}
			idx := int(bb.local[t])*d + i
			switch p.phaseExp(uint64(b)) {
			case 0:
				re[idx] += c
			case 1:
				im[idx] += c
			case 2:
				re[idx] -= c
			case 3:
				im[idx] -= c
			}
		}
	}
}

// reach returns the set of sectors (bit t for sector t) that p maps the
// states of sector s to.
func (bb *blockBasis) reach(p PauliString, s int) uint64 {
	var m uint64
	for _, b := range bb.states[bb.start[s]:bb.start[s+1]] {
		m |= 1 << bb.sector[uint64(b)^p.X]
	}
	return m
}

// blocks is the part of a diagonalisation that Spectrum and Levels share:
// the symmetry, the Hamiltonian in its frame and the sector basis.
type blocks struct {
	nq   int
	sym  Symmetry
	real bool
	// bases keeps the sector basis of every number of qubits, since the
	// expansion alternates between cluster sizes; bases[nq] is current.
	bases [MaxDenseQubits + 1]blockBasis
	frame Hamiltonian // scratch for the relabelled operators
}

// basis returns the sector basis of the current problem.
func (bk *blocks) basis() *blockBasis { return &bk.bases[bk.nq] }

// setup checks h and the symmetry and returns h in the symmetry's frame.
// It refuses more than MaxDenseQubits qubits before allocating anything.
func (bk *blocks) setup(h *Hamiltonian, sym Symmetry) (*Hamiltonian, error) {
	if h.NumQubits > MaxDenseQubits {
		return nil, fmt.Errorf("cluster: %d qubits exceed the dense diagonalisation limit of %d (MaxDenseQubits); use the matrix-free thermal typicality of package validate for larger systems",
			h.NumQubits, MaxDenseQubits)
	}
	if err := h.check(); err != nil {
		return nil, err
	}
	if sym > ParityY {
		panic(fmt.Sprintf("cluster: unknown symmetry %d", uint8(sym)))
	}
	if !sym.holds(h) {
		return nil, fmt.Errorf("cluster: the Hamiltonian does not have the symmetry %v", sym)
	}
	hf := sym.inFrame(h, &bk.frame)
	bk.nq, bk.sym = h.NumQubits, sym
	bk.real = hf.realMatrix()
	bk.bases[h.NumQubits].build(h.NumQubits, sym.sectorKind())
	return hf, nil
}

// blockSquares returns the sum over the sectors of sym on nq qubits of
// the square of their dimensions (the size of the eigenvector blocks).
func blockSquares(nq int, sym Symmetry) float64 { return sectorPowerSum(nq, sym, 2) }

// blockCount returns the number of sectors of sym on nq qubits.
func blockCount(nq int, sym Symmetry) float64 {
	switch sym.sectorKind() {
	case byPopcount:
		return float64(nq + 1)
	case byParity:
		return 2
	}
	return 1
}

// blockWork returns the cost of diagonalising nq qubits with the blocks
// of sym, in units of one dense D^3 = 8^nq: the sum over sectors of the
// cube of their dimensions.
func blockWork(nq int, sym Symmetry) float64 { return sectorPowerSum(nq, sym, 3) }

// sectorPowerSum returns the sum over the sectors of sym on nq qubits of
// their dimensions to the given power.
func sectorPowerSum(nq int, sym Symmetry, power int) float64 {
	dense := float64(int(1) << power) // (2^nq)^power = dense^nq
	switch sym.sectorKind() {
	case byPopcount:
		var w, binom float64 = 0, 1
		for k := 0; k <= nq; k++ {
			term := binom
			for range power - 1 {
				term *= binom
			}
			w += term
			binom = binom * float64(nq-k) / float64(k+1)
		}
		return w
	case byParity:
		if nq == 0 {
			return 1
		}
		return 2 * math.Pow(dense, float64(nq-1))
	}
	return math.Pow(dense, float64(nq))
}
