package cluster

import (
	"math"
	"testing"
)

// The total-spin blocks against the S^z blocks of the same clusters: every
// curve and every derivative agrees (the two diagonalisations share
// nothing but the model's operators). J1-J2 chains and square clusters
// have non-adjacent bonds after relabelling, so the conjugated
// transpositions are exercised, and two couplings need eigenvectors.
func TestUniformSU2AgainstSzBlocks(t *testing.T) {
	j1j2 := func(kind string) UniformModel {
		return UniformModel{Lattice: kind, Shells: 2, Couplings: []Coupling{
			{Name: "J1", Terms: []TemplateTerm{{"XX", 0, 0.25}, {"YY", 0, 0.25}, {"ZZ", 0, 0.25}}},
			{Name: "J2", Terms: []TemplateTerm{{"XX", 1, 0.25}, {"YY", 1, 0.25}, {"ZZ", 1, 0.25}}},
		}}
	}
	for _, tc := range []struct {
		name   string
		model  UniformModel
		order  int
		values []float64
	}{
		{"chain", HeisenbergModel("chain"), 10, []float64{1}},
		{"square", HeisenbergModel("square"), 7, []float64{1}},
		{"triangular", HeisenbergModel("triangular"), 6, []float64{-0.7}},
		{"chain J1-J2", j1j2("chain"), 9, []float64{1, 0.4}},
		{"square J1-J2", j1j2("square"), 6, []float64{1, 0.55}},
	} {
		u, err := NewUniformExpansion(tc.model, tc.order)
		if err != nil {
			t.Fatal(err)
		}
		if u.exchange == nil {
			t.Fatalf("%s: not detected as isotropic exchange", tc.name)
		}
		opt := UniformOptions{Temperatures: []float64{0.2, 0.7, 3}, Fields: []float64{0, 0.45}, Derivatives: true}
		got, err := u.Evaluate(tc.values, opt)
		if err != nil {
			t.Fatal(err)
		}
		exchange := u.exchange
		u.exchange = nil
		want, err := u.Evaluate(tc.values, opt)
		u.exchange = exchange
		if err != nil {
			t.Fatal(err)
		}
		if got.Symmetry == want.Symmetry {
			t.Fatalf("%s: both evaluations used %q", tc.name, got.Symmetry)
		}
		worst := 0.0
		for k := range got.curves {
			for q := range got.curves[k] {
				for f := range got.curves[k][q] {
					for o := range got.curves[k][q][f] {
						for i, v := range got.curves[k][q][f][o] {
							w := want.curves[k][q][f][o][i]
							worst = max(worst, math.Abs(v-w)/max(1, math.Abs(w)))
						}
					}
				}
			}
		}
		if worst > 1e-9 {
			t.Errorf("%s: total-spin and S^z blocks differ by %.3g (relative)", tc.name, worst)
		}
		if got.Stats.LargestBlock >= want.Stats.LargestBlock && tc.order > 4 {
			t.Errorf("%s: largest block %d, not below the S^z blocks' %d", tc.name, got.Stats.LargestBlock, want.Stats.LargestBlock)
		}
	}
}

// Young's orthogonal form is a representation: s_k^2 = 1 and the braid
// relation s_k s_{k+1} s_k = s_{k+1} s_k s_{k+1} hold on every block of
// 7 sites (Coxeter presentation of S_n; from memory).
func TestYoungOrthogonalForm(t *testing.T) {
	const n = 7
	var w sectorWork
	for _, b := range su2Blocks(n) {
		d := w.su2Basis(b)
		if d != su2Dim(b) {
			t.Fatalf("S = %g: %d tableaux, dimension formula %d", b.spin(), d, su2Dim(b))
		}
		tmp := make([]float64, d)
		ident := func() []float64 {
			m := make([]float64, d*d)
			for i := 0; i < d; i++ {
				m[i*d+i] = 1
			}
			return m
		}
		apply := func(m []float64, ks ...int) []float64 {
			for _, k := range ks { // rightmost factor first
				w.adjacentSwap(k, d, m, tmp)
			}
			return m
		}
		for k := 0; k < n-1; k++ {
			sq := apply(ident(), k, k)
			if diff := maxDiff(sq, ident()); diff > 1e-12 {
				t.Errorf("S = %g: s_%d^2 differs from 1 by %g", b.spin(), k, diff)
			}
			// addAdjacent builds the same matrix as adjacentSwap.
			h := make([]float64, d*d)
			w.addAdjacent(k, d, 1, h)
			if diff := maxDiff(h, apply(ident(), k)); diff > 1e-12 {
				t.Errorf("S = %g: addAdjacent(%d) differs from adjacentSwap by %g", b.spin(), k, diff)
			}
			if k+1 < n-1 {
				l := apply(ident(), k, k+1, k)
				r := apply(ident(), k+1, k, k+1)
				if diff := maxDiff(l, r); diff > 1e-12 {
					t.Errorf("S = %g: braid relation at %d off by %g", b.spin(), k, diff)
				}
			}
		}
	}
}

func maxDiff(a, b []float64) float64 {
	m := 0.0
	for i := range a {
		m = max(m, math.Abs(a[i]-b[i]))
	}
	return m
}
