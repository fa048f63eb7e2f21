package main

import (
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"warmfit/fit"
	"warmfit/lattice"
	"warmfit/lattice/model"
)

// The demo's fits (steps 3 and 4) and how well they recover the truth:
// fit.LoadEstimates, fit.Fit and fit.CompareTruth, as "warmfit fit
// --truth" runs them, and the statistics of the pulls the report and
// the figures show.

// fitJob names the files and models of one fit.
type fitJob struct {
	template           *model.Model
	templateFile, data string
	truth              *model.Model
	truthFile, out     string
	order              int // 0: automatic
}

// demoFit is one fit with its report and its comparison with the truth.
type demoFit struct {
	Model    *model.Model // the fitted model, as written
	Result   *fit.Result
	Report   *fit.Report
	Recovery *demoRecovery
}

// fitData fits the template to a data file of the output directory,
// compares the result with the truth and writes the fitted model, and
// records the command for step.
func (d *demoRun) fitData(step int, j fitJob) (*demoFit, error) {
	args := []string{"fit", "--model", j.templateFile, "--data", j.data, "--truth", j.truthFile}
	if j.order > 0 {
		args = append(args, "--order", fmt.Sprint(j.order))
	} else {
		args = append(args, "--budget", d.sc.Budget.String())
	}
	d.record(step, "the fit, compared with the truth", append(args, "-o", j.out)...)
	lat, terms := j.template.Lattice, j.template.Terms
	est, summary, err := fit.LoadEstimates(d.path(j.data), lat, terms, fit.CovarianceOptions{Distance: 1})
	if err != nil {
		return nil, err
	}
	bar := newProgressBar(d.env, "fitting")
	res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: terms, Data: est, Beta: j.template.Beta}, fit.Options{
		Order: j.order, Budget: d.sc.Budget, Progress: bar.Update,
		Log: func(format string, args ...any) {
			if line := fmt.Sprintf(format, args...); !strings.Contains(line, "iteration") {
				d.say("fit: %s", line)
			}
		},
	})
	bar.Done()
	if err != nil {
		return nil, fmt.Errorf("%s: %w", j.data, err)
	}
	if !res.Converged {
		return nil, fmt.Errorf("the fit of %s did not converge: %s", j.data, res.Reason)
	}
	mode := fit.OrderAuto
	if j.order > 0 {
		mode = fit.OrderFixed
	}
	rep := fit.NewReport(res, mode, summary.Kind, j.data, 1e-3)
	cmp, err := fit.CompareTruth(res, j.truth.Terms, 1)
	if err != nil {
		return nil, err
	}
	rep.SetTruth(cmp, res, j.truthFile)
	f := &demoFit{Result: res, Report: rep}
	if f.Recovery, err = newDemoRecovery(res, cmp, j.truth.Terms); err != nil {
		return nil, err
	}
	if err := d.write(j.out, func(w io.Writer) error { return fitWriteModel(w, j.template, res, rep) }); err != nil {
		return nil, err
	}
	f.Model = &model.Model{Lattice: lat, Terms: res.Terms, Beta: res.Beta}
	d.say("fit: order %d (%s), %s, %.1fs", res.Order, mode, newtonIterations(res.TotalIterations, res.Iterations, res.Order), res.Elapsed.Seconds())
	return f, nil
}

// demoRecovery is a fit's recovery of the true coefficients:
// fit.CompareTruth and the statistics of its pulls (the z-scores
// (fitted - true)/stderr) the report and the figures show.
type demoRecovery struct {
	*fit.TruthComparison
	Terms        []lattice.Term // the fitted terms
	Truth        []float64      // the true coefficient of each
	LargestError string         // the term of Linf (largest |fit - truth|)
	// PullMean and Within2 (the fraction of |pull| <= 2) complete the
	// comparison's rms and largest |pull|.
	PullMean, Within2    float64
	Within2Count         int // how many |pull| <= 2
	MedStderr, MaxStderr float64
	ByKind               []demoKindStats
}

// demoKindStats summarises one kind of term (XX, YY, ZZ, X, Z).
type demoKindStats struct {
	Pauli                        string
	Count                        int
	TrueMean, TrueMin, TrueMax   float64
	RMSError, MedStderr, PullRMS float64
}

// newDemoRecovery completes the comparison; every fitted term must have
// an error bar.
func newDemoRecovery(res *fit.Result, cmp *fit.TruthComparison, truth []lattice.Term) (*demoRecovery, error) {
	if len(res.Terms) == 0 {
		return nil, errors.New("no fitted terms")
	}
	want := make(map[string]float64, len(truth))
	for _, t := range truth {
		want[t.Key()] = t.Coeff
	}
	r := &demoRecovery{TruthComparison: cmp, Terms: res.Terms, Truth: make([]float64, len(res.Terms))}
	if cmp.LargestErrorTerm >= 0 {
		r.LargestError = res.Terms[cmp.LargestErrorTerm].Key()
	}
	stderrs := make([]float64, len(res.Terms))
	within := 0
	for k, t := range res.Terms {
		if !t.HasStderr || !(t.Stderr > 0) || math.IsNaN(cmp.Z[k]) {
			return nil, fmt.Errorf("fitted term %s has no error bar", t.Key())
		}
		r.Truth[k] = want[t.Key()]
		r.PullMean += cmp.Z[k]
		if math.Abs(cmp.Z[k]) <= 2 {
			within++
		}
		stderrs[k] = t.Stderr
	}
	n := float64(len(res.Terms))
	r.PullMean /= n
	r.Within2, r.Within2Count = float64(within)/n, within
	r.MedStderr, r.MaxStderr = medianOf(stderrs), slices.Max(stderrs)
	r.ByKind = r.kindStats()
	return r, nil
}

// kindStats groups the terms by kind, in the order the kinds first
// appear.
func (r *demoRecovery) kindStats() []demoKindStats {
	var out []demoKindStats
	for _, kind := range termKinds(r.Terms) {
		s := demoKindStats{Pauli: kind, TrueMin: math.Inf(1), TrueMax: math.Inf(-1)}
		var e2, z2 float64
		var se []float64
		for k, t := range r.Terms {
			if t.Pauli != kind {
				continue
			}
			tv, e := r.Truth[k], t.Coeff-r.Truth[k]
			s.Count++
			s.TrueMean += tv
			s.TrueMin, s.TrueMax = math.Min(s.TrueMin, tv), math.Max(s.TrueMax, tv)
			e2 += e * e
			z2 += r.Z[k] * r.Z[k]
			se = append(se, t.Stderr)
		}
		m := float64(s.Count)
		s.TrueMean /= m
		s.RMSError, s.MedStderr, s.PullRMS = math.Sqrt(e2/m), medianOf(se), math.Sqrt(z2/m)
		out = append(out, s)
	}
	return out
}

// termKinds lists the kinds of terms present, in the order they first
// appear.
func termKinds(terms []lattice.Term) []string {
	var out []string
	for _, t := range terms {
		if !slices.Contains(out, t.Pauli) {
			out = append(out, t.Pauli)
		}
	}
	return out
}

func medianOf(v []float64) float64 {
	s := slices.Clone(v)
	slices.Sort(s)
	if len(s)%2 == 1 {
		return s[len(s)/2]
	}
	return (s[len(s)/2-1] + s[len(s)/2]) / 2
}

// Consistency bands for pulls of honest error bars, at three standard
// deviations of the statistic for n independent standard-normal pulls
// (common practice): the mean has sd 1/sqrt(n); the rms has sd about
// 1/sqrt(2n). (The fraction within 2 sigma is judged by an exact
// binomial test, binomialTwoSided.)
func pullBands(n int) (mean, rms float64) {
	f := float64(n)
	return 3 / math.Sqrt(f), 3 / math.Sqrt(2*f)
}

// within2Normal is the chance that a standard-normal pull lies within
// 2 sigma: erf(sqrt 2) = 0.9545.
var within2Normal = math.Erf(math.Sqrt2)

// binomialTwoSided is the two-sided p-value of k successes in n trials of
// chance p: the total probability of the outcomes no more likely than k
// (the "minimum likelihood" rule of the exact binomial test; Hollander,
// Wolfe and Chicken, Nonparametric Statistical Methods, from memory).
func binomialTwoSided(k, n int, p float64) float64 {
	b := distuv.Binomial{N: float64(n), P: p}
	pk := b.Prob(float64(k))
	sum := 0.0
	for i := 0; i <= n; i++ {
		if q := b.Prob(float64(i)); q <= pk*(1+1e-7) {
			sum += q
		}
	}
	return math.Min(sum, 1)
}

// maxPullChance is the probability that the largest of n independent
// standard-normal |pulls| is at least x: 1 - (1 - erfc(x/sqrt 2))^n.
func maxPullChance(x float64, n int) float64 {
	q := math.Erfc(x / math.Sqrt2)
	return -math.Expm1(float64(n) * math.Log1p(-q))
}
