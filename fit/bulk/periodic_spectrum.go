package bulk

import (
	"cmp"
	"errors"
	"math"
	"math/bits"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// maxPeriodicSites bounds the clusters: the largest S^z block of 14 sites
// has 3432 states, about the most a dense eigensolver handles in seconds.
const maxPeriodicSites = 14

// spinLevels is the spectrum of a periodic cluster at couplings c:
// H(c) = sum_k c_k O_k with O_k the bond sums of ForwardModel.Couplings
// (without the Zeeman term), one entry per eigenstate.
type spinLevels struct {
	energy []float64 // eigenvalues of H(c), kelvin
	sz     []float64 // total S^z of each eigenstate
	mult   []float64 // number of eigenstates merged into the level
	// byEnergy orders the levels by energy (for merging across S^z at zero
	// field) and span is the largest |energy|.
	byEnergy []int
	span     float64
	// diag[k][n] = <n|O_k|n>, the Hellmann–Feynman derivative dE_n/dc_k,
	// averaged over the merged eigenstates; nil when only eigenvalues were
	// computed.
	diag [][]float64
}

// bondOperator is one O_k on a cluster: a sum over bonds of
// xy (S^x S^x + S^y S^y) + zz S^z S^z.
type bondOperator struct {
	bonds  [][2]int
	xy, zz float64
}

// couplingOperators returns O_k for the couplings of the model.
func couplingOperators(pc *periodicCluster, names []string) []bondOperator {
	ops := make([]bondOperator, len(names))
	for k, n := range names {
		switch n {
		case CouplingJxy:
			ops[k] = bondOperator{bonds: pc.nn, xy: 1}
		case CouplingJz:
			ops[k] = bondOperator{bonds: pc.nn, zz: 1}
		case CouplingJ2:
			ops[k] = bondOperator{bonds: pc.nnn, xy: 1, zz: 1}
		default:
			panic("bulk: unknown coupling " + n)
		}
	}
	return ops
}

// sector is the basis of one S^z block: the states with nUp up spins
// (bit set = up), and the index of each state in the block.
type sector struct {
	states []uint32
	index  map[uint32]int
}

func newSector(n, nUp int) *sector {
	s := &sector{index: map[uint32]int{}}
	for b := uint32(0); b < 1<<uint(n); b++ {
		if bits.OnesCount32(b) == nUp {
			s.index[b] = len(s.states)
			s.states = append(s.states, b)
		}
	}
	return s
}

// apply adds coeff * O v to dst within the sector: S^z S^z is diagonal
// (+1/4 for parallel spins, -1/4 otherwise) and S^x S^x + S^y S^y =
// (S^+ S^- + S^- S^+)/2 exchanges antiparallel spins with amplitude 1/2.
func (s *sector) apply(op bondOperator, coeff float64, v, dst []float64) {
	for a, st := range s.states {
		for _, b := range op.bonds {
			mi, mj := uint32(1)<<uint(b[0]), uint32(1)<<uint(b[1])
			parallel := (st&mi == 0) == (st&mj == 0)
			if parallel {
				dst[a] += coeff * op.zz * 0.25 * v[a]
				continue
			}
			dst[a] -= coeff * op.zz * 0.25 * v[a]
			if op.xy != 0 {
				dst[s.index[st^mi^mj]] += coeff * op.xy * 0.5 * v[a]
			}
		}
	}
}

// matrix returns the dense matrix of sum_k c_k O_k in the sector, with
// the matrix elements of apply.
func (s *sector) matrix(ops []bondOperator, c []float64) *mat.SymDense {
	d := len(s.states)
	h := mat.NewSymDense(d, nil)
	for k, op := range ops {
		if c[k] == 0 {
			continue
		}
		for a, st := range s.states {
			for _, b := range op.bonds {
				mi, mj := uint32(1)<<uint(b[0]), uint32(1)<<uint(b[1])
				if (st&mi == 0) == (st&mj == 0) {
					h.SetSym(a, a, h.At(a, a)+c[k]*op.zz*0.25)
					continue
				}
				h.SetSym(a, a, h.At(a, a)-c[k]*op.zz*0.25)
				if to := s.index[st^mi^mj]; op.xy != 0 && to > a {
					h.SetSym(a, to, h.At(a, to)+c[k]*op.xy*0.5)
				}
			}
		}
	}
	return h
}

// diagonalizeCluster returns the levels of H(c) on the cluster, block by
// block in S^z. Blocks with S^z < 0 are the spin-flipped copies of those
// with S^z > 0 (H(c) has no field), so only S^z >= 0 is diagonalised.
// With withDiag the eigenvectors are kept long enough to form <n|O_k|n>.
func diagonalizeCluster(pc *periodicCluster, ops []bondOperator, c []float64, withDiag bool) (*spinLevels, error) {
	n := pc.sites
	lv := &spinLevels{}
	if withDiag {
		lv.diag = make([][]float64, len(ops))
	}
	for nUp := (n + 1) / 2; nUp <= n; nUp++ {
		sec := newSector(n, nUp)
		var eig mat.EigenSym
		if !eig.Factorize(sec.matrix(ops, c), withDiag) {
			return nil, errors.New("bulk: eigensolver did not converge on a periodic cluster block")
		}
		vals := eig.Values(nil)
		var diag [][]float64
		if withDiag {
			diag = blockDiagonals(sec, ops, &eig)
		}
		sz := float64(nUp) - float64(n)/2
		copies := 2
		if 2*nUp == n {
			copies = 1
		}
		for r := 0; r < copies; r++ {
			for i, e := range vals {
				if math.IsNaN(e) || math.IsInf(e, 0) {
					return nil, errors.New("bulk: eigenvalue is not finite")
				}
				lv.energy = append(lv.energy, e)
				lv.sz = append(lv.sz, sz*float64(1-2*r))
				lv.mult = append(lv.mult, 1)
				for k := range diag {
					lv.diag[k] = append(lv.diag[k], diag[k][i])
				}
			}
		}
	}
	return mergeDegenerate(lv), nil
}

// mergeDegenerate merges eigenstates of equal S^z whose energies agree to
// rounding (1e-10 of the spectral range) into one level with a
// multiplicity; their Hellmann–Feynman diagonals are averaged, which
// leaves every thermal trace unchanged (only the trace of O over a
// degenerate space enters). The SU(2) multiplets and lattice symmetries
// make the merged spectrum several times shorter.
func mergeDegenerate(lv *spinLevels) *spinLevels {
	idx := make([]int, len(lv.energy))
	span := 0.0
	for i := range idx {
		idx[i] = i
		span = max(span, math.Abs(lv.energy[i]))
	}
	slices.SortFunc(idx, func(a, b int) int {
		if c := cmp.Compare(lv.sz[a], lv.sz[b]); c != 0 {
			return c
		}
		return cmp.Compare(lv.energy[a], lv.energy[b])
	})
	tol := 1e-10 * max(span, 1e-300)
	out := &spinLevels{}
	if lv.diag != nil {
		out.diag = make([][]float64, len(lv.diag))
	}
	for _, i := range idx {
		last := len(out.energy) - 1
		if last >= 0 && out.sz[last] == lv.sz[i] && lv.energy[i]-out.energy[last] <= tol {
			m := out.mult[last]
			for k := range out.diag {
				out.diag[k][last] = (out.diag[k][last]*m + lv.diag[k][i]) / (m + 1)
			}
			out.mult[last] = m + 1
			continue
		}
		out.energy = append(out.energy, lv.energy[i])
		out.sz = append(out.sz, lv.sz[i])
		out.mult = append(out.mult, 1)
		for k := range out.diag {
			out.diag[k] = append(out.diag[k], lv.diag[k][i])
		}
	}
	out.span = span
	out.byEnergy = make([]int, len(out.energy))
	for i := range out.byEnergy {
		out.byEnergy[i] = i
	}
	slices.SortFunc(out.byEnergy, func(a, b int) int { return cmp.Compare(out.energy[a], out.energy[b]) })
	return out
}

// blockDiagonals returns <n|O_k|n> for the eigenvectors of one block.
func blockDiagonals(sec *sector, ops []bondOperator, eig *mat.EigenSym) [][]float64 {
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	d := len(sec.states)
	out := make([][]float64, len(ops))
	v := make([]float64, d)
	ov := make([]float64, d)
	for k, op := range ops {
		out[k] = make([]float64, d)
		for i := range d {
			mat.Col(v, i, &vecs)
			clear(ov)
			sec.apply(op, 1, v, ov)
			var s float64
			for a := range d {
				s += v[a] * ov[a]
			}
			out[k][i] = s
		}
	}
	return out
}
