package cluster

import "math/bits"

// diagonalElements stores the diagonal matrix elements <n|P|n> of every
// operator P of ops in the eigenbasis of s: dst[t*Dim+n] for ops[t] and
// level n in the order of s.values (sector by sector). These do not
// depend on the temperature, so a grid of temperatures needs them once:
// tr(rho P) = sum_n w_n <n|P|n> for the Boltzmann weights w of each beta.
//
// ops act on the qubits of the Hamiltonian s was factorised from, in its
// own frame (the symmetry's frame change is applied here). The cost is
// O(Dim · sector dimension) per operator; operators that leave every
// sector, or are imaginary while s is real, cost nothing (their diagonal
// vanishes). dst must hold len(ops)*Dim values.
func (s *Spectrum) diagonalElements(ops []PauliString, dst []float64) {
	d := s.dim
	if len(dst) < len(ops)*d {
		panic("cluster: diagonalElements destination too short")
	}
	bb := s.basis()
	for t, p := range ops {
		out := dst[t*d : (t+1)*d]
		clear(out)
		p = s.sym.frameOp(p)
		if p.X != 0 {
			if s.real && p.NumY()&1 == 1 {
				continue // real eigenvectors, imaginary antisymmetric P
			}
			if s.sym.sectorKind() != oneSector && bits.OnesCount64(p.X)&1 == 1 {
				continue // P changes the popcount parity: leaves every sector
			}
		}
		for sec := 0; sec < bb.numSectors(); sec++ {
			s.addSectorDiagonal(p, sec, out[bb.start[sec]:bb.start[sec+1]])
		}
	}
}

// addSectorDiagonal adds <n|P|n> for the levels n of sector sec to out;
// p is in the symmetry's frame.
func (s *Spectrum) addSectorDiagonal(p PauliString, sec int, out []float64) {
	bb := s.basis()
	n := bb.dim(sec)
	v := s.vecs[s.vecOff[sec]:]
	re := v[:n*n]
	var im []float64
	if !s.real {
		im = v[n*n : 2*n*n]
	}
	states := bb.states[bb.start[sec]:bb.start[sec+1]]
	if p.X == 0 {
		// <n|P|n> = sum_c s(c) |V[c,n]|^2.
		for c, b := range states {
			sgn := 1.0
			if bits.OnesCount64(uint64(b)&p.Z)&1 == 1 {
				sgn = -1
			}
			for j, x := range re[c*n : (c+1)*n] {
				out[j] += sgn * x * x
			}
			if im != nil {
				for j, x := range im[c*n : (c+1)*n] {
					out[j] += sgn * x * x
				}
			}
		}
		return
	}
	// Pairs {c, c^X} inside the sector each contribute
	// 2 Re(i^k V[c,n] conj(V[c^X,n])), as in Thermal.Expect.
	hb := uint64(1) << uint(63-bits.LeadingZeros64(p.X))
	for c, b := range states {
		e := uint64(b) ^ p.X
		if uint64(b)&hb != 0 || int(bb.sector[e]) != sec {
			continue
		}
		ce := int(bb.local[e])
		ac, ae := re[c*n:(c+1)*n], re[ce*n:(ce+1)*n]
		if im == nil {
			f := 2 * p.realSign(uint64(b))
			for j := range out {
				out[j] += f * ac[j] * ae[j]
			}
			continue
		}
		bc, be := im[c*n:(c+1)*n], im[ce*n:(ce+1)*n]
		switch p.phaseExp(uint64(b)) {
		case 0:
			for j := range out {
				out[j] += 2 * (ac[j]*ae[j] + bc[j]*be[j])
			}
		case 2:
			for j := range out {
				out[j] -= 2 * (ac[j]*ae[j] + bc[j]*be[j])
			}
		case 1: // Re(i z) = -Im z
			for j := range out {
				out[j] -= 2 * (bc[j]*ae[j] - ac[j]*be[j])
			}
		case 3:
			for j := range out {
				out[j] += 2 * (bc[j]*ae[j] - ac[j]*be[j])
			}
		}
	}
}
