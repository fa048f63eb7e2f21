package cluster

import (
	"fmt"
	"math"

	"warmfit/lattice"
)

// UniformModel is a translation-invariant spin-1/2 Hamiltonian on the
// infinite lattice of a built-in kind:
//
//	H = sum_p value_p H_p - h sum_i S^z_i,
//	H_p = sum_{t in Couplings[p].Terms} Weight_t sum_{bonds or sites of kind t.Kind} P_t,
//
// where P_t is a Pauli string (a product of Pauli matrices, not spin
// operators) on the two ends of a bond or on one site. The coupling values
// are given at evaluation, so one expansion serves every point of a fit.
// The Zeeman term is separate: h is an energy (h = g mu_B B), it couples
// to the total spin S^z = (1/2) sum_i Z_i, and the magnetisation and
// susceptibility are reported per site in spin units, M = <S^z>/N and
// chi = dM/dh, so that the molar susceptibility is N_A g^2 mu_B^2 chi.
//
// In these conventions the Heisenberg exchange J S_i.S_j is the coupling J
// with the terms XX, YY and ZZ of weight 1/4 (HeisenbergModel); an XXZ
// chain J (S^x S^x + S^y S^y + Delta S^z S^z) is two couplings (XX, YY of
// weight 1/4; ZZ of weight 1/4) whose values are J and J Delta.
type UniformModel struct {
	// Lattice is a built-in kind (chain, ladder, square, triangular,
	// honeycomb, kagome, cubic).
	Lattice string
	// Shells is 1 (nearest neighbours) or 2 (next-nearest too); 0 means 1.
	Shells int
	// BondKind[t] is the kind of bond type t of lattice.BondTypes; nil
	// means kind 0 for nearest and kind 1 for next-nearest neighbours.
	BondKind []int
	// SiteKind[b] is the kind of unit-cell site b; nil means one kind.
	SiteKind []int
	// Couplings are the parameters; derivatives are taken with respect
	// to their values.
	Couplings []Coupling
}

// Coupling is one parameter of a UniformModel: the operator it multiplies
// is the weighted sum of its terms over the lattice.
type Coupling struct {
	Name  string
	Terms []TemplateTerm
}

// TemplateTerm places a Pauli string on every bond or site of a kind.
// A two-letter Pauli acts on a bond of kind Kind, its first letter on the
// bond's From end (lattice.BondType); a one-letter Pauli acts on every
// site of kind Kind. Weight multiplies the Pauli string (it is the Pauli
// coefficient per unit of the coupling's value).
type TemplateTerm struct {
	Pauli  string
	Kind   int
	Weight float64
}

// HeisenbergModel returns H = J sum_<ij> S_i.S_j on the nearest-neighbour
// bonds of a built-in lattice kind: one coupling "J" with XX, YY and ZZ of
// weight 1/4.
func HeisenbergModel(kind string) UniformModel {
	return UniformModel{
		Lattice: kind,
		Couplings: []Coupling{{Name: "J", Terms: []TemplateTerm{
			{"XX", 0, 0.25}, {"YY", 0, 0.25}, {"ZZ", 0, 0.25},
		}}},
	}
}

// check validates the model and returns its class options: bond kinds
// whose terms are not symmetric under exchange of the two ends are
// directed.
func (m *UniformModel) check() (lattice.ClassOptions, error) {
	opt := lattice.ClassOptions{Shells: m.Shells, BondKind: m.BondKind, SiteKind: m.SiteKind}
	types, err := lattice.BondTypes(m.Lattice, m.Shells)
	if err != nil {
		return opt, err
	}
	bondKinds, siteKinds := 0, 1
	if m.BondKind == nil {
		for _, t := range types {
			bondKinds = max(bondKinds, t.Shell)
		}
	}
	for _, k := range m.BondKind {
		bondKinds = max(bondKinds, k+1)
	}
	for _, k := range m.SiteKind {
		siteKinds = max(siteKinds, k+1)
	}
	if len(m.Couplings) == 0 {
		return opt, fmt.Errorf("uniform model on %s: no couplings", m.Lattice)
	}
	// weights[kind]["ab"] sums each coupling's weights separately, so
	// symmetry is judged for every value of the couplings.
	directed := make([]bool, bondKinds)
	for p, c := range m.Couplings {
		sym := make([]map[string]float64, bondKinds)
		for k, t := range c.Terms {
			where := fmt.Sprintf("coupling %d (%s) term %d (%s)", p, c.Name, k, t.Pauli)
			if err := checkTemplateTerm(t, bondKinds, siteKinds); err != nil {
				return opt, fmt.Errorf("uniform model: %s: %v", where, err)
			}
			if len(t.Pauli) == 2 {
				if sym[t.Kind] == nil {
					sym[t.Kind] = map[string]float64{}
				}
				sym[t.Kind][t.Pauli] += t.Weight
			}
		}
		for k, w := range sym {
			for ab, x := range w {
				if w[string([]byte{ab[1], ab[0]})] != x {
					directed[k] = true
				}
			}
		}
	}
	opt.Directed = directed
	return opt, nil
}

func checkTemplateTerm(t TemplateTerm, bondKinds, siteKinds int) error {
	if len(t.Pauli) != 1 && len(t.Pauli) != 2 {
		return fmt.Errorf("want one letter (a site term) or two (a bond term)")
	}
	for i := 0; i < len(t.Pauli); i++ {
		if c := t.Pauli[i]; c != 'X' && c != 'Y' && c != 'Z' {
			return fmt.Errorf("letter %q is not X, Y or Z", c)
		}
	}
	if math.IsNaN(t.Weight) || math.IsInf(t.Weight, 0) {
		return fmt.Errorf("weight %v is not finite", t.Weight)
	}
	n, what := bondKinds, "bond"
	if len(t.Pauli) == 1 {
		n, what = siteKinds, "site"
	}
	if t.Kind < 0 || t.Kind >= n {
		return fmt.Errorf("%s kind %d out of range 0..%d", what, t.Kind, n-1)
	}
	return nil
}

// weightedOp is a Pauli string with a coefficient.
type weightedOp struct {
	op PauliString
	c  float64
}

// classOperators returns, for every coupling p, the operator H_p of a
// cluster class as Pauli strings on its sites (canonical labels as
// qubits) with their weights.
func (m *UniformModel) classOperators(cl *lattice.ClusterClass) [][]weightedOp {
	out := make([][]weightedOp, len(m.Couplings))
	for p, c := range m.Couplings {
		var ops []weightedOp
		for _, t := range c.Terms {
			if t.Weight == 0 {
				continue
			}
			if len(t.Pauli) == 1 {
				for q, k := range cl.SiteKinds {
					if k == t.Kind {
						var op PauliString
						op.setLetter(uint64(1)<<uint(q), t.Pauli[0])
						ops = append(ops, weightedOp{op, t.Weight})
					}
				}
				continue
			}
			for _, b := range cl.Bonds {
				if b.Kind == t.Kind {
					var op PauliString
					op.setLetter(uint64(1)<<uint(b.I), t.Pauli[0])
					op.setLetter(uint64(1)<<uint(b.J), t.Pauli[1])
					ops = append(ops, weightedOp{op, t.Weight})
				}
			}
		}
		out[p] = mergeOps(ops)
	}
	return out
}

// mergeOps adds the coefficients of equal Pauli strings, keeping the
// order of first appearance, and drops zero sums.
func mergeOps(ops []weightedOp) []weightedOp {
	at := make(map[PauliString]int, len(ops))
	var out []weightedOp
	for _, o := range ops {
		if k, ok := at[o.op]; ok {
			out[k].c += o.c
			continue
		}
		at[o.op] = len(out)
		out = append(out, o)
	}
	kept := out[:0]
	for _, o := range out {
		if o.c != 0 {
			kept = append(kept, o)
		}
	}
	return kept
}

// combine returns sum_p values[p] ops[p], merged.
func combine(ops [][]weightedOp, values []float64) []weightedOp {
	var all []weightedOp
	for p, list := range ops {
		for _, o := range list {
			all = append(all, weightedOp{o.op, values[p] * o.c})
		}
	}
	return mergeOps(all)
}
