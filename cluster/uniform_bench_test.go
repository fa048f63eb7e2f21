package cluster_test

import (
	"math"
	"testing"

	"warmfit/cluster"
)

// benchmarkUniformHeisenberg evaluates the Heisenberg model of a lattice
// kind to the given order on a 200-point temperature grid, T = 0.1..10 J
// logarithmically spaced, enumeration of the classes included.
func benchmarkUniformHeisenberg(b *testing.B, kind string, order int) {
	temps := logGrid(0.1, 10, 200)
	for b.Loop() {
		u, err := cluster.NewUniformExpansion(cluster.HeisenbergModel(kind), order)
		if err != nil {
			b.Fatal(err)
		}
		r, err := u.Evaluate([]float64{1}, cluster.UniformOptions{Temperatures: temps, MaxBlock: 1 << 14})
		if err != nil {
			b.Fatal(err)
		}
		b.ReportMetric(float64(r.Stats.Classes), "classes")
		b.ReportMetric(float64(r.Stats.LargestBlock), "largest-block")
	}
}

func logGrid(lo, hi float64, n int) []float64 {
	out := make([]float64, n)
	for i := range out {
		out[i] = lo * math.Pow(hi/lo, float64(i)/float64(n-1))
	}
	return out
}

func BenchmarkUniformHeisenbergSquareOrder9(b *testing.B) { benchmarkUniformHeisenberg(b, "square", 9) }
func BenchmarkUniformHeisenbergSquareOrder11(b *testing.B) {
	benchmarkUniformHeisenberg(b, "square", 11)
}
func BenchmarkUniformHeisenbergChainOrder12(b *testing.B) { benchmarkUniformHeisenberg(b, "chain", 12) }
func BenchmarkUniformHeisenbergChainOrder16(b *testing.B) { benchmarkUniformHeisenberg(b, "chain", 16) }
func BenchmarkUniformHeisenbergChainOrder14(b *testing.B) { benchmarkUniformHeisenberg(b, "chain", 14) }
