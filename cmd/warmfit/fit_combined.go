package main

import (
	"encoding/json"
	"fmt"
	"strings"

	"warmfit/fit"
	"warmfit/fit/stationary"
	"warmfit/lattice/model"
)

// fitMethodCombined is the value of fit --method that combines the
// expansion fit with the stationarity constraints (stationary.Combine).
const fitMethodCombined fitMethod = "combined"

const fitCombinedLong = `

combined runs the expansion fit, then the stationarity constraints on the same
data, and combines the two by generalised least squares: stationarity says that the
components of the expansion's estimate off the learned direction vanish, and the
expansion's estimate is corrected by the regression on them, with the covariance of
both and their correlation (they use the same shots) from the delta method. The
scale is the expansion's (no thermal match is needed; without beta the
coefficients are beta*lambda, as for the expansion). A consistency test (chi2 of
those components against their covariance) comes first: when it fails, an
expansion that is trusted (every series converged, or exact on a small lattice) is
kept, and one that is not is dropped as biased and stationarity alone is used (it
then needs --beta or --calibrate for its scale). An expansion that is not trusted
but agrees enters with its truncation errors (each coefficient's calibrated
truncation estimate, as in the fit report), which widen the error bars. auto prefers the combination
wherever both hold: after choosing the expansion as above it combines it with the
stationarity constraints when their checks pass (and the lattice is small enough
for the dense combination), and where it would choose stationarity over an
expansion that converged but is not trusted it combines them when they agree.
stderr and the report's "estimator" object say which estimator was used and why.
For example:

  warmfit model --lattice chain:8 --preset tfim --set J=1,hx=0.8,hz=0.3 --disorder 0.3 --beta 0.7 -o chain.json
  warmfit sample --model chain.json --shots 20000 --bases covering:3 -o shots.csv
  warmfit fit --model chain.json --data shots.csv --method combined --truth chain.json -o fitted.json`

// combinationReport is the "combination" object of the report's
// "estimator".
type combinationReport struct {
	Method      string  `json:"method"`
	Correlation string  `json:"correlation"`
	Chi2        float64 `json:"consistency_chi2"`
	DOF         int     `json:"consistency_dof"`
	P           float64 `json:"consistency_p"`
	Consistent  bool    `json:"consistent"`
	// VarianceRatio is the median combined variance over the
	// expansion's.
	VarianceRatio    float64 `json:"variance_ratio"`
	ExpansionTrusted bool    `json:"expansion_trusted"`
	// Systematic is the largest truncation error added to the parameters
	// of an expansion that is not trusted (0 when trusted).
	Systematic       float64  `json:"expansion_systematic"`
	StationaryChecks bool     `json:"stationary_checks_passed"`
	StationaryIssues []string `json:"stationary_problems"`
}

// combinedMaxEntries bounds the dense influence matrices of the
// combination (parameters times correlators, about 40 MB each) that
// --method auto tries: beyond it auto keeps the expansion without trying.
const combinedMaxEntries = 5e6

// expansionTrusted says whether the expansion fit res is trusted on a
// lattice of n sites: converged with every series trusted, or at an
// order that covers the lattice (exact).
func expansionTrusted(res *fit.Result, n int) bool {
	return res != nil && res.Converged && (res.Order >= n || len(res.Untrusted) == 0)
}

// fitCombine combines the expansion fit res with the stationarity
// constraints (run, when the caller already computed it, else solved
// here). explicit is --method combined: its failures are WARNINGs on a
// kept expansion; for auto they are reasons, on stderr, to keep it.
// When done is true the stationarity result was written (the expansion
// was dropped as biased); otherwise the caller writes out with the
// estimator record est.
func fitCombine(env *runEnv, tmpl *model.Model, beta float64, res *fit.Result, run *stationaryRun, explicit bool) (done bool, out *fit.Result, est *fit.ReportEstimator, err error) {
	label := "method auto"
	if explicit {
		label = "method combined"
	}
	n := tmpl.Lattice.NumSites()
	trusted := expansionTrusted(res, n)
	keep := func(why string) (bool, *fit.Result, *fit.ReportEstimator, error) {
		fmt.Fprintf(env.Stderr, "fit: %s keeps the expansion: %s\n", label, why)
		if explicit {
			res.Warnings = append(res.Warnings, "no combination with the stationarity constraints: "+why+"; the coefficients are the expansion fit's alone")
		}
		return false, res, &fit.ReportEstimator{Method: "expansion", Reason: why}, nil
	}
	if res == nil || !res.Converged {
		why := "the expansion fit failed"
		if res != nil {
			why = "the expansion fit did not converge: " + res.Reason
		}
		if run == nil {
			if !explicit {
				return false, res, nil, nil // the caller reports the failed expansion fit
			}
			fmt.Fprintf(env.Stderr, "fit: %s: %s; trying stationarity alone\n", label, why)
			var serr error
			if run, serr = solveStationary(env, tmpl); serr != nil {
				fmt.Fprintf(env.Stderr, "fit: %s: the stationarity method failed too: %v\n", label, serr)
				return false, res, nil, nil
			}
		}
		return useStationary(env, tmpl, beta, run, label, why)
	}
	if _, perr := res.Propagate(make([]float64, len(tmpl.Terms))); perr != nil {
		return keep("the expansion fit has no first-order error propagation to combine with (" + strings.TrimPrefix(perr.Error(), "fit: ") + ")")
	}
	if run == nil {
		sys, serr := stationary.NewSystemWith(n, tmpl.Terms, stationary.SystemOptions{FarPairs: fitMethodOptions.farPairs})
		if serr != nil {
			return keep("the stationarity constraints cannot be built: " + serr.Error())
		}
		if size := sys.Params().NumParams() * len(sys.Strings); !explicit && size > combinedMaxEntries {
			return keep(fmt.Sprintf("the dense combination would need %d entries (%d parameters x %d correlators), above %g", size, sys.Params().NumParams(), len(sys.Strings), float64(combinedMaxEntries)))
		}
		fmt.Fprintf(env.Stderr, "fit: %s: the expansion fit combined with the stationarity constraints\n", label)
		if run, err = solveStationary(env, tmpl); err != nil {
			return keep("the stationarity method failed: " + err.Error())
		}
	}
	if len(run.problems) > 0 && !explicit {
		return keep("the stationarity direction fails its own checks (" + strings.Join(run.problems, "; ") + ")")
	}
	// An expansion that is not trusted carries its truncation error as
	// a systematic error on every parameter.
	var systematic []float64
	largest := 0.0
	if t := res.Truncation; !trusted && t.Known && !t.Exact {
		if systematic = t.ParamError; systematic == nil {
			systematic = make([]float64, len(res.Theta))
			for q := range systematic {
				systematic[q] = t.Error
			}
		}
		largest = t.Error
	}
	comb, err := stationary.Combine(run.sys, run.est, run.d, stationary.ExpansionEstimate{Theta: res.Theta, Propagate: res.Propagate, Systematic: systematic}, stationary.CombineOptions{})
	if err != nil {
		return keep("the combination failed: " + err.Error())
	}
	choice, why := comb.Choose(trusted)
	rec := combinationReport{
		Method:      "generalised least squares of the expansion's estimate on its components off the stationarity direction (fit/stationary Combine)",
		Correlation: "estimated: first-order delta method on the covariance of the shared shots",
		Chi2:        comb.Chi2, DOF: comb.DOF, P: comb.P, Consistent: comb.Consistent, VarianceRatio: comb.VarianceRatio,
		ExpansionTrusted: trusted, Systematic: largest, StationaryChecks: len(run.problems) == 0, StationaryIssues: append([]string{}, run.problems...),
	}
	raw, err := json.Marshal(rec)
	if err != nil {
		return false, nil, nil, fmt.Errorf("fit report: %v", err)
	}
	fmt.Fprintf(env.Stderr, "fit: %s: consistency chi2 %s for %d dof (p = %s)\n", label, fmtG3(comb.Chi2), comb.DOF, fmtG3(comb.P))
	switch choice {
	case stationary.UseStationary:
		return useStationary(env, tmpl, beta, run, label, why)
	case stationary.UseExpansion:
		fmt.Fprintf(env.Stderr, "fit: %s chose the expansion: %s\n", label, why)
		res.Warnings = append(res.Warnings, "the stationarity constraints disagree with the expansion fit ("+fmt.Sprintf("consistency chi2 %s for %d dof", fmtG3(comb.Chi2), comb.DOF)+"): the state may not be stationary, or stationarity has too little signal; the expansion fit is kept")
		return false, res, &fit.ReportEstimator{Method: "expansion", Reason: why, Combination: raw}, nil
	}
	for _, w := range run.warnings {
		res.Warnings = append(res.Warnings, "stationarity: "+w)
	}
	out, err = res.WithParameters(comb.Theta, comb.Cov, "coefficients: the expansion fit combined with the stationarity constraints ("+why+")")
	if err != nil {
		return keep("the combination is not finite: " + err.Error())
	}
	fmt.Fprintf(env.Stderr, "fit: %s chose the combination: %s\n", label, why)
	return false, out, &fit.ReportEstimator{Method: "combined", Reason: why, Combination: raw}, nil
}

// useStationary writes the stationarity result run (fixing its scale
// first) in place of a dropped expansion fit.
func useStationary(env *runEnv, tmpl *model.Model, beta float64, run *stationaryRun, label, why string) (bool, *fit.Result, *fit.ReportEstimator, error) {
	if run.res == nil {
		if err := run.fix(tmpl, beta); err != nil {
			return true, nil, nil, fmt.Errorf("%s: %s, and the stationarity result cannot be scaled: %w", label, why, err)
		}
	}
	fmt.Fprintf(env.Stderr, "fit: %s chose stationary: %s\n", label, why)
	run.reason = why
	return true, nil, nil, writeStationary(env, tmpl, beta, run)
}
