package cluster

import (
	"math"
	"strings"
)

// uniformSymmetry records the conserved quantities of a uniform model's
// zero-field Hamiltonian H0 = sum_p value_p H_p at given values, read off
// the templates: every bond of a kind carries the same two-site operator,
// so H0 commutes with a symmetry of every bond and site operator exactly
// when it commutes with the cluster Hamiltonian of every class.
type uniformSymmetry struct {
	// conservesSz: H0 commutes with the total S^z. On a bond, sum c_ab
	// a_i b_j does exactly when c_XX = c_YY, c_XY = -c_YX and the mixed
	// XZ, ZX, YZ, ZY vanish (derived: it is then a combination of ZZ,
	// S+S- + S-S+ and i(S+S- - S-S+)); on a site, when only Z appears.
	conservesSz bool
	// flip: H0 commutes with the spin flip F = prod_i X_i, which holds
	// for a Pauli string with an even number of Y and Z letters. It maps
	// the S^z = m sector onto -m (used only with conservesSz; the field
	// is added separately as -h m).
	flip bool
	// flipSign[p] is +1 when F commutes with H_p and -1 when it
	// anticommutes; the Hellmann–Feynman elements <n|H_p|n> of a state's
	// spin-flipped image carry this sign. flip is false when a coupling
	// has terms of both kinds.
	flipSign []float64
	// diagonal: H0 holds only Z letters, so it is diagonal in the
	// computational basis (classical models).
	diagonal bool
}

// symmetryTolerance is the relative size below which a combination of
// coefficients that a symmetry requires to vanish is taken as zero:
// rounding of user arithmetic, not a physical breaking.
const symmetryTolerance = 1e-13

func (m *UniformModel) symmetry(values []float64) uniformSymmetry {
	type key struct {
		site  bool
		kind  int
		pauli string
	}
	c := map[key]float64{}
	for p, cp := range m.Couplings {
		for _, t := range cp.Terms {
			c[key{len(t.Pauli) == 1, t.Kind, t.Pauli}] += values[p] * t.Weight
		}
	}
	scale := 0.0
	for _, v := range c {
		scale = math.Max(scale, math.Abs(v))
	}
	tol := symmetryTolerance * scale
	small := func(x float64) bool { return math.Abs(x) <= tol }
	s := uniformSymmetry{conservesSz: true, flip: true, diagonal: true}
	for k, v := range c {
		if small(v) {
			continue
		}
		if strings.ContainsAny(k.pauli, "XY") {
			s.diagonal = false
		}
		if flipOdd(k.pauli) {
			s.flip = false
		}
		partner := func(p string) float64 { return c[key{k.site, k.kind, p}] }
		switch {
		case k.site:
			s.conservesSz = s.conservesSz && k.pauli == "Z"
		case k.pauli == "XX":
			s.conservesSz = s.conservesSz && small(v-partner("YY"))
		case k.pauli == "YY":
			s.conservesSz = s.conservesSz && small(v-partner("XX"))
		case k.pauli == "XY":
			s.conservesSz = s.conservesSz && small(v+partner("YX"))
		case k.pauli == "YX":
			s.conservesSz = s.conservesSz && small(v+partner("XY"))
		case k.pauli == "ZZ":
		default:
			s.conservesSz = false
		}
	}
	s.flipSign = make([]float64, len(m.Couplings))
	for p, cp := range m.Couplings {
		even, odd := false, false
		for _, t := range cp.Terms {
			if t.Weight == 0 {
				continue
			}
			if flipOdd(t.Pauli) {
				odd = true
			} else {
				even = true
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

// flipOdd reports whether F = prod X anticommutes with the Pauli string:
// an odd number of Y and Z letters.
func flipOdd(pauli string) bool {
	return (strings.Count(pauli, "Y")+strings.Count(pauli, "Z"))%2 == 1
}

// describe names the blocks used, for the result.
func (s uniformSymmetry) describe() string {
	switch {
	case s.conservesSz && s.diagonal:
		return "diagonal (classical); total S^z sectors"
	case s.conservesSz && s.flip:
		return "total S^z sectors, m >= 0 with spin-flip images, m = 0 split by spin-flip parity"
	case s.conservesSz:
		return "total S^z sectors"
	}
	return "none (full Hilbert space)"
}
