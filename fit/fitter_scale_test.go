package fit_test

import (
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"warmfit/fit"
	"warmfit/lattice"
)

// synthetic20 builds a fitting problem on an L x L open square lattice:
// XXZ with X and Z fields, every coefficient scaled by a random factor in
// [0.5, 1.5), beta max|lambda| = 0.25, data = the order-4 expansion
// expectations measured with shotsPerBasis shots in each covering basis
// (binomial draws, fit.SyntheticTable).
func syntheticSquare(tb testing.TB, l int, shotsPerBasis int64) (*fit.Problem, []lattice.Term) {
	tb.Helper()
	lat, terms := randomModel(tb, fmt.Sprintf("square:%dx%d", l, l), "xxz", map[string]float64{"Jxy": 1, "Jz": 0.7, "hz": 0.5, "hx": 0.4}, 0, 2025)
	beta := scaleToBeta(terms, 0.25)
	vals := expansionData(tb, lat, terms, beta, 4)
	bases, err := fit.CoveringBases(lat.NumSites(), terms)
	if err != nil {
		tb.Fatal(err)
	}
	tab, err := fit.SyntheticTable(terms, vals, bases, shotsPerBasis, 5)
	if err != nil {
		tb.Fatal(err)
	}
	data, _, err := fit.EstimatesFromTable(tab, template(terms), nil)
	if err != nil {
		tb.Fatal(err)
	}
	return &fit.Problem{Lattice: lat, Terms: template(terms), Data: data, Beta: beta}, terms
}

// Scale: a 20x20 array (3080 coefficients) fitted at the order its data
// were made with, so the errors are shot noise alone. The z-scores must
// have rms 1 within 10% (with 3080 terms the rms of standard normal
// z-scores has relative spread ~1/sqrt(2 x 3080) = 1.3%; correlations
// between terms widen that, hence the margin) and none may exceed the
// Bonferroni bound at 1%.
func TestFitScaleSquare20x20(t *testing.T) {
	if testing.Short() {
		t.Skip("20x20 lattice, 3080 coefficients")
	}
	prob, truth := syntheticSquare(t, 20, 100000)
	res, err := fit.Fit(prob, fit.Options{Order: 4})
	if err != nil || !res.Converged {
		t.Fatalf("%v %+v", err, res)
	}
	var z2, zmax, linf float64
	for k, term := range truth {
		d := res.Coeffs[k] - term.Coeff
		z := d / res.Terms[k].Stderr
		z2 += z * z
		zmax = math.Max(zmax, math.Abs(z))
		linf = math.Max(linf, math.Abs(d))
	}
	rms := math.Sqrt(z2 / float64(len(truth)))
	zc := distuv.UnitNormal.Quantile(1 - 0.01/(2*float64(len(truth))))
	t.Logf("%d terms in %.1fs (%s): linf error %.3g, rms z %.3f, max |z| %.2f (bound %.2f)", len(truth), res.Elapsed.Seconds(), res.ErrorMethod, linf, rms, zmax, zc)
	if math.Abs(rms-1) > 0.1 || zmax > zc {
		t.Errorf("rms z %.3f (want 1 +- 0.1), max |z| %.2f (want <= %.2f)", rms, zmax, zc)
	}
}

func benchmarkFitSquare(b *testing.B, l int) {
	prob, _ := syntheticSquare(b, l, 100000)
	for _, workers := range []int{1, 2} {
		b.Run(fmt.Sprintf("workers%d", workers), func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				res, err := fit.Fit(prob, fit.Options{Order: 4, Workers: workers})
				if err != nil || !res.Converged {
					b.Fatalf("%v %+v", err, res)
				}
				b.ReportMetric(float64(len(prob.Terms)), "terms")
			}
		})
	}
}

// Fits at fixed order 4 (XXZ with fields, synthetic data), including the
// refits at orders 3 and 2 and the error bars.
func BenchmarkFitSquare10x10(b *testing.B) { benchmarkFitSquare(b, 10) }
func BenchmarkFitSquare20x20(b *testing.B) { benchmarkFitSquare(b, 20) }
func BenchmarkFitSquare40x40(b *testing.B) { benchmarkFitSquare(b, 40) }
