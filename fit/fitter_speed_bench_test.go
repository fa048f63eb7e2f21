package fit_test

import (
	"testing"

	"warmfit/fit"
)

// benchmarkFitSpeed fits speedModel on spec at fixed order with binomial
// data (speedProblem, drawn around the same order's expectations): the
// lower-order fits that measure truncation and the error bars included.
// It reports the expansion evaluations and the order of the response the
// error bars use.
func benchmarkFitSpeed(b *testing.B, spec string, order int, curv fit.Curvature) {
	prob, _ := speedProblem(b, spec, order)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		res, err := fit.Fit(prob, fit.Options{Order: order, Curvature: curv})
		if err != nil || !res.Converged {
			b.Fatalf("%v %+v", err, res)
		}
		b.ReportMetric(float64(res.Evaluations), "evaluations")
		b.ReportMetric(float64(res.ResponseOrder), "response-order")
	}
}

// Targets on a 2-core machine (issue 10): 20x20 order 5 <= 8 s, order 6
// <= 90 s, 100x100 order 4 <= 30 s and <= 2 GiB.
func BenchmarkFitSquare20x20Order5(b *testing.B) {
	benchmarkFitSpeed(b, "square:20x20", 5, fit.CurvatureAuto)
}

func BenchmarkFitSquare20x20Order6(b *testing.B) {
	benchmarkFitSpeed(b, "square:20x20", 6, fit.CurvatureAuto)
}

func BenchmarkFitSquare100x100Order4(b *testing.B) {
	benchmarkFitSpeed(b, "square:100x100", 4, fit.CurvatureAuto)
}

// The same with the exact response at every step: the method before the
// lower-order curvature, for comparison.
func BenchmarkFitSquare20x20Order5Exact(b *testing.B) {
	benchmarkFitSpeed(b, "square:20x20", 5, fit.CurvatureExact)
}
