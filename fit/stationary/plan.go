package stationary

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"warmfit/fit"
	"warmfit/lattice"
)

// NormRMS measures a plan's target as the root mean square over the
// terms: E[mean_k err_k²] at most Target². fit.NormLinf and fit.NormL2
// are accepted too.
const NormRMS fit.Norm = "rms"

// PlanOptions controls PlanShots.
type PlanOptions struct {
	// Target is the direction error to reach: the error of the
	// coefficients once the scale is fixed to the model's norm (see Plan),
	// in the norm Norm (default NormRMS).
	Target float64
	Norm   fit.Norm
	// Confidence of the fit.NormLinf guarantee (Bonferroni); default 0.95.
	Confidence float64
	// ScaleTarget, when positive, is the relative standard error the
	// overall scale should reach (thermal match at Beta; needs Evaluate).
	ScaleTarget float64
	// Beta is the model's inverse temperature (reported as
	// beta x max|coeff|, how the signal scales). Beta and Evaluate, when
	// both set, give the thermal match that fixes the scale in 'warmfit
	// fit --method stationary': the plan then also predicts the scale's
	// error and the full error bars.
	Beta     float64
	Evaluate Evaluator
	System   SystemOptions
	Solver   Options
	// Source says where the probabilities come from (recorded in Notes).
	Source string
}

// Plan is a shot budget for the stationarity estimator.
//
// The direction error of coefficient k is |lambda| (u^_k - u_k) with u
// and u^ the unit coefficient vectors of the model and of the estimate
// (sign aligned): the coefficient error once the scale is fixed to the
// model's norm. To first order it is P dlambda, P = 1 - u u^T, for the
// delta-method error dlambda of any gauge that fixes the scale (Fix with
// the largest parameter calibrated).
type Plan struct {
	Bases         []string
	ShotsPerBasis int64
	TotalShots    int64
	Norm          fit.Norm
	Target        float64
	Confidence    float64
	// Z is the Bonferroni normal quantile (NormLinf), as in fit.Plan.
	Z float64
	// ScaleTarget is PlanOptions.ScaleTarget.
	ScaleTarget float64
	// Params, Rows and Strings count parameters, constraints used and
	// correlators needed (MissingStrings of them served by no basis).
	Params, Rows, Strings, MissingStrings int
	// DirectionVarPerShot[k] is the variance of term k's direction error
	// with one shot per basis; DirectionStderr[k] its standard error at
	// ShotsPerBasis.
	DirectionVarPerShot []float64
	DirectionStderr     []float64
	// ScaleRelVarPerShot is the squared relative standard error of the
	// scale, u . lambda^ / |lambda| (u the model's unit coefficient
	// vector), fixed by the thermal match, with one shot per basis (0
	// without a match): the term expectations' noise and the direction's
	// own noise propagated through the match. ScaleStderr is its relative
	// standard error at ShotsPerBasis.
	ScaleRelVarPerShot float64
	ScaleStderr        float64
	// VarPerShot and Stderr are the full error bars of the coefficients
	// (scale by the thermal match; nil without one), as Fix reports them.
	VarPerShot []float64
	Stderr     []float64
	// ShotsDirection, ShotsScale and ShotsLinear are the shots per basis
	// the direction target, the scale target and the linear regime need
	// (every resolved eigen-direction of the constraints known to 0.1 of
	// the unit direction, where the delta method holds; below it
	// Direction.Weak and error bars too small); ShotsPerBasis is the
	// largest.
	ShotsDirection, ShotsScale, ShotsLinear int64
	// WeakestStderrPerShot is the standard error, in units of the unit
	// direction, of the least resolved eigen-direction with one shot per
	// basis.
	WeakestStderrPerShot float64
	// Invisible names the directions the constraints cannot see (conserved
	// quantities): no number of shots fixes them; a calibration or the
	// thermal match must.
	Invisible []string
	// BetaMaxCoeff is beta x max|lambda_k| (the signal scales with it).
	BetaMaxCoeff float64
	Notes        []string
	Warnings     []string
}

// maxPlanShots is the largest shots per basis a plan returns: beyond it
// the estimator has no usable signal (refused with ErrNoInformation).
const maxPlanShots = 1e12

// weakStdErr is the standard error of a resolved eigen-direction above
// which Solve reports Weak (solve.go).
const weakStdErr = 0.1

// PlanShots predicts how many shots per basis the stationarity estimator
// needs to learn terms (the model, with its coefficients and beta) to
// the target precision from snapshots in bases, measured equally often.
//
// It predicts the constraint entries and their covariance for one shot
// per basis from the state's outcome probabilities (Predict), runs
// Solve and Fix on them (the exact direction, and the delta-method error
// bars of uncertainty.go), and scales the variances by 1/shots: the
// delta method is first order in the noise, so variances fall like
// 1/N (Bevington and Robinson, Data Reduction and Error Analysis, ch. 3,
// propagation of errors). A reference number of shots is used for the
// solve and divided out.
//
// It refuses (ErrNoInformation) when even maxPlanShots would leave the
// signal below the noise: the constraints vanish like beta at high
// temperature.
func PlanShots(n int, terms []lattice.Term, bases []string, probs BasisProbabilities, opt PlanOptions) (*Plan, error) {
	if !(opt.Target > 0) || math.IsInf(opt.Target, 0) {
		return nil, fmt.Errorf("stationary: plan target %v must be positive and finite", opt.Target)
	}
	if opt.Norm == "" {
		opt.Norm = NormRMS
	}
	if opt.Norm != NormRMS && opt.Norm != fit.NormLinf && opt.Norm != fit.NormL2 {
		return nil, fmt.Errorf("stationary: plan norm %q: want %s, %s or %s", opt.Norm, NormRMS, fit.NormLinf, fit.NormL2)
	}
	if opt.Confidence == 0 {
		opt.Confidence = 0.95
	}
	if !(opt.Confidence > 0 && opt.Confidence < 1) {
		return nil, fmt.Errorf("stationary: plan confidence %v must lie in (0, 1)", opt.Confidence)
	}
	if opt.ScaleTarget < 0 || math.IsNaN(opt.ScaleTarget) {
		return nil, fmt.Errorf("stationary: scale target %v must be positive (or 0 for none)", opt.ScaleTarget)
	}
	if opt.ScaleTarget > 0 && (opt.Evaluate == nil || !(opt.Beta > 0)) {
		return nil, errors.New("stationary: a scale target needs the thermal match: a known beta and an evaluator")
	}
	if len(bases) == 0 {
		return nil, errors.New("stationary: plan needs at least one basis")
	}
	sys, err := NewSystemWith(n, terms, opt.System)
	if err != nil {
		return nil, err
	}
	pred, err := Predict(sys, bases, probs)
	if err != nil {
		return nil, err
	}
	lambda := make([]float64, len(terms))
	for k, t := range terms {
		lambda[k] = t.Coeff
	}
	norm := floats.Norm(lambda, 2)
	if norm == 0 {
		return nil, errors.New("stationary: the model's coefficients are all zero: there is nothing to plan for")
	}
	moved, err := pred.makeStationary(sys, lambda)
	if err != nil {
		return nil, err
	}
	pl := &Plan{
		Bases: bases, Norm: opt.Norm, Target: opt.Target, Confidence: opt.Confidence, ScaleTarget: opt.ScaleTarget,
		Params: sys.params.NumParams(), Strings: len(sys.Strings), MissingStrings: len(pred.Missing),
		BetaMaxCoeff: opt.Beta * floats.Norm(lambda, math.Inf(1)),
	}
	// Solve at a reference number of shots, raised until every
	// eigen-direction the constraints can see is resolved; directions
	// still unresolved at maxPlanShots are structural (the probes cannot
	// see them) and are named like conserved quantities.
	var d *Direction
	var est *fit.Estimates
	ref := 1e6
	for ; ; ref *= 100 {
		est = pred.Estimates(ref)
		d, err = Solve(sys, est, opt.Solver)
		if err != nil && !errors.Is(err, ErrNoInformation) {
			return nil, err
		}
		if err == nil && !slices.ContainsFunc(d.Invisible, func(v InvisibleDirection) bool { return !v.conserved }) {
			break
		}
		if ref >= maxPlanShots {
			if err != nil {
				return nil, fmt.Errorf("%w; even %.0g shots per basis resolve nothing%s: the constraints vanish like beta at high temperature, and symmetric models with few probes (free couplings of a U(1) model) leave directions invisible at any temperature", err, maxPlanShots, pl.betaText())
			}
			break
		}
	}
	pl.Rows = d.Rows
	for j := 1; j < len(d.StdErr); j++ {
		if se := d.StdErr[j]; !math.IsInf(se, 0) && !math.IsNaN(se) {
			pl.WeakestStderrPerShot = max(pl.WeakestStderrPerShot, se*math.Sqrt(ref))
		}
	}
	for _, inv := range d.Invisible {
		pl.Invisible = append(pl.Invisible, inv.Name)
	}

	// Direction error: calibrate the largest parameter (and one per
	// conserved quantity) to the model and project the covariance.
	theta := make([]float64, sys.params.NumParams())
	sys.params.Reduce(theta, lambda)
	cal := map[string]float64{}
	used := map[int]bool{}
	pick := func(v []float64) {
		best := -1
		for q, x := range v {
			if !used[q] && (best < 0 || math.Abs(x) > math.Abs(v[best])) {
				best = q
			}
		}
		used[best] = true
		cal[sys.params.Names[best]] = theta[best]
	}
	pick(theta)
	for _, inv := range d.Invisible {
		pick(inv.Vector)
	}
	res, err := Fix(sys, est, d, Gauge{Calibrated: cal}, opt.Solver)
	if err != nil {
		return nil, err
	}
	if res.freeCov == nil {
		return nil, fmt.Errorf("stationary: plan: the delta-method covariance was not computed (%s)", strings.Join(res.Warnings, "; "))
	}
	pl.DirectionVarPerShot = directionVariances(sys, res, lambda, norm, ref)

	// Scale and full error bars: the thermal match at the known beta.
	if opt.Evaluate != nil && opt.Beta > 0 {
		mres, err := Fix(sys, est, d, Gauge{Beta: opt.Beta, Evaluate: opt.Evaluate}, opt.Solver)
		if err != nil {
			return nil, fmt.Errorf("stationary: plan: thermal match: %w", err)
		}
		if mres.matchCov == nil {
			return nil, fmt.Errorf("stationary: plan: the thermal match's error bars were not computed (%s)", strings.Join(mres.Warnings, "; "))
		}
		// The scale is u . lambda^ / |lambda|: w = the terms' u summed per
		// parameter.
		w := make([]float64, sys.params.NumParams())
		for k, q := range sys.params.Of {
			w[q] += lambda[k] / norm
		}
		pl.ScaleRelVarPerShot = mres.matchCov.quadratic(w) / (norm * norm) * ref
		// Fix scales error bars up by sqrt(chi²/dof) of the match; on
		// predicted data that chi² measures only how far the evaluator
		// (an expansion, say) is from the predicted expectations, not
		// noise, so the plan undoes it and says so.
		f := 1.0
		if mres.ErrorScale > 1 {
			f = 1 / mres.ErrorScale
			if mres.ErrorScale > 1.5 {
				pl.Warnings = append(pl.Warnings, fmt.Sprintf("the thermal match's evaluator disagrees with the predicted expectations beyond %.0g shots' noise (chi2/dof %.3g): at this temperature the scale is only as good as the evaluator, whatever the shots", ref, mres.ErrorScale*mres.ErrorScale))
			}
		}
		pl.VarPerShot = make([]float64, len(terms))
		for k := range terms {
			se := mres.StdErr[sys.params.Of[k]] * f
			pl.VarPerShot[k] = se * se * ref
		}
		for _, w := range mres.Warnings {
			pl.Warnings = append(pl.Warnings, "thermal match: "+w)
		}
		if mres.Match != nil && !mres.Match.directionComplete {
			pl.Warnings = append(pl.Warnings, fmt.Sprintf("the time budget let only %d error directions be propagated through the thermal match: the full error bars and the scale are underestimated", mres.Match.DirectionRank))
		}
	}
	if opt.Norm == fit.NormLinf {
		pl.Z = distuv.UnitNormal.Quantile(1 - (1-opt.Confidence)/(2*float64(pl.Params)))
	}
	pl.ShotsDirection = shotsFor(pl.DirectionVarPerShot, opt.Norm, pl.Z, opt.Target)
	if opt.ScaleTarget > 0 {
		pl.ShotsScale = ceilShots(pl.ScaleRelVarPerShot / (opt.ScaleTarget * opt.ScaleTarget))
	}
	pl.ShotsLinear = ceilShots(math.Pow(pl.WeakestStderrPerShot/weakStdErr, 2))
	shots := max(pl.ShotsDirection, pl.ShotsScale, pl.ShotsLinear)
	if float64(shots) > maxPlanShots {
		return nil, fmt.Errorf("%w: about %.3g shots per basis needed%s: the constraints vanish like beta, so the signal is too weak at this temperature", ErrNoInformation, float64(shots), pl.betaText())
	}
	pl.setShots(shots)
	pl.notes(opt, ref)
	if moved > 1e-9 {
		pl.Notes = append(pl.Notes, fmt.Sprintf("predicted correlators moved by up to %.2g to make the model exactly stationary (the size of the prediction's own error, as with thermal typicality)", moved))
	}
	return pl, nil
}

// matchCovariance is the covariance of the parameters with a thermal
// match, in the parts errorBars assembles: the sandwich cov off the
// matched span, the direction's error directions g_j replacing
// sigma_j² v_j v_j^T, and the matched multipliers' covariance along dirs.
type matchCovariance struct {
	cov   *mat.Dense
	g, v  [][]float64
	sigma []float64
	dirs  [][]float64
	tCov  *mat.SymDense
}

// quadratic returns w^T Cov w.
func (c *matchCovariance) quadratic(w []float64) float64 {
	wv := mat.NewVecDense(len(w), w)
	q := mat.Inner(wv, c.cov, wv)
	for j := range c.g {
		a, b := floats.Dot(w, c.g[j]), c.sigma[j]*floats.Dot(w, c.v[j])
		q += a*a - b*b
	}
	wd := make([]float64, len(c.dirs))
	for i, d := range c.dirs {
		wd[i] = floats.Dot(w, d)
	}
	x := mat.NewVecDense(len(wd), wd)
	if len(wd) > 0 {
		q += mat.Inner(x, c.tCov, x)
	}
	return max(q, 0)
}

// betaText is " at beta x max|coeff| = B" when beta is known.
func (pl *Plan) betaText() string {
	if pl.BetaMaxCoeff > 0 {
		return fmt.Sprintf(" at beta x max|coeff| = %.3g", pl.BetaMaxCoeff)
	}
	return ""
}

// directionVariances returns Var(P dlambda)_k times ref (one shot per
// basis) from the calibrated-gauge covariance of Fix, in term space.
func directionVariances(sys *System, res *Result, lambda []float64, norm, ref float64) []float64 {
	p := sys.params
	np := p.NumParams()
	c := make([]float64, np*np)
	for i, a := range res.free {
		for j, b := range res.free {
			c[a*np+b] = res.freeCov.At(i, j)
		}
	}
	nt := len(lambda)
	u := make([]float64, nt)
	for k := range u {
		u[k] = lambda[k] / norm
	}
	// cu = C u, ucu = u^T C u in term space (C_kl = c[Of k, Of l]).
	cu := make([]float64, nt)
	for k := range nt {
		for l := range nt {
			cu[k] += c[p.Of[k]*np+p.Of[l]] * u[l]
		}
	}
	ucu := floats.Dot(u, cu)
	out := make([]float64, nt)
	for k := range nt {
		v := c[p.Of[k]*np+p.Of[k]] - 2*u[k]*cu[k] + u[k]*u[k]*ucu
		out[k] = max(v, 0) * ref
	}
	return out
}

// shotsFor returns the shots per basis that bring variances per shot to
// the target in the norm.
func shotsFor(varPerShot []float64, norm fit.Norm, z, target float64) int64 {
	var maxVar, sumVar float64
	for _, v := range varPerShot {
		maxVar = max(maxVar, v)
		sumVar += v
	}
	var s float64
	switch norm {
	case fit.NormLinf:
		s = z * z * maxVar
	case fit.NormL2:
		s = sumVar
	default:
		s = sumVar / float64(max(len(varPerShot), 1))
	}
	return ceilShots(s / (target * target))
}

// ShotsFor returns the shots per basis that bring the per-term variances
// per shot vps (one shot per basis) to target in norm, with the plan's
// Bonferroni quantile for fit.NormLinf: how another estimator's plan is
// put on the same footing.
func (pl *Plan) ShotsFor(vps []float64, norm fit.Norm, target float64) int64 {
	return shotsFor(vps, norm, pl.Z, target)
}

func ceilShots(s float64) int64 {
	if math.IsNaN(s) || s > maxPlanShots*10 {
		return int64(maxPlanShots * 10)
	}
	return max(int64(math.Ceil(s)), 2)
}

// setShots fills the shots and the standard errors at shots per basis.
func (pl *Plan) setShots(shots int64) {
	pl.ShotsPerBasis = shots
	pl.TotalShots = shots * int64(len(pl.Bases))
	f := 1 / float64(shots)
	pl.DirectionStderr = sqrtScaled(pl.DirectionVarPerShot, f)
	pl.ScaleStderr = math.Sqrt(pl.ScaleRelVarPerShot * f)
	if pl.VarPerShot != nil {
		pl.Stderr = sqrtScaled(pl.VarPerShot, f)
	}
}

func sqrtScaled(v []float64, f float64) []float64 {
	out := make([]float64, len(v))
	for k, x := range v {
		out[k] = math.Sqrt(x * f)
	}
	return out
}

// Retarget returns the plan for another direction target (same model,
// scheme, norm and scale target): variances per shot do not depend on
// the target, so nothing is solved again.
func (pl *Plan) Retarget(target float64) (*Plan, error) {
	if !(target > 0) || math.IsInf(target, 0) {
		return nil, fmt.Errorf("stationary: plan target %v must be positive and finite", target)
	}
	if len(pl.DirectionVarPerShot) == 0 {
		return nil, errors.New("stationary: Retarget needs a plan made by PlanShots")
	}
	q := *pl
	q.Target = target
	q.ShotsDirection = shotsFor(pl.DirectionVarPerShot, pl.Norm, pl.Z, target)
	q.setShots(max(q.ShotsDirection, q.ShotsScale, q.ShotsLinear))
	q.Notes = slices.Clone(pl.Notes)
	q.Warnings = slices.Clone(pl.Warnings)
	return &q, nil
}

// DirectionRMS is the predicted rms direction error over the terms.
func (pl *Plan) DirectionRMS() float64 { return rms(pl.DirectionStderr) }

// DirectionMax is the largest predicted direction standard error.
func (pl *Plan) DirectionMax() float64 { return floats.Max(pl.DirectionStderr) }

// StderrRMS is the rms of the predicted full error bars (0 without a
// thermal match, when Stderr is nil).
func (pl *Plan) StderrRMS() float64 { return rms(pl.Stderr) }

// StderrMax is the largest predicted full error bar (0 without a
// thermal match).
func (pl *Plan) StderrMax() float64 {
	if len(pl.Stderr) == 0 {
		return 0
	}
	return floats.Max(pl.Stderr)
}

func rms(v []float64) float64 {
	if len(v) == 0 {
		return 0
	}
	return floats.Norm(v, 2) / math.Sqrt(float64(len(v)))
}

// notes records what the plan rests on and where it could mislead.
func (pl *Plan) notes(opt PlanOptions, ref float64) {
	if opt.Source != "" {
		pl.Notes = append(pl.Notes, "constraint entries and their covariance predicted from "+opt.Source)
	}
	pl.Notes = append(pl.Notes,
		fmt.Sprintf("delta-method error bars of the stationarity solver (Fix) at %.0g shots per basis, scaled by 1/shots", ref),
		"direction error: coefficient error with the scale fixed to the model's norm")
	switch pl.ShotsPerBasis {
	case pl.ShotsLinear:
		pl.Notes = append(pl.Notes, fmt.Sprintf("shots set by the linear regime: every resolved direction of the constraints to %.2g of the unit direction (fewer shots give the weak-signal warning and too small error bars)", weakStdErr))
	case pl.ShotsScale:
		pl.Notes = append(pl.Notes, "shots set by the scale target")
	}
	if pl.MissingStrings > 0 {
		pl.Warnings = append(pl.Warnings, fmt.Sprintf("the scheme measures %d of the %d correlators the constraints need: constraints that use the others are left out (covering:3 measures all)", pl.Strings-pl.MissingStrings, pl.Strings))
	}
	for _, name := range pl.Invisible {
		pl.Warnings = append(pl.Warnings, "invisible direction "+name+": no number of shots fixes it; the thermal match at a known beta or a calibrated coefficient must (it is left out of the direction error)")
	}
	if opt.Evaluate == nil || !(opt.Beta > 0) {
		pl.Notes = append(pl.Notes, "no thermal match: the scale's error is not planned")
	}
}
