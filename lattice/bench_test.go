package lattice

import "testing"

// BenchmarkClustersSquare20x20Order8 enumerates (visits, with sorted
// sites) every connected cluster of up to 8 sites of the open 20x20
// square lattice: 1 106 367 clusters.
func BenchmarkClustersSquare20x20Order8(b *testing.B) {
	l := mustBuild(b, "square:20x20")
	var n int64
	b.ResetTimer()
	for range b.N {
		l.EachCluster(8, func([]int) bool { n++; return true })
	}
	b.ReportMetric(float64(n)/b.Elapsed().Seconds(), "clusters/s")
}

// BenchmarkCountClustersSquare20x20Order8 counts the same clusters in
// parallel without building the largest ones.
func BenchmarkCountClustersSquare20x20Order8(b *testing.B) {
	benchCountClusters(b, "square:20x20", 8)
}

// BenchmarkCountClustersCubic8x8x8Order8 is a 3-D counting load.
func BenchmarkCountClustersCubic8x8x8Order8(b *testing.B) {
	benchCountClusters(b, "cubic:8x8x8", 8)
}

// BenchmarkEstimateClustersSquare200x200Order14 is the cost of the
// planning estimate on a large lattice.
func BenchmarkEstimateClustersSquare200x200Order14(b *testing.B) {
	l := mustBuild(b, "square:200x200")
	b.ResetTimer()
	for range b.N {
		l.EstimateClusters(14)
	}
}

// benchCountClusters times CountClusters of the lattice spec up to
// maxSize sites and reports the clusters counted per second.
func benchCountClusters(b *testing.B, spec string, maxSize int) {
	l := mustBuild(b, spec)
	var n int64
	b.ResetTimer()
	for range b.N {
		n += sum(l.CountClusters(maxSize))
	}
	b.ReportMetric(float64(n)/b.Elapsed().Seconds(), "clusters/s")
}
