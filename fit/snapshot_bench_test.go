package fit

import (
	"bufio"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"testing"

	"warmfit/lattice"
)

// squareAll2Local is every one-site term and all nine two-site terms on
// every bond of an open lx×ly square lattice (1920 terms for 10×10).
func squareAll2Local(tb testing.TB, lx, ly int) []lattice.Term {
	return modelTerms(tb, lx*ly, gridBonds(lx, ly), []string{"X", "Y", "Z"}, all2local)
}

// writeShotFile writes shots single-shot lines cycling through bases,
// with uniformly random outcomes, and returns the file's size.
func writeShotFile(tb testing.TB, path string, bases []string, shots int, seed uint64) int64 {
	f, err := os.Create(path)
	if err != nil {
		tb.Fatal(err)
	}
	w := bufio.NewWriterSize(f, 1<<20)
	w.WriteString("basis,outcome,count\n")
	n := len(bases[0])
	rng := rand.New(rand.NewPCG(seed, 17))
	out := make([]byte, n)
	for i := 0; i < shots; i++ {
		var bits uint64
		for s := range out {
			if s%64 == 0 {
				bits = rng.Uint64()
			}
			out[s] = '0' + byte(bits&1)
			bits >>= 1
		}
		w.WriteString(bases[i%len(bases)])
		w.WriteByte(',')
		w.Write(out)
		w.WriteString(",1\n")
	}
	if err := w.Flush(); err != nil {
		tb.Fatal(err)
	}
	st, _ := f.Stat()
	f.Close()
	return st.Size()
}

func benchmarkSnapshotFile(b *testing.B, bases []string, shots int) {
	terms := squareAll2Local(b, 10, 10)
	path := filepath.Join(b.TempDir(), "shots.csv")
	size := writeShotFile(b, path, bases, shots, 1)
	b.SetBytes(size)
	b.ResetTimer()
	var before, after runtime.MemStats
	for range b.N {
		runtime.GC()
		runtime.ReadMemStats(&before)
		f, err := os.Open(path)
		if err != nil {
			b.Fatal(err)
		}
		est, err := EstimateSnapshots(f, path, 100, terms, DefaultCovarianceOptions())
		f.Close()
		if err != nil {
			b.Fatal(err)
		}
		runtime.ReadMemStats(&after)
		if est.Cov.NNZ() == 0 {
			b.Fatal("no covariance")
		}
	}
	b.StopTimer()
	b.ReportMetric(float64(shots)*float64(b.N)/b.Elapsed().Seconds(), "shots/s")
	// Memory stays bounded: the heap obtained from the system grows by
	// the estimator's tables only, not with the file (about 200 MB).
	b.ReportMetric(float64(after.HeapSys-before.HeapSys)/(1<<20), "MB-heap-growth")
	b.ReportMetric(float64(after.TotalAlloc-before.TotalAlloc)/float64(shots), "alloc-B/shot")
	b.ReportMetric(float64(size)/(1<<20), "MB-file")
}

// BenchmarkSnapshotEstimate1e6Shots100Qubits streams 10^6 single-shot
// lines on a 10×10 square lattice, 1920 terms (all one- and two-site
// Paulis), covariances kept up to distance 1, the 9 covering bases.
func BenchmarkSnapshotEstimate1e6Shots100Qubits(b *testing.B) {
	terms := squareAll2Local(b, 10, 10)
	bases, err := CoveringBases(100, terms)
	if err != nil {
		b.Fatal(err)
	}
	benchmarkSnapshotFile(b, bases, 1_000_000)
}

// BenchmarkSnapshotEstimate1e6Shots100QubitsRandomBases is the same with
// 10^5 random bases, 10 shots each (classical-shadow style): basis plans
// are built far more often.
func BenchmarkSnapshotEstimate1e6Shots100QubitsRandomBases(b *testing.B) {
	benchmarkSnapshotFile(b, RandomBases(100, 100_000, 3), 1_000_000)
}

func BenchmarkBinomial1e9(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	var s int64
	for range b.N {
		s += binomial(rng, 1_000_000_000, 0.37)
	}
	_ = s
}

func BenchmarkCoveringBasesSquare50x50All2Local(b *testing.B) {
	terms := modelTerms(b, 2500, gridBonds(50, 50), []string{"X", "Y", "Z"}, all2local)
	for range b.N {
		if _, err := CoveringBases(2500, terms); err != nil {
			b.Fatal(err)
		}
	}
}
