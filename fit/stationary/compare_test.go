package stationary

import (
	"fmt"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/lattice/model"
	"warmfit/validate"
)

// termEstimates extracts the estimates of the terms themselves (with
// their covariances) from the estimates of sys.Strings.
func termEstimates(sys *System, est *fit.Estimates) *fit.Estimates {
	nt := len(sys.Terms())
	out := &fit.Estimates{Values: make([]float64, nt), Stderr: make([]float64, nt), Shots: make([]int64, nt), Cov: cluster.NewSparseSym(nt)}
	for k := range nt {
		j := sys.TermString[k]
		out.Values[k], out.Stderr[k], out.Shots[k] = est.Values[j], est.Stderr[j], est.Shots[j]
		for l := k; l < nt; l++ {
			if v := est.Cov.At(j, sys.TermString[l]); v != 0 {
				out.Cov.Set(k, l, v)
			}
		}
	}
	return out
}

// errorsAgainst returns the largest and the rms coefficient error.
func errorsAgainst(got, truth []float64) (worst, rms float64) {
	for k := range truth {
		d := got[k] - truth[k]
		worst = max(worst, math.Abs(d))
		rms += d * d
	}
	return worst, math.Sqrt(rms / float64(len(truth)))
}

// patchFits fits every window of w consecutive sites of a chain exactly
// (expansion order = patch size, so the patch's Gibbs state is exact;
// the patch's open ends are the approximation) and keeps each term's
// value from the window where the term is most central.
func patchFits(t *testing.T, m *model.Model, data *fit.Estimates, beta float64, w int) ([]float64, error) {
	n := m.Lattice.NumSites()
	out := make([]float64, len(m.Terms))
	bestDist := make([]float64, len(m.Terms))
	for k := range bestDist {
		bestDist[k] = math.Inf(1)
	}
	for start := 0; start+w <= n; start++ {
		sites := make([]int, w)
		for i := range sites {
			sites[i] = start + i
		}
		p, err := validate.CutPatch(m, sites)
		if err != nil {
			return nil, err
		}
		pt := len(p.Model.Terms)
		pe := &fit.Estimates{Values: make([]float64, pt), Stderr: make([]float64, pt), Shots: make([]int64, pt), Cov: cluster.NewSparseSym(pt)}
		for i, k := range p.Parent {
			pe.Values[i], pe.Stderr[i], pe.Shots[i] = data.Values[k], data.Stderr[k], data.Shots[k]
			for j := i; j < pt; j++ {
				if v := data.Cov.At(k, p.Parent[j]); v != 0 {
					pe.Cov.Set(i, j, v)
				}
			}
		}
		res, err := fit.Fit(&fit.Problem{Lattice: p.Model.Lattice, Terms: p.Model.Terms, Data: pe, Beta: beta}, fit.Options{Order: w, SkipTruncation: true})
		if err != nil {
			return nil, err
		}
		centre := float64(start) + float64(w-1)/2
		for i, k := range p.Parent {
			var mid float64
			for _, s := range m.Terms[k].Sites {
				mid += float64(s)
			}
			mid /= float64(len(m.Terms[k].Sites))
			if dist := math.Abs(mid - centre); dist < bestDist[k] {
				bestDist[k], out[k] = dist, res.Coeffs[i]
			}
		}
	}
	return out, nil
}

// TestComparisonTable compares, per temperature, the stationarity method
// (known beta, thermal match), the expansion's maximum-entropy fit and
// independent exact fits of 6-site windows, all from the same exact
// snapshots (validate's sampler, dense ED) of a disordered
// transverse-field Ising chain. Rerun with
//
//	WARMFIT_STATIONARY_TABLE=1 go test -run TestComparisonTable -v ./fit/stationary/
//
// (WARMFIT_STATIONARY_TABLE_N sets the chain length, default 12;
// WARMFIT_STATIONARY_TABLE_SHOTS the shots per basis, default 20000).
// Reference for the truth: the exact sampler; no published table exists.
func TestComparisonTable(t *testing.T) {
	if os.Getenv("WARMFIT_STATIONARY_TABLE") == "" {
		t.Skip("set WARMFIT_STATIONARY_TABLE=1 (minutes)")
	}
	n, shots := 12, 20000
	if v, err := strconv.Atoi(os.Getenv("WARMFIT_STATIONARY_TABLE_N")); err == nil {
		n = v
	}
	if v, err := strconv.Atoi(os.Getenv("WARMFIT_STATIONARY_TABLE_SHOTS")); err == nil {
		shots = v
	}
	spec := fmt.Sprintf("chain:%d", n)
	l, terms := testModel(t, spec, "tfim", map[string]float64{"J": 1, "hx": 0.8, "hz": 0.3}, 0.3, 5)
	truth := coeffs(terms)
	maxc := 0.0
	for _, c := range truth {
		maxc = max(maxc, math.Abs(c))
	}
	sys, err := NewSystem(n, terms)
	if err != nil {
		t.Fatal(err)
	}
	bases, _, _ := fit.SchemeBases("covering:3", n, terms, 1)
	var table []string
	table = append(table, fmt.Sprintf("%s TFIM J=1 hx=0.8 hz=0.3 disorder 0.3 (max|coeff| %.3f), %d bases x %d shots; errors max/rms over %d coefficients", spec, maxc, len(bases), shots, len(terms)))
	table = append(table, "beta*max|coeff| | stationary max/rms (pull rms) | expansion fit max/rms (order) | 6-site patch fits max/rms")
	for _, x := range []float64{0.1, 0.3, 0.5, 1.0} {
		beta := x / maxc
		start := time.Now()
		sampler, err := validate.NewSampler(n, terms, beta)
		if err != nil {
			t.Fatal(err)
		}
		est := sampleEstimates(t, sampler, sys, bases, shots, 7)
		row := fmt.Sprintf("%.1f |", x)
		d, err := Solve(sys, est, Options{})
		if err == nil {
			var res *Result
			res, err = Fix(sys, est, d, Gauge{Beta: beta, Evaluate: exactEvaluator(n, terms)}, Options{})
			if err == nil {
				w, r := errorsAgainst(res.Lambda, truth)
				var z2 float64
				for k := range truth {
					z := (res.Lambda[k] - truth[k]) / res.StdErr[sys.Params().Of[k]]
					z2 += z * z
				}
				row += fmt.Sprintf(" %.3g/%.3g (%.2f) |", w, r, math.Sqrt(z2/float64(len(truth))))
			}
		}
		if err != nil {
			row += " refused: " + firstWords(err.Error(), 8) + " |"
		}
		te := termEstimates(sys, est)
		// The expansion at the orders an experiment on a large array can
		// afford (at most 7; on this chain higher orders would be exact).
		res, err := fit.Fit(&fit.Problem{Lattice: l, Terms: slices.Clone(terms), Data: te, Beta: beta}, fit.Options{Budget: 60 * time.Second, MaxOrder: min(7, n-1)})
		switch {
		case err != nil:
			row += " failed: " + firstWords(err.Error(), 8) + " |"
		case !res.Converged:
			row += " not converged |"
		default:
			w, r := errorsAgainst(res.Coeffs, truth)
			trust := ""
			if len(res.Untrusted) > 0 {
				trust = ", untrusted"
			}
			row += fmt.Sprintf(" %.3g/%.3g (order %d%s) |", w, r, res.Order, trust)
		}
		pf, err := patchFits(t, &model.Model{Lattice: l, Terms: slices.Clone(terms), Beta: beta}, te, beta, 6)
		if err != nil {
			row += " failed: " + firstWords(err.Error(), 8)
		} else {
			w, r := errorsAgainst(pf, truth)
			row += fmt.Sprintf(" %.3g/%.3g", w, r)
		}
		table = append(table, row+fmt.Sprintf("   [%.0fs]", time.Since(start).Seconds()))
		t.Log(table[len(table)-1])
	}
	t.Log("\n" + strings.Join(table, "\n"))
}

func firstWords(s string, n int) string {
	w := strings.Fields(s)
	if len(w) > n {
		w = w[:n]
	}
	return strings.Join(w, " ")
}
