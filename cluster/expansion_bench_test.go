package cluster_test

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"warmfit/cluster"
	"warmfit/lattice"
)

// xxzFieldsTerms is the benchmark model: XX, YY, ZZ on every bond and X, Z
// fields on every site, with seeded non-uniform coefficients.
func xxzFieldsTerms(l *lattice.Lattice, seed uint64) ([]lattice.Term, []float64) {
	rng := rand.New(rand.NewPCG(seed, 99))
	var terms []lattice.Term
	add := func(p string, c float64, sites ...int) {
		t, _ := lattice.NewTerm(p, sites, c)
		terms = append(terms, t)
	}
	for _, b := range l.InteractionBonds() {
		add("XX", 0.5+0.1*rng.Float64(), b.I, b.J)
		add("YY", 0.5+0.1*rng.Float64(), b.I, b.J)
		add("ZZ", 1+0.1*rng.Float64(), b.I, b.J)
	}
	for s := 0; s < l.NumSites(); s++ {
		add("X", 0.3*rng.Float64(), s)
		add("Z", 0.3*rng.Float64(), s)
	}
	return terms, coeffsOf(terms)
}

func benchmarkExpansion(b *testing.B, spec string, order, workers int, response bool) {
	l := mustLattice(b, spec)
	terms, coeffs := xxzFieldsTerms(l, 1)
	exp, err := cluster.NewExpansion(l, terms)
	if err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	var clusters int64
	for i := 0; i < b.N; i++ {
		res, err := exp.Evaluate(coeffs, 0.3, cluster.Options{Order: order, Workers: workers, Response: response})
		if err != nil {
			b.Fatal(err)
		}
		clusters = 0
		for _, c := range res.Clusters {
			clusters += c
		}
	}
	b.ReportMetric(float64(clusters)*float64(b.N)/b.Elapsed().Seconds(), "clusters/s")
}

func BenchmarkExpansionSquare10x10Order5(b *testing.B) {
	benchmarkExpansion(b, "square:10x10", 5, 0, false)
}
func BenchmarkExpansionSquare20x20Order4(b *testing.B) {
	benchmarkExpansion(b, "square:20x20", 4, 0, false)
}
func BenchmarkExpansionSquare20x20Order5(b *testing.B) {
	benchmarkExpansion(b, "square:20x20", 5, 0, false)
}
func BenchmarkExpansionSquare20x20Order6(b *testing.B) {
	benchmarkExpansion(b, "square:20x20", 6, 0, false)
}
func BenchmarkExpansionSquare40x40Order5(b *testing.B) {
	benchmarkExpansion(b, "square:40x40", 5, 0, false)
}

func BenchmarkExpansionSquare20x20Order5Workers(b *testing.B) {
	for _, w := range []int{1, 2} {
		b.Run(fmt.Sprintf("workers=%d", w), func(b *testing.B) { benchmarkExpansion(b, "square:20x20", 5, w, false) })
	}
}

func BenchmarkExpansionSquare20x20Order5Response(b *testing.B) {
	benchmarkExpansion(b, "square:20x20", 5, 0, true)
}
