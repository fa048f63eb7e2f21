package lattice

import "testing"

func benchmarkClasses(b *testing.B, kind string, order int) {
	for b.Loop() {
		c, err := ClusterClasses(kind, order, ClassOptions{})
		if err != nil {
			b.Fatal(err)
		}
		b.ReportMetric(float64(len(c.Classes)), "classes")
	}
}

func BenchmarkClusterClassesSquareOrder11(b *testing.B)     { benchmarkClasses(b, "square", 11) }
func BenchmarkClusterClassesTriangularOrder10(b *testing.B) { benchmarkClasses(b, "triangular", 10) }
func BenchmarkClusterClassesHoneycombOrder14(b *testing.B)  { benchmarkClasses(b, "honeycomb", 14) }
func BenchmarkClusterClassesChainOrder16(b *testing.B)      { benchmarkClasses(b, "chain", 16) }
