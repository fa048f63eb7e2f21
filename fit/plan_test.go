package fit_test

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"warmfit/fit"
	"warmfit/lattice"
)

// Two independent spins, H = h0 Z_0 + h1 X_1, measured in the single
// basis ZX. In closed form e_k = -tanh(beta h_k) and d<E_k>/dh_k =
// -beta (1 - e_k^2), so one shot gives Var(h_k) = (1 - e_k^2) /
// (beta (1 - e_k^2))^2 = 1 / (beta^2 (1 - e_k^2)) (derived from the
// single-spin Gibbs state); the plan must reproduce the shot counts of
// the stated formulas exactly, with z = Phi^{-1}(1 - 0.05/(2 x 2)) for the
// Bonferroni bound over two parameters.
func TestPlanTwoFreeSpins(t *testing.T) {
	lat, err := lattice.Open("chain:2")
	if err != nil {
		t.Fatal(err)
	}
	h := []float64{0.7, -0.4}
	terms := []lattice.Term{{Pauli: "Z", Sites: []int{0}, Coeff: h[0]}, {Pauli: "X", Sites: []int{1}, Coeff: h[1]}}
	const beta, eps = 0.8, 0.01
	v := make([]float64, 2)
	for k := range v {
		e := -math.Tanh(beta * h[k])
		v[k] = 1 / (beta * beta * (1 - e*e))
	}
	z := distuv.UnitNormal.Quantile(1 - 0.05/4)
	for _, tt := range []struct {
		norm fit.Norm
		want float64
	}{
		{fit.NormLinf, math.Ceil(z * z * math.Max(v[0], v[1]) / (eps * eps))},
		{fit.NormL2, math.Ceil((v[0] + v[1]) / (eps * eps))},
	} {
		p, err := fit.PlanShots(lat, terms, beta, fit.PlanOptions{Target: eps, Norm: tt.norm, Bases: []string{"ZX"}})
		if err != nil {
			t.Fatal(err)
		}
		if len(p.Bases) != 1 || p.Bases[0] != "ZX" {
			t.Errorf("%s: bases %v, want [ZX]", tt.norm, p.Bases)
		}
		if float64(p.ShotsPerBasis) != tt.want || p.TotalShots != p.ShotsPerBasis {
			t.Errorf("%s: %d shots per basis (%d total), want %v", tt.norm, p.ShotsPerBasis, p.TotalShots, tt.want)
		}
		for k := range v {
			if want := math.Sqrt(v[k] / float64(p.ShotsPerBasis)); math.Abs(p.Stderr[k]-want) > 1e-9*want {
				t.Errorf("%s: stderr[%d] = %v, want %v", tt.norm, k, p.Stderr[k], want)
			}
		}
	}
}

// The plan against the fit: data simulated with the planned shots
// (binomial draws per term, fit.SyntheticTable) and fitted at the same
// order give error bars close to the predicted ones (they differ only
// through the estimated (1 - e^2) factors and the response at the fitted
// instead of the true coefficients: 5% is ample at this noise), and the
// linf error stays below the target (a 95% guarantee; this seed is one
// draw).
func TestPlanMatchesFit(t *testing.T) {
	lat, terms := randomModel(t, "square:4x4", "xxz", map[string]float64{"Jxy": 1, "Jz": 0.7, "hz": 0.5, "hx": 0.4}, 0, 13)
	beta := scaleToBeta(terms, 0.25)
	const order, eps = 4, 0.05
	p, err := fit.PlanShots(lat, terms, beta, fit.PlanOptions{Target: eps, Order: order})
	if err != nil {
		t.Fatal(err)
	}
	vals := expansionData(t, lat, terms, beta, order)
	tab, err := fit.SyntheticTable(terms, vals, p.Bases, p.ShotsPerBasis, 77)
	if err != nil {
		t.Fatal(err)
	}
	data, _, err := fit.EstimatesFromTable(tab, template(terms), nil)
	if err != nil {
		t.Fatal(err)
	}
	res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(terms), Data: data, Beta: beta}, fit.Options{Order: order, SkipTruncation: true})
	if err != nil || !res.Converged {
		t.Fatalf("%v %+v", err, res)
	}
	var worstRatio, linf float64
	for k, term := range terms {
		worstRatio = math.Max(worstRatio, math.Abs(res.Terms[k].Stderr/p.Stderr[k]-1))
		linf = math.Max(linf, math.Abs(res.Coeffs[k]-term.Coeff))
	}
	t.Logf("%d bases x %d shots; stderr fit/plan within %.3f; linf error %.3g (target %v)", len(p.Bases), p.ShotsPerBasis, worstRatio, linf, eps)
	if worstRatio > 0.05 || linf > eps {
		t.Errorf("fit stderr differs from the plan by up to %.3f (want <= 0.05); linf error %v (target %v)", worstRatio, linf, eps)
	}
}

func TestPlanErrors(t *testing.T) {
	lat, terms := randomModel(t, "chain:4", "xxz", map[string]float64{"Jxy": 1, "Jz": 0.5, "hz": 0.3}, 0, 1)
	for _, tt := range []struct {
		opt  fit.PlanOptions
		beta float64
	}{
		{fit.PlanOptions{Target: 0}, 1},
		{fit.PlanOptions{Target: 0.1, Norm: "l1"}, 1},
		{fit.PlanOptions{Target: 0.1}, 0},
		{fit.PlanOptions{Target: 0.1, Bases: []string{"ZZZZ"}}, 1}, // XX and YY unmeasured
		{fit.PlanOptions{Target: 0.1, Bases: []string{"ZZ"}}, 1},   // wrong length
	} {
		if _, err := fit.PlanShots(lat, terms, tt.beta, tt.opt); err == nil {
			t.Errorf("%+v beta %v: no error", tt.opt, tt.beta)
		}
	}
}
