package cluster

// uniformSymmetry records the conserved quantities of a uniform model's
// zero-field Hamiltonian H0 = sum_p value_p H_p at given values. They are
// decided by the package's detector (Symmetry.holds) on the operator of
// each bond kind on two qubits and of each site kind on one: a cluster
// Hamiltonian is a sum of copies of these on distinct supports, and both
// total-Z conservation (one condition per support, see conservesTotalZ)
// and the parities (a property of each term) hold for the sum exactly
// when they hold for every copy.
type uniformSymmetry struct {
	// conservesSz: H0 commutes with the total S^z (TotalZ).
	conservesSz bool
	// flip: H0 commutes with the spin flip F = prod_i X_i (ParityX). It
	// maps the S^z = m sector onto -m (used only with conservesSz; the
	// field is added separately as -h m).
	flip bool
	// flipSign[p] is +1 when F commutes with H_p and -1 when it
	// anticommutes; the Hellmann–Feynman elements <n|H_p|n> of a state's
	// spin-flipped image carry this sign. flip is false when a coupling
	// has terms of both kinds.
	flipSign []float64
	// diagonal: H0 holds only Z letters, so it is diagonal in the
	// computational basis (classical models).
	diagonal bool
	// su2: every coupling is isotropic exchange, so the clusters are
	// diagonalised by total spin (uniform_su2.go); set by Evaluate.
	su2 bool
}

func (m *UniformModel) symmetry(values []float64) uniformSymmetry {
	s := uniformSymmetry{conservesSz: true, flip: true, diagonal: true}
	type kind struct {
		site bool
		k    int
	}
	byKind := map[kind]*Hamiltonian{}
	var order []kind
	for p, cp := range m.Couplings {
		for _, t := range cp.Terms {
			key := kind{len(t.Pauli) == 1, t.Kind}
			h := byKind[key]
			if h == nil {
				h = &Hamiltonian{NumQubits: len(t.Pauli)}
				byKind[key] = h
				order = append(order, key)
			}
			var op PauliString
			for i := 0; i < len(t.Pauli); i++ {
				op.setLetter(uint64(1)<<uint(i), t.Pauli[i])
			}
			h.Ops = append(h.Ops, op)
			h.Coeffs = append(h.Coeffs, values[p]*t.Weight)
		}
	}
	for _, key := range order {
		h := byKind[key]
		s.conservesSz = s.conservesSz && TotalZ.holds(h)
		s.flip = s.flip && ParityX.holds(h)
		for k, op := range h.Ops {
			if h.Coeffs[k] != 0 && op.X != 0 {
				s.diagonal = false
			}
		}
	}
	s.flipSign = make([]float64, len(m.Couplings))
	for p, cp := range m.Couplings {
		even, odd := false, false
		for _, t := range cp.Terms {
			if t.Weight == 0 {
				continue
			}
			var op PauliString
			for i := 0; i < len(t.Pauli); i++ {
				op.setLetter(uint64(1)<<uint(i), t.Pauli[i])
			}
			if ParityX.commutesWithParity(op) {
				even = true
			} else {
				odd = true
			}
		}
		s.flipSign[p] = 1
		if odd {
			s.flipSign[p] = -1
		}
		if even && odd {
			s.flip = false
		}
	}
	return s
}

// describe names the blocks used, for the result.
func (s uniformSymmetry) describe() string {
	switch {
	case s.su2:
		return "total spin S (isotropic exchange), each level a multiplet of 2S+1"
	case s.conservesSz && s.diagonal:
		return "diagonal (classical); total S^z sectors"
	case s.conservesSz && s.flip:
		return "total S^z sectors, m >= 0 with spin-flip images, m = 0 split by spin-flip parity"
	case s.conservesSz:
		return "total S^z sectors"
	}
	return "none (full Hilbert space)"
}
