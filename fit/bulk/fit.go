package bulk

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// FitOptions adjusts FitCandidate.
type FitOptions struct {
	// MaxCutRounds bounds the refits made after the trusted range moved
	// with the parameters (default 8).
	MaxCutRounds int
	// Cut, when not nil, fixes the points to fit instead of the trusted
	// range: Cut[s][k] says whether point k of series s is used. Compare
	// uses it to fit every candidate on a common range.
	Cut [][]bool
	// Progress, when not nil, is told after each round of a candidate's
	// fit how many points it used and the lowest temperature (K) at which
	// the model then trusts any curve. Compare fits candidates in parallel, so it may be
	// called from several goroutines at once.
	Progress func(candidate string, round, used int, trustedFromK float64)
}

// ParamEstimate is one fitted (or fixed) parameter.
type ParamEstimate struct {
	Name, Unit string
	Value      float64
	Stderr     float64 // 0 for fixed parameters; NaN when not determined
	Fixed      bool
	AtBound    bool // the fit ended on a bound (the error bar is one-sided)
}

// SeriesFit summarises one input series in a fit.
type SeriesFit struct {
	Series *Series
	// TrustedFrom is the lowest temperature the forward model trusts this
	// curve at the fitted parameters (+Inf when it trusts none of the
	// data); for M(H) series it is the lowest temperature of a trusted
	// point (trust is judged point by point).
	TrustedFrom float64
	Used        int       // points inside the trusted range, fitted
	Model       []float64 // model at every point, in the series' unit
	Trusted     []bool    // the forward model trusts the point
	UsedPoint   []bool    // the point was fitted
	Chi2        float64   // contribution of the fitted points
	// Sigma is the common standard error estimated from the residual
	// scatter when the series' errors are unknown (NaN otherwise).
	Sigma float64
}

// CutRound records the trusted range at the start of one fitting round.
type CutRound struct {
	TrustedFrom []float64 // per series, as SeriesFit.TrustedFrom
	Used        int
}

// FitResult is the outcome of FitCandidate.
type FitResult struct {
	Candidate *Candidate
	Params    []ParamEstimate
	// Free lists the fitted parameters, the order of Covariance and
	// Correlation.
	Free        []string
	Covariance  *mat.SymDense
	Correlation *mat.SymDense
	Chi2        float64
	Points, DOF int
	// PValue is the probability of a chi^2 at least this large if the
	// model is right (NaN when errors were estimated from the scatter:
	// the goodness of fit is then not testable).
	PValue float64
	// AIC = chi^2 + 2k (Akaike 1974, Gaussian errors, up to a constant
	// common to all candidates on the same points); with errors estimated
	// from the scatter, sum n_s ln(RSS_s/n_s) replaces chi^2 for those
	// series and their sigmas count as parameters. BIC uses k ln n instead.
	AIC, BIC        float64
	ErrorsEstimated bool
	Converged       bool
	Iterations      int
	Reason          string
	Series          []SeriesFit
	Rounds          []CutRound
	Warnings        []string
}

// TrustError is the refusal to fit data that lie entirely outside the
// range the forward model trusts.
type TrustError struct {
	Candidate    string
	LowestUsable float64 // K; +Inf when nothing is trusted up to Probed
	Probed       float64 // highest temperature probed, K
	DataTop      float64 // highest data temperature, K
}

func (e *TrustError) Error() string {
	if math.IsInf(e.LowestUsable, 1) {
		return fmt.Sprintf("candidate %s: the model trusts no temperature up to %.4g K at the start parameters; no data can be fitted", e.Candidate, e.Probed)
	}
	return fmt.Sprintf("candidate %s: every data point lies below the range the model trusts at the start parameters: the lowest usable temperature is %.4g K (data reach %.4g K); measure higher, or start from other couplings",
		e.Candidate, e.LowestUsable, e.DataTop)
}

// FitCandidate fits the free parameters of c to the series by weighted
// least squares over the points the forward model trusts. The trusted
// range depends on the parameters, so the cut is remade after each fit
// from the fitted parameters and the fit repeated until the set of points
// no longer changes (at most MaxCutRounds times); every move is recorded
// and a move that drops data is a warning. Series with unknown errors get a
// common error estimated from their residual scatter.
func FitCandidate(c *Candidate, data []*Series, opt FitOptions) (*FitResult, error) {
	if opt.MaxCutRounds == 0 {
		opt.MaxCutRounds = 8
	}
	f := newFitState(c, data)
	if len(f.free) == 0 {
		return nil, fmt.Errorf("candidate %s: no free parameter", c.Name)
	}
	pr, err := c.predict(data, f.p)
	if err != nil {
		return nil, err
	}
	used := f.cutFrom(pr, opt.Cut)
	if countTrue(used) == 0 {
		return nil, f.trustError()
	}
	var seen []string
	for round := 0; ; round++ {
		f.res.Rounds = append(f.res.Rounds, CutRound{TrustedFrom: f.trustedFrom(pr), Used: countTrue(used)})
		if err := f.fitOn(used); err != nil {
			return nil, err
		}
		if pr, err = c.predict(data, f.p); err != nil {
			return nil, err
		}
		if opt.Progress != nil {
			opt.Progress(c.Name, round+1, countTrue(used), slices.Min(f.trustedFrom(pr)))
		}
		next := f.cutFrom(pr, opt.Cut)
		if equalCut(next, used) || (round > 0 && subsetCut(used, next) && slices.Contains(seen, cutKey(next))) {
			break
		}
		if slices.Contains(seen, cutKey(next)) {
			// The cut alternates between point sets at the edge of the
			// range; fit the points trusted in both, which the final
			// check above accepts when they stay trusted.
			next = intersectCut(used, next)
		}
		seen = append(seen, cutKey(used))
		if round+1 >= opt.MaxCutRounds {
			f.warnf("the trusted range did not settle after %d rounds (it moves between point sets as the parameters move); the result is from the last round and its cut is not self-consistent", round+1)
			break
		}
		if countTrue(next) == 0 {
			return nil, f.trustError()
		}
		used = next
	}
	if err := f.finish(pr, used); err != nil {
		return nil, err
	}
	return f.res, nil
}

// fitState carries one candidate's fit.
type fitState struct {
	c    *Candidate
	data []*Series
	p    []float64 // all parameters
	free []int     // indices of the free parameters
	// active are the free parameters that move the model on the points
	// of the current round; the others are held (see fitOn).
	active []int
	sigma  []float64 // per series: common error when unknown, else NaN
	res    *FitResult
	lsq    lsqResult
	nUsed  int
	usedOf [][]bool
}

func newFitState(c *Candidate, data []*Series) *fitState {
	f := &fitState{c: c, data: data, res: &FitResult{Candidate: c}}
	for i, par := range c.Params {
		f.p = append(f.p, par.Value)
		if !par.Fixed {
			f.free = append(f.free, i)
		}
	}
	f.sigma = make([]float64, len(data))
	for s, ser := range data {
		f.sigma[s] = math.NaN()
		if ser.StderrUnknown {
			f.res.ErrorsEstimated = true
			f.sigma[s] = initialSigma(ser)
		}
	}
	return f
}

// initialSigma is the starting common error of a series with unknown
// errors: 1% of its typical magnitude (only the first weighting between
// series depends on it).
func initialSigma(s *Series) float64 {
	v := make([]float64, len(s.Points))
	for i, p := range s.Points {
		v[i] = math.Abs(p.Value)
	}
	slices.Sort(v)
	if m := v[len(v)/2]; m > 0 {
		return 0.01 * m
	}
	return 1
}

func (f *fitState) warnf(format string, args ...any) {
	f.res.Warnings = append(f.res.Warnings, fmt.Sprintf(format, args...))
}

// cutFrom returns the points to fit: the trusted ones, or the fixed cut.
func (f *fitState) cutFrom(pr *prediction, fixed [][]bool) [][]bool {
	if fixed != nil {
		out := make([][]bool, len(fixed))
		for s := range fixed {
			out[s] = slices.Clone(fixed[s])
		}
		return out
	}
	out := make([][]bool, len(pr.trusted))
	for s := range pr.trusted {
		out[s] = slices.Clone(pr.trusted[s])
	}
	return out
}

// trustedFrom returns SeriesFit.TrustedFrom of every series.
func (f *fitState) trustedFrom(pr *prediction) []float64 {
	out := make([]float64, len(f.data))
	for s, ser := range f.data {
		out[s] = pr.trustedFrom[s]
		if ser.Quantity == Magnetization {
			out[s] = math.Inf(1)
			for k, pt := range ser.Points {
				if pr.trusted[s][k] {
					out[s] = min(out[s], pt.T)
				}
			}
		}
	}
	return out
}

func (f *fitState) stderr(s, k int) float64 {
	if !math.IsNaN(f.sigma[s]) {
		return f.sigma[s]
	}
	return f.data[s].Points[k].Stderr
}

// fitOn runs Levenberg–Marquardt on the used points; with unknown
// errors it re-estimates their sigma from the residuals and refits until
// the sigmas settle (to 1e-3, at most 5 passes).
func (f *fitState) fitOn(used [][]bool) error {
	f.usedOf = used
	f.nUsed = countTrue(used)
	if err := f.chooseActive(); err != nil {
		return err
	}
	if f.nUsed <= len(f.active) {
		return fmt.Errorf("candidate %s: %d trusted points for %d free parameters", f.c.Name, f.nUsed, len(f.active))
	}
	for pass := 0; pass < 5; pass++ {
		if err := f.runLM(); err != nil {
			return err
		}
		if !f.res.ErrorsEstimated || !f.updateSigmas() {
			return nil
		}
	}
	return nil
}

// chooseActive holds free parameters that no fitted point depends on
// (the phonon term when no C point is trusted, say): they cannot be
// determined, and would make the normal matrix singular.
func (f *fitState) chooseActive() error {
	pr, err := f.c.predict(f.data, f.p)
	if err != nil {
		return err
	}
	f.active = f.active[:0]
	for _, i := range f.free {
		moves := false
		for s := range f.data {
			for k := range f.data[s].Points {
				moves = moves || (f.usedOf[s][k] && pr.jac[s][k][i] != 0)
			}
		}
		if moves {
			f.active = append(f.active, i)
		}
	}
	if len(f.active) == 0 {
		return fmt.Errorf("candidate %s: no free parameter changes the model at the fitted points", f.c.Name)
	}
	return nil
}

func (f *fitState) runLM() error {
	prob := lsqProblem{nRes: f.nUsed, nPar: len(f.active)}
	x0 := make([]float64, len(f.active))
	for j, i := range f.active {
		x0[j] = f.p[i]
		info, _ := LookupParam(f.c.Params[i].Name)
		prob.lower = append(prob.lower, info.Lower)
		prob.upper = append(prob.upper, info.Upper)
	}
	full := slices.Clone(f.p)
	prob.eval = func(x, r []float64, jac *mat.Dense) error {
		for j, i := range f.active {
			full[i] = x[j]
		}
		pr, err := f.c.predict(f.data, full)
		if err != nil {
			return err
		}
		row := 0
		for s, ser := range f.data {
			for k, pt := range ser.Points {
				if !f.usedOf[s][k] {
					continue
				}
				sd := f.stderr(s, k)
				r[row] = (pr.value[s][k] - pt.Value) / sd
				if jac != nil {
					for j, i := range f.active {
						jac.Set(row, j, pr.jac[s][k][i]/sd)
					}
				}
				row++
			}
		}
		return nil
	}
	res, err := levenbergMarquardt(prob, x0)
	if err != nil {
		return fmt.Errorf("candidate %s: %w", f.c.Name, err)
	}
	for j, i := range f.active {
		f.p[i] = res.x[j]
	}
	f.lsq = res
	return nil
}

// updateSigmas sets the sigma of every series with unknown errors to
// sqrt(RSS_s / (n_s - k n_s/n)), its share of the degrees of freedom, and
// reports whether any changed by more than 1e-3 relative.
func (f *fitState) updateSigmas() bool {
	pr, err := f.c.predict(f.data, f.p)
	if err != nil {
		return false
	}
	changed := false
	k, n := float64(len(f.active)), float64(f.nUsed)
	for s, ser := range f.data {
		if !ser.StderrUnknown {
			continue
		}
		var rss, ns float64
		for i, pt := range ser.Points {
			if f.usedOf[s][i] {
				d := pr.value[s][i] - pt.Value
				rss += d * d
				ns++
			}
		}
		if ns == 0 {
			continue
		}
		sig := math.Sqrt(rss / (ns - k*ns/n))
		if !(sig > 0) {
			continue
		}
		if math.Abs(sig-f.sigma[s]) > 1e-3*f.sigma[s] {
			changed = true
		}
		f.sigma[s] = sig
	}
	return changed
}

// finish fills the result from the last fit.
func (f *fitState) finish(pr *prediction, used [][]bool) error {
	r := f.res
	r.Converged, r.Iterations, r.Reason = f.lsq.converged, f.lsq.iterations, f.lsq.reason
	if !r.Converged {
		f.warnf("the fit did not converge (%s): the parameters and error bars are not a minimum of chi^2", r.Reason)
	}
	cov, err := covarianceOf(f.lsq.jac)
	if err != nil {
		f.warnf("the parameters %s are not all determined by these data (%v): their error bars are unknown", strings.Join(r.Free, ", "), err)
	}
	r.Covariance = cov
	r.Correlation = correlationOf(cov, len(f.active))
	r.Free = nil
	for _, i := range f.active {
		r.Free = append(r.Free, f.c.Params[i].Name)
	}
	for i, par := range f.c.Params {
		info, _ := LookupParam(par.Name)
		est := ParamEstimate{Name: par.Name, Unit: info.Unit, Value: f.p[i], Fixed: par.Fixed}
		if j := slices.Index(f.active, i); j >= 0 {
			est.Stderr = math.NaN()
			if cov != nil {
				est.Stderr = math.Sqrt(cov.At(j, j))
			}
			est.AtBound = f.lsq.atBound[j]
			if est.AtBound {
				f.warnf("%s ended on its bound %g: its error bar is one-sided; consider fixing it", par.Name, f.p[i])
			}
		} else if !par.Fixed {
			est.Stderr = math.NaN()
			f.warnf("%s does not change the model at any fitted point: held at its start value %g, undetermined", par.Name, f.p[i])
		}
		r.Params = append(r.Params, est)
	}
	f.fillSeries(pr, used)
	f.noteCutMoves()
	r.Points = f.nUsed
	r.DOF = f.nUsed - len(f.active)
	r.PValue = math.NaN()
	if !r.ErrorsEstimated {
		r.PValue = distuv.ChiSquared{K: float64(r.DOF)}.Survival(r.Chi2)
	}
	f.informationCriteria()
	return nil
}

// fillSeries records the per-series model, cut and chi^2.
func (f *fitState) fillSeries(pr *prediction, used [][]bool) {
	r := f.res
	tf := f.trustedFrom(pr)
	r.Chi2 = 0
	for s, ser := range f.data {
		sf := SeriesFit{Series: ser, TrustedFrom: tf[s], Model: pr.value[s], Trusted: pr.trusted[s], UsedPoint: used[s], Sigma: f.sigma[s]}
		for k, pt := range ser.Points {
			if used[s][k] {
				sf.Used++
				d := (pr.value[s][k] - pt.Value) / f.stderr(s, k)
				sf.Chi2 += d * d
			}
		}
		r.Chi2 += sf.Chi2
		r.Series = append(r.Series, sf)
	}
}

// noteCutMoves turns the history of the cut into warnings: data dropped
// because the fit moved the trusted range up, and data left below it.
func (f *fitState) noteCutMoves() {
	r := f.res
	first := r.Rounds[0]
	for s, sf := range r.Series {
		ser := sf.Series
		if sf.Used < len(ser.Points) {
			lo, hi := math.Inf(1), 0.0
			for k, pt := range ser.Points {
				if !sf.UsedPoint[k] {
					lo, hi = min(lo, pt.T), max(hi, pt.T)
				}
			}
			span := fmt.Sprintf("%.4g-%.4g K", lo, hi)
			if lo == hi {
				span = fmt.Sprintf("all at %.4g K", lo)
			}
			f.warnf("%s: %d of %d points (%s) were not fitted: the model trusts this curve from %.4g K at the fitted parameters and is not extrapolated below",
				ser.Label(), len(ser.Points)-sf.Used, len(ser.Points), span, sf.TrustedFrom)
		}
		if ser.Quantity != Magnetization && len(r.Rounds) > 1 && sf.TrustedFrom > first.TrustedFrom[s] {
			f.warnf("%s: the fit walked the trusted range up from %.4g K to %.4g K as the parameters moved, dropping data it had started with", ser.Label(), first.TrustedFrom[s], sf.TrustedFrom)
		}
		if sf.Used == 0 {
			f.warnf("%s: no point of this series is in the trusted range; it does not constrain the fit", ser.Label())
		}
	}
}

// informationCriteria fills AIC and BIC.
func (f *fitState) informationCriteria() {
	r := f.res
	k := float64(len(f.active))
	n := float64(r.Points)
	m2lnL := 0.0
	for _, sf := range r.Series {
		if !sf.Series.StderrUnknown {
			m2lnL += sf.Chi2
			continue
		}
		if sf.Used > 0 {
			rss := sf.Chi2 * sf.Sigma * sf.Sigma
			m2lnL += float64(sf.Used) * math.Log(rss/float64(sf.Used))
			k++
		}
	}
	r.AIC = m2lnL + 2*k
	r.BIC = m2lnL + k*math.Log(n)
}

// trustError builds the refusal when no data point is trusted at the
// current parameters: the lowest usable temperature is found on a probe
// grid reaching well above the data and the couplings.
func (f *fitState) trustError() error {
	top, lo := 0.0, math.Inf(1)
	for _, s := range f.data {
		a, b := s.TRange()
		lo, top = min(lo, a), max(top, b)
	}
	scale := 0.0
	for _, n := range []string{ParamJ, ParamJ2} {
		scale = max(scale, math.Abs(f.c.value(f.p, n, 0)))
	}
	hi := max(10*top, 100*scale)
	grid := make([]float64, 96)
	for i := range grid {
		grid[i] = lo * math.Pow(hi/lo, float64(i)/float64(len(grid)-1))
	}
	e := &TrustError{Candidate: f.c.Name, LowestUsable: math.Inf(1), Probed: hi, DataTop: top}
	cv, _, err := f.c.couplingTangents(f.p)
	if err != nil {
		return err
	}
	cur, err := f.c.Forward.Curves(Request{Couplings: cv, Temps: grid})
	if err != nil {
		return err
	}
	for _, s := range f.data {
		e.LowestUsable = min(e.LowestUsable, curveOf(cur, s.Quantity).TrustedFrom)
	}
	return e
}

// covarianceOf returns (J^T J)^-1 of the weighted Jacobian. The normal
// matrix is formed from the columns scaled to unit norm, so that its
// condition number measures how well the data determine the parameters,
// not how different their units are; the scaling is undone afterwards.
func covarianceOf(jac *mat.Dense) (*mat.SymDense, error) {
	n, k := jac.Dims()
	scale := make([]float64, k)
	scaled := mat.NewDense(n, k, nil)
	for j := range k {
		scale[j] = mat.Norm(jac.ColView(j), 2)
		if scale[j] == 0 {
			return nil, fmt.Errorf("a parameter does not change the model")
		}
		for i := range n {
			scaled.Set(i, j, jac.At(i, j)/scale[j])
		}
	}
	var ata mat.SymDense
	ata.SymOuterK(1, scaled.T())
	var chol mat.Cholesky
	if !chol.Factorize(&ata) {
		return nil, fmt.Errorf("the normal matrix is singular")
	}
	if cond := chol.Cond(); cond > 1e12 {
		return nil, fmt.Errorf("the scaled normal matrix has condition number %.2g", cond)
	}
	cov := mat.NewSymDense(k, nil)
	if err := chol.InverseTo(cov); err != nil {
		return nil, err
	}
	for i := range k {
		for j := i; j < k; j++ {
			cov.SetSym(i, j, cov.At(i, j)/(scale[i]*scale[j]))
		}
	}
	return cov, nil
}

func correlationOf(cov *mat.SymDense, k int) *mat.SymDense {
	if cov == nil {
		return nil
	}
	out := mat.NewSymDense(k, nil)
	for i := range k {
		for j := i; j < k; j++ {
			out.SetSym(i, j, cov.At(i, j)/math.Sqrt(cov.At(i, i)*cov.At(j, j)))
		}
	}
	return out
}

func countTrue(b [][]bool) int {
	n := 0
	for _, row := range b {
		for _, v := range row {
			if v {
				n++
			}
		}
	}
	return n
}

func equalCut(a, b [][]bool) bool {
	for s := range a {
		if !slices.Equal(a[s], b[s]) {
			return false
		}
	}
	return true
}

// subsetCut reports whether every point of a is also in b.
func subsetCut(a, b [][]bool) bool {
	for s := range a {
		for k := range a[s] {
			if a[s][k] && !b[s][k] {
				return false
			}
		}
	}
	return true
}

func intersectCut(a, b [][]bool) [][]bool {
	out := make([][]bool, len(a))
	for s := range a {
		out[s] = make([]bool, len(a[s]))
		for k := range a[s] {
			out[s][k] = a[s][k] && b[s][k]
		}
	}
	return out
}

func cutKey(b [][]bool) string {
	var sb strings.Builder
	for _, row := range b {
		for _, v := range row {
			if v {
				sb.WriteByte('1')
			} else {
				sb.WriteByte('0')
			}
		}
		sb.WriteByte('|')
	}
	return sb.String()
}
