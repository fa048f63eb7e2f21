package cluster

import (
	"fmt"
	"strings"

	"warmfit/lattice"
)

// Symmetry returns the most useful symmetry (as DetectSymmetry orders
// them) that the whole model has with the coefficients coeffs, one per
// term in the order of Terms. Because the conditions are checked term by
// term (parities) or support by support (total Z), the symmetry of the
// model holds for every cluster's restriction of it, so Evaluate and
// Thermodynamics detect it once and use it for every cluster.
func (e *Expansion) Symmetry(coeffs []float64) Symmetry {
	if len(coeffs) != len(e.terms) {
		panic(fmt.Sprintf("cluster: %d coefficients for %d terms", len(coeffs), len(e.terms)))
	}
	return modelSymmetry(e.terms, coeffs)
}

// modelSymmetry is Expansion.Symmetry on a plain list of terms.
func modelSymmetry(terms []lattice.Term, coeffs []float64) Symmetry {
	for _, s := range detectionOrder {
		if modelHolds(s, terms, coeffs) {
			return s
		}
	}
	return NoSymmetry
}

// modelHolds reports whether every support group of the model has
// symmetry s. Each group is written as a Hamiltonian on its own sites
// (local qubit i is Sites[i]), so lattices of any size are handled.
func modelHolds(s Symmetry, terms []lattice.Term, coeffs []float64) bool {
	groups := map[string]*Hamiltonian{}
	var order []*Hamiltonian
	for k, t := range terms {
		if coeffs[k] == 0 {
			continue
		}
		local := make([]int, len(t.Sites))
		for i := range local {
			local[i] = i
		}
		p, err := ParsePauli(t.Pauli, local)
		if err != nil {
			return false // e.g. more than MaxQubits sites: no blocks
		}
		key := supportKey(t.Sites)
		g := groups[key]
		if g == nil {
			g = &Hamiltonian{NumQubits: len(t.Sites)}
			groups[key] = g
			order = append(order, g)
		}
		g.Ops = append(g.Ops, p)
		g.Coeffs = append(g.Coeffs, coeffs[k])
	}
	for _, g := range order {
		if !s.holds(g) {
			return false
		}
	}
	return true
}

// supportKey identifies a term's (sorted) sites.
func supportKey(sites []int) string {
	var b strings.Builder
	for i, s := range sites {
		if i > 0 {
			b.WriteByte(',')
		}
		fmt.Fprint(&b, s)
	}
	return b.String()
}
