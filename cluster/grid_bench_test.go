package cluster_test

import (
	"math"
	"testing"

	"warmfit/cluster"
	"warmfit/lattice/model"
)

// BenchmarkEvaluateGridSquare8x8Order6XXZFields: every expectation of the
// XXZ model in X and Z fields (no symmetry: dense clusters) on 30
// temperatures, from one EvaluateGrid pass ("grid") and from one
// Evaluate ("single", of which the grid replaces 30).
func BenchmarkEvaluateGridSquare8x8Order6XXZFields(b *testing.B) {
	l := mustLattice(b, "square:8x8:periodic")
	terms, err := model.Preset(l, "xxz", tourParams)
	if err != nil {
		b.Fatal(err)
	}
	coeffs := coeffsOf(terms)
	exp, err := cluster.NewExpansion(l, terms)
	if err != nil {
		b.Fatal(err)
	}
	betas := make([]float64, 30)
	for i := range betas {
		betas[i] = 0.02 * math.Pow(200, float64(i)/float64(len(betas)-1))
	}
	opt := cluster.Options{Order: 6}
	b.Run("grid", func(b *testing.B) {
		for b.Loop() {
			if _, err := exp.EvaluateGrid(coeffs, betas, opt); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("single", func(b *testing.B) {
		for b.Loop() {
			if _, err := exp.Evaluate(coeffs, betas[15], opt); err != nil {
				b.Fatal(err)
			}
		}
	})
}
