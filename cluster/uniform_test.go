package cluster_test

import (
	"math"
	"testing"

	"warmfit/cluster"
	"warmfit/lattice"
)

// layOut places a uniform model with the given values and field on a
// periodic lattice as explicit terms, bond type by bond type (sites are
// b + nb*cell, cells x fastest), independently of the class machinery.
func layOut(t testing.TB, m cluster.UniformModel, values []float64, h float64, spec string) (*lattice.Lattice, []lattice.Term) {
	t.Helper()
	l := mustLattice(t, spec)
	if l.Spec.Kind != m.Lattice {
		t.Fatalf("lattice %s for a %s model", spec, m.Lattice)
	}
	types, err := lattice.BondTypes(m.Lattice, m.Shells)
	if err != nil {
		t.Fatal(err)
	}
	nb, _ := lattice.CellSites(m.Lattice)
	size := l.Spec.Size
	cells := 1
	for _, s := range size {
		cells *= s
	}
	cellOf := func(x [3]int) int {
		c, stride := 0, 1
		for a, s := range size {
			c += ((x[a]%s + s) % s) * stride
			stride *= s
		}
		return c
	}
	bondKind := func(ty int) int {
		if m.BondKind != nil {
			return m.BondKind[ty]
		}
		return types[ty].Shell - 1
	}
	siteKind := func(b int) int {
		if m.SiteKind != nil {
			return m.SiteKind[b]
		}
		return 0
	}
	at := map[string]int{}
	var terms []lattice.Term
	add := func(pauli string, sites []int, c float64) {
		tm, err := lattice.NewTerm(pauli, sites, c)
		if err != nil {
			t.Fatal(err)
		}
		if k, ok := at[tm.Key()]; ok {
			terms[k].Coeff += c
			return
		}
		at[tm.Key()] = len(terms)
		terms = append(terms, tm)
	}
	for c := 0; c < cells; c++ {
		var x [3]int
		rest := c
		for a, s := range size {
			x[a] = rest % s
			rest /= s
		}
		for p, cp := range m.Couplings {
			for _, tt := range cp.Terms {
				if len(tt.Pauli) == 1 {
					for b := 0; b < nb; b++ {
						if siteKind(b) == tt.Kind {
							add(tt.Pauli, []int{b + nb*c}, values[p]*tt.Weight)
						}
					}
					continue
				}
				for ty, bt := range types {
					if bondKind(ty) != tt.Kind {
						continue
					}
					var y [3]int
					for a := range size {
						y[a] = x[a] + bt.Offset[a]
					}
					add(tt.Pauli, []int{bt.From + nb*c, bt.To + nb*cellOf(y)}, values[p]*tt.Weight)
				}
			}
		}
	}
	for s := 0; s < l.NumSites(); s++ {
		add("Z", []int{s}, -h/2)
	}
	return l, terms
}

// uniformCase is a model checked against the site-resolved expansion.
type uniformCase struct {
	name   string
	model  cluster.UniformModel
	values []float64
	h      float64
	spec   string // periodic, large enough that no cluster wraps
	order  int
	// shortOrder is the order with -short.
	shortOrder int
}

func xxzModel(kind string) cluster.UniformModel {
	return cluster.UniformModel{Lattice: kind, Couplings: []cluster.Coupling{
		{Name: "Jxy", Terms: []cluster.TemplateTerm{{"XX", 0, 0.25}, {"YY", 0, 0.25}}},
		{Name: "Jz", Terms: []cluster.TemplateTerm{{"ZZ", 0, 0.25}}},
	}}
}

func uniformCases() []uniformCase {
	ladder := cluster.UniformModel{Lattice: "ladder", BondKind: []int{0, 1, 1}, Couplings: []cluster.Coupling{
		{Name: "Jrung", Terms: []cluster.TemplateTerm{{"XX", 0, 0.25}, {"YY", 0, 0.25}, {"ZZ", 0, 0.25}}},
		{Name: "Jleg", Terms: []cluster.TemplateTerm{{"XX", 1, 0.25}, {"YY", 1, 0.25}, {"ZZ", 1, 0.25}}},
	}}
	j1j2 := cluster.UniformModel{Lattice: "square", Shells: 2, Couplings: []cluster.Coupling{
		{Name: "J1", Terms: []cluster.TemplateTerm{{"XX", 0, 0.25}, {"YY", 0, 0.25}, {"ZZ", 0, 0.25}}},
		{Name: "J2", Terms: []cluster.TemplateTerm{{"XX", 1, 0.25}, {"YY", 1, 0.25}, {"ZZ", 1, 0.25}}},
	}}
	// Heisenberg plus a Dzyaloshinskii–Moriya term D (S^x S^y - S^y S^x)
	// along the chain's direction: complex, directed, conserving S^z.
	dm := cluster.UniformModel{Lattice: "chain", Couplings: []cluster.Coupling{
		{Name: "J", Terms: []cluster.TemplateTerm{{"XX", 0, 0.25}, {"YY", 0, 0.25}, {"ZZ", 0, 0.25}}},
		{Name: "D", Terms: []cluster.TemplateTerm{{"XY", 0, 0.25}, {"YX", 0, -0.25}}},
	}}
	tfim := cluster.UniformModel{Lattice: "square", Couplings: []cluster.Coupling{
		{Name: "J", Terms: []cluster.TemplateTerm{{"ZZ", 0, -1}}},
		{Name: "hx", Terms: []cluster.TemplateTerm{{"X", 0, -1}}},
	}}
	// A directed, non-conserving bond term on the honeycomb with a
	// staggered field on its sublattices.
	odd := cluster.UniformModel{Lattice: "honeycomb", SiteKind: []int{0, 1}, Couplings: []cluster.Coupling{
		{Name: "K", Terms: []cluster.TemplateTerm{{"ZX", 0, 0.7}, {"YY", 0, 0.3}}},
		{Name: "hs", Terms: []cluster.TemplateTerm{{"Z", 0, 0.5}, {"Z", 1, -0.5}}},
	}}
	return []uniformCase{
		{"heisenberg chain", cluster.HeisenbergModel("chain"), []float64{1}, 0, "chain:12:periodic", 9, 8},
		{"heisenberg square", cluster.HeisenbergModel("square"), []float64{1}, 0, "square:8x8:periodic", 6, 5},
		{"xxz triangular in a field", xxzModel("triangular"), []float64{1, 0.6}, 0.4, "triangular:8x8:periodic", 5, 4},
		{"heisenberg honeycomb", cluster.HeisenbergModel("honeycomb"), []float64{1}, 0.2, "honeycomb:8x8:periodic", 6, 5},
		{"ladder rungs and legs", ladder, []float64{1.3, 0.8}, 0.3, "ladder:12:periodic", 7, 6},
		{"j1-j2 square", j1j2, []float64{1, 0.45}, 0, "square:10x10:periodic:shells=2", 5, 4},
		{"dm chain", dm, []float64{1, 0.4}, 0.25, "chain:11:periodic", 8, 7},
		{"tfim square, field along z", tfim, []float64{1, 0.8}, 0.3, "square:8x8:periodic", 5, 4},
		{"directed honeycomb", odd, []float64{1, 0.6}, 0.2, "honeycomb:7x7:periodic", 5, 4},
	}
}

// The class expansion must reproduce the site-resolved expansion of the
// same model on a periodic lattice large enough that no cluster or
// perimeter wraps, at every order: the two differ only in how identical
// clusters are grouped (common practice: one sum computed two ways). M
// comes from the site-resolved expectations of the Z terms; chi is
// checked against a central difference of M in the field.
func TestUniformMatchesSiteResolved(t *testing.T) {
	temps := []float64{0.5, 1, 3}
	for _, tc := range uniformCases() {
		if testing.Short() {
			tc.order = min(tc.order, tc.shortOrder)
		}
		u, err := cluster.NewUniformExpansion(tc.model, tc.order)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		const dh = 1e-4
		res, err := u.Evaluate(tc.values, cluster.UniformOptions{Temperatures: temps, Fields: []float64{tc.h, tc.h - dh, tc.h + dh}})
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		l, terms := layOut(t, tc.model, tc.values, tc.h, tc.spec)
		exp, err := cluster.NewExpansion(l, terms)
		if err != nil {
			t.Fatal(err)
		}
		n := float64(l.NumSites())
		betas := make([]float64, len(temps))
		for i, temp := range temps {
			betas[i] = 1 / temp
		}
		grid, err := exp.Thermodynamics(coeffsOf(terms), betas, cluster.Options{Order: tc.order})
		if err != nil {
			t.Fatal(err)
		}
		// Expectations at the middle temperature only: they cost a pass
		// over every term of every cluster.
		const iM = 1
		site, err := exp.Evaluate(coeffsOf(terms), betas[iM], cluster.Options{Order: tc.order})
		if err != nil {
			t.Fatal(err)
		}
		for i, temp := range temps {
			for o := 1; o <= tc.order; o++ {
				want := map[cluster.Quantity]float64{
					cluster.QuantityLogZ:         grid.LogZ[i][o-1]/n + math.Ln2,
					cluster.QuantityEnergy:       grid.Energy[i][o-1] / n,
					cluster.QuantityEntropy:      grid.Entropy(i, o) / n,
					cluster.QuantityHeatCapacity: grid.HeatCapacity[i][o-1] / n,
				}
				if i == iM {
					var m float64
					for k, tm := range terms {
						if tm.Pauli == "Z" {
							m += site.Expect[o-1][k] / 2
						}
					}
					want[cluster.QuantityMagnetization] = m / n
				}
				for q, w := range want {
					got := res.PartialSums(q, 0)[o-1][i]
					if math.Abs(got-w) > 1e-11*math.Max(1, math.Abs(w)) {
						t.Errorf("%s, order %d, T = %g: %v = %.15g, site-resolved %.15g (diff %.2g)", tc.name, o, temp, q, got, w, got-w)
					}
				}
				mag := func(f int) float64 { return res.PartialSums(cluster.QuantityMagnetization, f)[o-1][i] }
				fd := (mag(2) - mag(1)) / (2 * dh)
				if got := res.PartialSums(cluster.QuantitySusceptibility, 0)[o-1][i]; math.Abs(got-fd) > 1e-6*math.Max(1, math.Abs(fd)) {
					t.Errorf("%s, order %d, T = %g: chi = %.12g, dM/dh by central difference %.12g", tc.name, o, temp, got, fd)
				}
			}
		}
	}
}
