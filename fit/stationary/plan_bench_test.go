package stationary

import (
	"testing"

	"warmfit/fit"
)

// benchmarkPlan plans a scenario's shots for rms 0.02 (exact
// distributions computed once, outside the timing).
func benchmarkPlan(b *testing.B, sc scenario) {
	l, terms := testModel(b, sc.spec, sc.preset, sc.values, sc.disorder, 11)
	n := l.NumSites()
	bases, _, err := fit.SchemeBases("covering:3", n, terms, 1)
	if err != nil {
		b.Fatal(err)
	}
	sampler := cachedSampler(b, sc, n, terms)
	for _, basis := range bases {
		if _, err := sampler.Distribution(basis); err != nil {
			b.Fatal(err)
		}
	}
	b.ResetTimer()
	for range b.N {
		if _, err := PlanShots(n, terms, bases, sampler.Distribution, PlanOptions{Target: 0.02, Beta: sc.beta}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkPlanShotsChain8(b *testing.B) {
	benchmarkPlan(b, scenario{name: "tfim8", spec: "chain:8", preset: "tfim", values: map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}, disorder: 0.3, beta: 0.7})
}

func BenchmarkPlanShotsSquare3x3(b *testing.B) {
	benchmarkPlan(b, scenario{name: "xxz3x3", spec: "square:3x3", preset: "xxz", values: map[string]float64{"Jxy": 0.4, "Jz": 0.3, "hz": 0.2, "hx": 0.1}, disorder: 0.1, beta: 1})
}
