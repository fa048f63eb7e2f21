package stationary

import (
	"math"
	"testing"

	"warmfit/cluster"
	"warmfit/lattice"
	"warmfit/validate"
)

// exactResponse is the linear response d<E_k>/d lambda_j of the exact
// Gibbs state (cluster.Thermal.Response: -beta times the Kubo-Mori
// covariance).
func exactResponse(n int, terms []lattice.Term) ResponseEvaluator {
	ops, err := cluster.TermPaulis(terms)
	if err != nil {
		panic(err)
	}
	return func(lambda []float64, beta float64) (*cluster.SparseSym, error) {
		tt := make([]lattice.Term, len(terms))
		for k, t := range terms {
			t.Coeff = lambda[k]
			tt[k] = t
		}
		th, err := validate.ExactThermal(n, tt, beta)
		if err != nil {
			return nil, err
		}
		k := len(ops)
		dense := make([]float64, k*k)
		th.Response(ops, dense)
		out := cluster.NewSparseSym(k)
		for a := range k {
			for b := a; b < k; b++ {
				out.Set(a, b, dense[a*k+b])
			}
		}
		return out, nil
	}
}

// TestDirectionNoiseByResponse: the direction's noise propagated through
// the thermal match from one linear-response evaluation agrees with the
// central differences along every error direction (two evaluations
// each): both are first order in the direction's noise, so they differ
// at second order only (the derivative of a Gibbs expectation is the
// Kubo-Mori covariance, e.g. Kubo, J. Phys. Soc. Jpn. 12, 570 (1957)).
func TestDirectionNoiseByResponse(t *testing.T) {
	sc := scenario{name: "tfim8", spec: "chain:8", preset: "tfim", values: map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}, disorder: 0.3, beta: 0.7}
	sys, est, d, err := sc.run(t, 20000, 1)
	if err != nil {
		t.Fatal(err)
	}
	n, terms := sys.NumQubits(), sys.Terms()
	byDiff, err := Fix(sys, est, d, Gauge{Beta: sc.beta, Evaluate: exactEvaluator(n, terms)}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	byResp, err := Fix(sys, est, d, Gauge{Beta: sc.beta, Evaluate: exactEvaluator(n, terms), Response: exactResponse(n, terms)}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	md, mr := byDiff.Match, byResp.Match
	t.Logf("chi2 with direction noise: differences %.4f (%d directions, %d evaluations), response %.4f (%d directions, %d evaluations)",
		md.Chi2Direction, md.DirectionRank, md.Evaluations, mr.Chi2Direction, mr.DirectionRank, mr.Evaluations)
	// The rank counts the positive eigenvalues of the covariance; one near
	// zero (rounding) may fall either side and carries no variance.
	if mr.DirectionRank < md.DirectionRank-1 || mr.DirectionRank > md.DirectionRank+1 || mr.Inconclusive() {
		t.Errorf("response: %d directions (differences %d), inconclusive %v", mr.DirectionRank, md.DirectionRank, mr.Inconclusive())
	}
	if math.Abs(mr.Chi2Direction/md.Chi2Direction-1) > 0.02 {
		t.Errorf("chi2 with direction noise: response %.5g, differences %.5g", mr.Chi2Direction, md.Chi2Direction)
	}
	rms, worst := relDiff(byDiff.StdErr, byResp.StdErr)
	t.Logf("standard errors: %.4f rms, %.4f at most", rms, worst)
	if worst > 0.02 {
		t.Errorf("standard errors differ by %.3g at most", worst)
	}
}
