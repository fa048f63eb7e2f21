package stationary

import (
	"math"
	"testing"
)

// relDiff returns the rms and largest relative difference of b from a
// over the entries where a is positive.
func relDiff(a, b []float64) (rms, worst float64) {
	var s2 float64
	n := 0
	for p := range a {
		if a[p] <= 0 {
			continue
		}
		r := b[p]/a[p] - 1
		s2 += r * r
		worst = max(worst, math.Abs(r))
		n++
	}
	return math.Sqrt(s2 / float64(max(n, 1))), worst
}

// TestSparseErrorBarsMatchDense: the sparse delta method (deflation and
// probing) against the dense sandwich it approximates (the reference
// here is the dense linear algebra of gonum, errorBars), on the 6x6
// patch model with one calibrated coupling (251 free parameters;
// measured: 0.7% rms, 6% at most), and with a thermal match on an
// 8-site TFIM chain (the direction's noise left out of both).
func TestSparseErrorBarsMatchDense(t *testing.T) {
	if testing.Short() {
		t.Skip("6x6 patch model: several seconds")
	}
	// The sparse path serves systems beyond the dense limit, which have
	// more rows than fullRowLimit and so per-row weights: compare the
	// two sandwiches under those weights.
	savedWeights := fullWeights
	fullWeights = false
	defer func() { fullWeights = savedWeights }()
	l, terms := testModel(t, "square:6x6", "xxz", map[string]float64{"Jxy": 0.5, "Jz": 0.4, "hz": 0.4, "hx": 0.3}, 0.1, 7)
	sys, err := NewSystem(l.NumSites(), terms)
	if err != nil {
		t.Fatal(err)
	}
	est, _ := patchEstimates(t, sys, 6, 6, 0.6, 1_000_000, 1)
	d, err := Solve(sys, est, Options{})
	if err != nil {
		t.Fatal(err)
	}
	truth := coeffs(terms)
	g := Gauge{Calibrated: map[string]float64{sys.Params().Names[0]: truth[0]}}
	dense, err := Fix(sys, est, d, g, Options{})
	if err != nil {
		t.Fatal(err)
	}
	sparse, err := Fix(sys, est, d, g, Options{DenseLimit: 10})
	if err != nil {
		t.Fatal(err)
	}
	if dense.ErrorMethod != "dense" || sparse.ErrorMethod != "sparse" {
		t.Fatalf("error methods %q, %q", dense.ErrorMethod, sparse.ErrorMethod)
	}
	rms, worst := relDiff(dense.StdErr, sparse.StdErr)
	t.Logf("6x6 calibrated: sparse against dense standard errors: %.4f rms, %.4f at most", rms, worst)
	if rms > 0.03 || worst > 0.15 {
		t.Errorf("sparse error bars differ from dense by %.3g rms, %.3g at most", rms, worst)
	}

	sc := scenario{name: "tfim8", spec: "chain:8", preset: "tfim", values: map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}, disorder: 0.3, beta: 0.7}
	sys, est, d, err = sc.run(t, 20000, 1)
	if err != nil {
		t.Fatal(err)
	}
	res, err := Fix(sys, est, d, Gauge{Beta: sc.beta, Evaluate: exactEvaluator(sys.NumQubits(), sys.Terms())}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	// Both without the direction's noise through the match, and both with
	// per-row weights (the sparse path's; full-covariance weights exist
	// only for dense-sized systems).
	res.Match.evaluate = nil
	d.ws.full = false
	basis := [][]float64{d.Theta}
	for _, inv := range d.Invisible {
		basis = append(basis, inv.Vector)
	}
	denseSE := make([]float64, len(res.StdErr))
	sparseSE := make([]float64, len(res.StdErr))
	res.StdErr = denseSE
	if err := res.errorBars(sys, est, nil, basis, res.Match.null); err != nil {
		t.Fatal(err)
	}
	res.StdErr = sparseSE
	if err := res.sparseErrorBars(sys, est, nil, basis, res.Match.null); err != nil {
		t.Fatal(err)
	}
	rms, worst = relDiff(denseSE, sparseSE)
	t.Logf("chain:8 thermal match: sparse against dense: %.4f rms, %.4f at most", rms, worst)
	if rms > 0.03 || worst > 0.15 {
		t.Errorf("thermal match: sparse error bars differ from dense by %.3g rms, %.3g at most", rms, worst)
	}
}
