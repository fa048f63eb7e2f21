package cluster_test

import (
	"flag"
	"fmt"
	"math/rand/v2"
	"strings"
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

// benchmarkXXZ evaluates all expectations of the XXZ model in a Z field
// (xxzFieldModel: Z2 with independent disorder, U(1) with conserving) at
// beta 0.35, with blocks and densely.
func benchmarkXXZ(b *testing.B, spec string, order int, conserving, response bool) {
	l := mustLattice(b, spec)
	terms, coeffs := xxzFieldModel(b, l, conserving)
	exp, err := cluster.NewExpansion(l, terms)
	if err != nil {
		b.Fatal(err)
	}
	for _, dense := range []bool{false, true} {
		name := "blocks"
		if dense {
			name = "dense"
		}
		b.Run(name, func(b *testing.B) {
			opt := cluster.Options{Order: order, Response: response, IgnoreSymmetry: dense}
			var clusters int64
			for b.Loop() {
				res, err := exp.Evaluate(coeffs, 0.35, opt)
				if err != nil {
					b.Fatal(err)
				}
				clusters = 0
				for _, c := range res.Clusters {
					clusters += c
				}
			}
			b.ReportMetric(float64(clusters)*float64(b.N)/b.Elapsed().Seconds(), "clusters/s")
		})
	}
}

// skipUnlessNamed skips a benchmark of many minutes unless the -bench
// pattern names it, so that -bench . stays practical.
func skipUnlessNamed(b *testing.B, word string) {
	if f := flag.Lookup("test.bench"); f == nil || !strings.Contains(f.Value.String(), word) {
		b.Skipf("takes many minutes; run with -bench %s -benchtime 1x", word)
	}
}

func BenchmarkExpansionSquare20x20Order5XXZ(b *testing.B) {
	benchmarkXXZ(b, "square:20x20", 5, false, false)
}
func BenchmarkExpansionSquare20x20Order6XXZ(b *testing.B) {
	benchmarkXXZ(b, "square:20x20", 6, false, false)
}
func BenchmarkExpansionSquare20x20Order7XXZ(b *testing.B) {
	skipUnlessNamed(b, "Order7")
	benchmarkXXZ(b, "square:20x20", 7, false, false)
}
func BenchmarkExpansionSquare20x20Order5XXZConserving(b *testing.B) {
	benchmarkXXZ(b, "square:20x20", 5, true, false)
}
func BenchmarkExpansionSquare20x20Order6XXZConserving(b *testing.B) {
	benchmarkXXZ(b, "square:20x20", 6, true, false)
}
func BenchmarkExpansionSquare20x20Order7XXZConserving(b *testing.B) {
	skipUnlessNamed(b, "Order7")
	benchmarkXXZ(b, "square:20x20", 7, true, false)
}
func BenchmarkExpansionSquare20x20Order5XXZResponse(b *testing.B) {
	benchmarkXXZ(b, "square:20x20", 5, false, true)
}

// BenchmarkThermodynamicsSquare20x20Order6XXZ: log Z, energy and heat
// capacity on a grid of 16 temperatures from the eigenvalues alone.
func BenchmarkThermodynamicsSquare20x20Order6XXZ(b *testing.B) {
	l := mustLattice(b, "square:20x20")
	for _, conserving := range []bool{false, true} {
		terms, coeffs := xxzFieldModel(b, l, conserving)
		exp, err := cluster.NewExpansion(l, terms)
		if err != nil {
			b.Fatal(err)
		}
		betas := make([]float64, 16)
		for i := range betas {
			betas[i] = 0.05 * float64(i+1)
		}
		for _, dense := range []bool{false, true} {
			name := "Z2"
			if conserving {
				name = "U1"
			}
			if dense {
				name = "dense"
				if conserving {
					continue // the same dense work as the Z2 model
				}
			}
			b.Run(name, func(b *testing.B) {
				for b.Loop() {
					if _, err := exp.Thermodynamics(coeffs, betas, cluster.Options{Order: 6, IgnoreSymmetry: dense}); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}
