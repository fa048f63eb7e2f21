package cluster

import (
	"math/rand/v2"
	"testing"
)

func benchmarkDiagonalize(b *testing.B, n int, complex bool) {
	h := randomHamiltonian(n, complex, rand.New(rand.NewPCG(1, uint64(n))))
	var s Spectrum
	b.ReportAllocs()
	for b.Loop() {
		if err := s.Factorize(h); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkDiagonalizeReal6Qubits(b *testing.B)       { benchmarkDiagonalize(b, 6, false) }
func BenchmarkDiagonalizeReal8Qubits(b *testing.B)       { benchmarkDiagonalize(b, 8, false) }
func BenchmarkDiagonalizeReal10Qubits(b *testing.B)      { benchmarkDiagonalize(b, 10, false) }
func BenchmarkDiagonalizeHermitian6Qubits(b *testing.B)  { benchmarkDiagonalize(b, 6, true) }
func BenchmarkDiagonalizeHermitian8Qubits(b *testing.B)  { benchmarkDiagonalize(b, 8, true) }
func BenchmarkDiagonalizeHermitian10Qubits(b *testing.B) { benchmarkDiagonalize(b, 10, true) }

// The fresh-allocation entry point, as called once per cluster without a
// reused Spectrum.
func BenchmarkDiagonalizeFresh8Qubits(b *testing.B) {
	h := randomHamiltonian(8, false, rand.New(rand.NewPCG(1, 8)))
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Diagonalize(h); err != nil {
			b.Fatal(err)
		}
	}
}

func benchmarkEmbedding(b *testing.B, n int) {
	h := randomHamiltonian(n, true, rand.New(rand.NewPCG(1, uint64(n))))
	b.ReportAllocs()
	for b.Loop() {
		if _, _, ok := embeddingSolve(h); !ok {
			b.Fatal("embedding failed")
		}
	}
}

func BenchmarkEmbeddingHermitian6Qubits(b *testing.B) { benchmarkEmbedding(b, 6) }
func BenchmarkEmbeddingHermitian8Qubits(b *testing.B) { benchmarkEmbedding(b, 8) }

// BenchmarkThermalResponse8Qubits: Gibbs state and the full response
// matrix of all 99 operators of a random 2-local chain on 8 qubits.
func BenchmarkThermalResponse8Qubits(b *testing.B) {
	for _, tc := range []struct {
		name    string
		complex bool
	}{{"real", false}, {"hermitian", true}} {
		b.Run(tc.name, func(b *testing.B) {
			h := randomHamiltonian(8, tc.complex, rand.New(rand.NewPCG(2, 8)))
			s, err := Diagonalize(h)
			if err != nil {
				b.Fatal(err)
			}
			var th Thermal
			dst := make([]float64, len(h.Ops)*len(h.Ops))
			b.ReportAllocs()
			for b.Loop() {
				if err := th.Set(s, 0.5); err != nil {
					b.Fatal(err)
				}
				th.Response(h.Ops, dst)
			}
		})
	}
}

// BenchmarkThermalExpectAll8Qubits: Gibbs state and all term expectations.
func BenchmarkThermalExpectAll8Qubits(b *testing.B) {
	h := randomHamiltonian(8, true, rand.New(rand.NewPCG(3, 8)))
	s, err := Diagonalize(h)
	if err != nil {
		b.Fatal(err)
	}
	var th Thermal
	dst := make([]float64, len(h.Ops))
	b.ReportAllocs()
	for b.Loop() {
		if err := th.Set(s, 0.5); err != nil {
			b.Fatal(err)
		}
		th.ExpectAll(h.Ops, dst)
	}
}
