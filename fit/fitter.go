package fit

import (
	"errors"
	"fmt"
	"math"
	"sync"
	"time"

	"warmfit/cluster"
	"warmfit/lattice"
)

// Problem is one fitting task: a template of terms on a lattice and the
// measured expectation values of those terms in a Gibbs state.
type Problem struct {
	Lattice *lattice.Lattice
	// Terms is the template: which Pauli strings H may contain and which
	// share a coefficient (Group). Coefficients are not used unless
	// Options.Start says so.
	Terms []lattice.Term
	// Data holds one estimate per template term, aligned with Terms
	// (Values, Stderr and Cov; see EstimatesFromTable and
	// EstimateSnapshots). A zero Stderr marks an exact value. Terms in
	// Data.Missing are fitted through their group by moment matching on
	// its measured members (moments.go); a missing term whose parameter
	// has no measured member is an error.
	Data *Estimates
	// Beta is the inverse temperature; 0 when unknown, in which case the
	// fit determines the products beta*lambda (reported with beta = 1).
	Beta float64
}

// Options controls Fit. The zero value selects the automatic order and
// the defaults documented on each field.
type Options struct {
	// Order is the expansion order (largest cluster size). 0 selects it
	// automatically: orders rise from StartOrder until the change of the
	// fitted coefficients between consecutive orders is at most
	// TruncationFraction times the median statistical error, or the next
	// order would take the fit past MaxFitWork or the Policy's limits
	// (machine-independent), or, as a guard, past Budget (machine-
	// dependent, and the Result says so: Result.StoppedByBudget).
	Order int
	// StartOrder is the first order tried by the automatic selection;
	// default: the largest term support.
	StartOrder int
	// MaxOrder bounds the automatic selection; default: the smaller of
	// the number of sites and cluster.MaxDenseQubits.
	MaxOrder int
	// Budget is the wall time the automatic selection may spend; default
	// 60 s. It only guards: the order is chosen by MaxFitWork, so that it
	// does not depend on the machine, and the Budget stops the rise only
	// when this machine is slower than the reference one. The time of the
	// next order is predicted from the measured time of the last one, and
	// an order past the first is abandoned when the budget runs out; the
	// Result then says that its order depends on the machine.
	Budget time.Duration
	// MaxFitWork is the automatic selection's machine-independent limit:
	// the work units (see order_work.go) of all its evaluations together,
	// including the predicted ones of the next order; default
	// DefaultFitWork, about the default Budget on the reference machine.
	// MaxOrder, when set, replaces it.
	MaxFitWork float64
	// Clock reads the time for Budget and the timings in the log; nil
	// means time.Now. The order chosen cannot depend on it unless the
	// Budget stops the rise.
	Clock func() time.Time
	// Tol stops Newton when every gradient component is below Tol times
	// its data noise: max_q |A^T(e - <E>)|_q / sd((A^T e)_q) <= Tol.
	// Default 1e-3.
	Tol float64
	// AbsTol replaces Tol for parameters whose data are exact (zero
	// stderr): the mean residual |A^T(e - <E>)|_q / |q| must be at most
	// AbsTol. Default 1e-10.
	AbsTol float64
	// MaxIter bounds the Newton iterations per order; default 50.
	MaxIter int
	// MaxStep bounds beta*|Delta lambda| per Newton step; default 1.
	MaxStep float64
	// TruncationFraction: the truncation error must not exceed this
	// fraction of the median statistical error; default 0.1.
	TruncationFraction float64
	// TruncationTarget, when positive, replaces the statistical target by
	// an absolute one (in units of the coefficients). With exact data the
	// default is 1e-6.
	TruncationTarget float64
	// SkipTruncation skips the lower-order refits of a fixed-order fit
	// (the truncation error is then unknown).
	SkipTruncation bool
	// FDR is the false-discovery rate of the significance flags
	// (Benjamini–Hochberg); default 0.05.
	FDR float64
	// Start, when not nil, gives per-term starting coefficients (averaged
	// over groups); by default the fit starts from the first-order
	// inversion lambda_k = -e_k/beta.
	Start []float64
	// Workers bounds the parallelism of each expansion evaluation and of
	// the error-bar solves; <= 0 means GOMAXPROCS. Results do not depend
	// on it.
	Workers int
	// MaxWork is passed to the expansion (cluster.Options.MaxWork).
	MaxWork float64
	// Policy bounds the automatic order (its Ceiling and MaxWork); the
	// zero value means cluster.NewOrderPolicy for the problem. MaxOrder,
	// when set, replaces its ceiling and work limit.
	Policy cluster.OrderPolicy
	// DenseLimit is the largest number of parameters whose error bars come
	// from a dense Cholesky factorisation; above it they come from one
	// conjugate-gradient solve per parameter on a neighbourhood of it
	// (blocks of right-hand sides in parallel). Default 1500; the local
	// solves already win at 3080 parameters (20x20 lattice: 2.6 s against
	// 4.0 s for dense).
	DenseLimit int
	// Curvature chooses the response Newton steps and error bars use;
	// the zero value is CurvatureAuto.
	Curvature Curvature
	// Log, when set, receives one line per step of progress (orders,
	// Newton iterations, timings).
	Log func(format string, args ...any)
	// Progress, when set, is passed to every expansion evaluation.
	Progress func(done, total int)
}

func (o Options) withDefaults() Options {
	if o.Budget <= 0 {
		o.Budget = 60 * time.Second
	}
	if o.MaxFitWork <= 0 {
		o.MaxFitWork = DefaultFitWork
	}
	if o.Tol <= 0 {
		o.Tol = 1e-3
	}
	if o.AbsTol <= 0 {
		o.AbsTol = 1e-10
	}
	if o.MaxIter <= 0 {
		o.MaxIter = 50
	}
	if o.MaxStep <= 0 {
		o.MaxStep = 1
	}
	if o.TruncationFraction <= 0 {
		o.TruncationFraction = 0.1
	}
	if o.FDR <= 0 {
		o.FDR = 0.05
	}
	if o.DenseLimit <= 0 {
		o.DenseLimit = 1500
	}
	return o
}

func (o Options) logf(format string, args ...any) {
	if o.Log != nil {
		o.Log(format, args...)
	}
}

// fitter holds what every order's fit shares.
type fitter struct {
	prob    *Problem
	opt     Options
	exp     *cluster.Expansion
	params  *Params
	beta    float64
	values  []float64
	cov     termMatrix // Cov(e)
	varDiag []float64  // its diagonal, stderr^2
	sigma   []float64  // per parameter: sd of (A^T e)_q
	exact   bool       // every stderr is zero
	minL    int        // smallest order holding every term
	sites   int
	// evaluations and iterations count the expansion evaluations and
	// Newton iterations of every order fitted.
	evaluations, iterations int
	// measured[k] is false for a term without data (Data.Missing); nil
	// when every term has data. With unmeasured terms the fit matches
	// moments on the measured members (moments.go).
	measured []bool
	// spentWork is the work of every evaluation so far (order_work.go),
	// guarded by workMu with workCache, the predictions per order.
	spentWork float64
	workCache map[workKey]float64
	workMu    sync.Mutex
}

// Fit learns the template's coefficients from the data. It returns an
// error for invalid input (data not aligned with the template, values no
// Gibbs state can have, an impossible order); a fit that does not
// converge is not an error: the Result has Converged false, the reason,
// and the best iterate reached.
func Fit(p *Problem, opt Options) (*Result, error) {
	start := time.Now()
	f, err := newFitter(p, opt.withDefaults())
	if err != nil {
		return nil, err
	}
	theta0 := f.startingPoint()
	var res *Result
	if f.opt.Order > 0 {
		res, err = f.fixedOrder(f.opt.Order, theta0)
	} else {
		res, err = f.autoOrder(theta0, f.opt.now())
	}
	if err != nil {
		return nil, err
	}
	res.Elapsed = time.Since(start)
	return res, nil
}

func newFitter(p *Problem, opt Options) (*fitter, error) {
	if p == nil || p.Lattice == nil {
		return nil, errors.New("fit: problem without a lattice")
	}
	K := len(p.Terms)
	if K == 0 {
		return nil, errors.New("the template has no terms")
	}
	if p.Data == nil || len(p.Data.Values) != K || len(p.Data.Stderr) != K {
		return nil, fmt.Errorf("data do not match the template's %d terms", K)
	}
	if math.IsNaN(p.Beta) || math.IsInf(p.Beta, 0) || p.Beta < 0 {
		return nil, fmt.Errorf("beta = %v: must be a finite positive number, or 0 when unknown", p.Beta)
	}
	if opt.Start != nil && len(opt.Start) != K {
		return nil, fmt.Errorf("%d starting coefficients for %d terms", len(opt.Start), K)
	}
	exp, err := cluster.NewExpansion(p.Lattice, p.Terms)
	if err != nil {
		return nil, fmt.Errorf("template: %v", err)
	}
	f := &fitter{prob: p, opt: opt, exp: exp, params: NewParams(p.Terms), beta: p.Beta, values: p.Data.Values, sites: p.Lattice.NumSites()}
	if len(p.Data.Missing) > 0 {
		if err := f.markUnmeasured(p.Data.Missing); err != nil {
			return nil, err
		}
	}
	if f.beta == 0 {
		f.beta = 1
	}
	for _, t := range p.Terms {
		f.minL = max(f.minL, len(t.Sites))
	}
	f.exact = true
	for k, e := range f.values {
		if !f.isMeasured(k) {
			continue
		}
		s := p.Data.Stderr[k]
		if math.IsNaN(e) || math.IsInf(e, 0) || math.IsNaN(s) || math.IsInf(s, 0) || s < 0 {
			return nil, fmt.Errorf("term %s: value %v with stderr %v: not usable", p.Terms[k].Key(), e, s)
		}
		if s > 0 {
			f.exact = false
		}
	}
	f.varDiag = make([]float64, K)
	for k, s := range p.Data.Stderr {
		if f.isMeasured(k) {
			f.varDiag[k] = s * s
		}
	}
	f.cov = diagMatrix(f.varDiag)
	if p.Data.Cov != nil {
		if p.Data.Cov.Dim() != K {
			return nil, fmt.Errorf("data covariance of dimension %d for %d terms", p.Data.Cov.Dim(), K)
		}
		f.cov = p.Data.Cov
	}
	b := f.params.project(f.cov, 1)
	f.sigma = make([]float64, f.params.NumParams())
	for q, d := range b.Diag() {
		f.sigma[q] = math.Sqrt(math.Max(d, 0))
	}
	// A Pauli expectation in a full-rank state lies strictly inside
	// (-1, 1): a parameter whose data reach the edge cannot be matched.
	mean := make([]float64, f.params.NumParams())
	f.average(mean, f.values)
	for q, m := range mean {
		if math.Abs(m) >= 1 {
			return nil, fmt.Errorf("%s: measured value %v is not inside (-1, 1); no Gibbs state at finite temperature has it, so the fit cannot converge (drop the term or fix the data)",
				describeParam(f.params, p.Terms, q), m)
		}
	}
	return f, nil
}

// describeParam names parameter q for messages.
func describeParam(p *Params, terms []lattice.Term, q int) string {
	m := p.Members[q]
	if len(m) == 1 {
		return "term " + terms[m[0]].Key()
	}
	return fmt.Sprintf("group %q (%d terms)", p.Names[q], len(m))
}

// startingPoint returns theta from Options.Start or from the first-order
// inversion <E_k> = -beta lambda_k + O(beta^2), valid for traceless Paulis
// with tr(E_a E_b) = 2^n delta_ab (references.md, "first-order
// inversion"), averaged over each group. Two refinements keep the start
// sensible when fields are strong: a one-site term uses the isolated-spin
// inversion lambda = -atanh(e)/beta (<P> = -tanh(beta lambda) for a lone
// spin), and a multi-site term subtracts the product of its letters'
// one-site expectations, where the data have them, so that the
// uncorrelated part <P_i><Q_j> ~ beta^2 h_i h_j is not taken for a
// coupling.
func (f *fitter) startingPoint() []float64 {
	lambda := make([]float64, len(f.values))
	if f.opt.Start != nil {
		copy(lambda, f.opt.Start)
	} else {
		terms := f.prob.Terms
		single := make(map[string]float64)
		for k, t := range terms {
			if len(t.Sites) == 1 && f.isMeasured(k) {
				single[t.Key()] = f.values[k]
			}
		}
		for k, e := range f.values {
			if !f.isMeasured(k) {
				continue
			}
			t := terms[k]
			if len(t.Sites) == 1 {
				const edge = 1 - 1e-6
				lambda[k] = -math.Atanh(math.Max(-edge, math.Min(edge, e))) / f.beta
				continue
			}
			prod, all := 1.0, true
			for i, site := range t.Sites {
				m, ok := single[lattice.TermKey(t.Pauli[i:i+1], []int{site})]
				all = all && ok
				prod *= m
			}
			if all {
				e -= prod
			}
			lambda[k] = -e / f.beta
		}
	}
	theta := make([]float64, f.params.NumParams())
	if f.opt.Start != nil {
		f.params.Average(theta, lambda)
	} else {
		f.average(theta, lambda)
	}
	return theta
}

// evaluator returns the expansion at order L as an evaluator whose
// response, when asked for, is of order respOrder.
func (f *fitter) evaluator(L, respOrder int) evaluator {
	return func(lambda []float64, response bool) (*thermalEval, error) {
		res, err := f.exp.Evaluate(lambda, f.beta, cluster.Options{
			Order: L, Response: response, ResponseOrder: respOrder, Workers: f.opt.Workers, MaxWork: f.opt.MaxWork, Progress: f.opt.Progress,
		})
		if err != nil {
			return nil, err
		}
		f.addWork(f.evaluationWork(L, response, respOrder))
		ev := &thermalEval{logZ: res.LogZ[L-1], expect: res.Expect[L-1], raw: res}
		if response {
			if res.Response == nil {
				return nil, errors.New("expansion returned no response")
			}
			ev.response = res.Response
		}
		return ev, nil
	}
}

// orderFit is the outcome of the minimisation at one order.
type orderFit struct {
	order   int
	out     *newtonOutcome
	elapsed time.Duration // wall time on this machine (Options.Clock)
	work    float64       // work units of its evaluations, machine-independent
}

// newtonProblem sets up the minimisation at order L with the curvature
// Options.Curvature chooses.
func (f *fitter) newtonProblem(L int, deadline time.Time) *newtonProblem {
	c := f.curvatureOrder(L)
	np := &newtonProblem{
		params: f.params, beta: f.beta, values: f.values, sigma: f.sigma,
		tol: f.opt.Tol, absTol: f.opt.AbsTol, maxIter: f.opt.MaxIter, maxStep: f.opt.MaxStep,
		eval: f.evaluator(L, c), deadline: deadline, now: f.opt.now, measured: f.measured,
		order: L, curvatureOrder: c,
	}
	if c < L {
		np.exactEval = f.evaluator(L, L)
		np.reuse = f.measured == nil
	}
	return np
}

func (f *fitter) fitOrder(L int, theta0 []float64) (*orderFit, error) {
	return f.fitOrderUntil(L, theta0, time.Time{}, false)
}

// fitOrderUntil is fitOrder that gives up once deadline (if not zero) has
// passed. fromOtherOrder marks theta0 as another order's solution: at
// least one Newton step is then taken, so that the change between orders
// (the truncation error) is measured rather than read as zero when the
// start already meets the tolerance.
func (f *fitter) fitOrderUntil(L int, theta0 []float64, deadline time.Time, fromOtherOrder bool) (*orderFit, error) {
	if L < f.minL {
		return nil, fmt.Errorf("order %d cannot hold terms on %d sites: the order must be at least %d", L, f.minL, f.minL)
	}
	if L > cluster.MaxDenseQubits {
		return nil, fmt.Errorf("order %d: clusters above %d sites are beyond dense diagonalisation", L, cluster.MaxDenseQubits)
	}
	t0, w0 := f.opt.now(), f.workSpent()
	np := f.newtonProblem(L, deadline)
	if fromOtherOrder && f.measured == nil {
		// (Moment matching stops as soon as the residual is small.)
		np.minIter = 1
	}
	if f.opt.Log != nil {
		np.logf = func(format string, args ...any) { f.opt.logf("order %d, "+format, append([]any{L}, args...)...) }
	}
	minimize := np.minimize
	if f.measured != nil {
		minimize = np.matchMoments
	}
	out, err := minimize(theta0)
	if err != nil {
		return nil, fmt.Errorf("order %d: %v", L, err)
	}
	f.evaluations += out.evaluations
	f.iterations += out.iterations
	of := &orderFit{order: L, out: out, elapsed: f.opt.now().Sub(t0), work: f.workSpent() - w0}
	status := "converged"
	if !out.converged {
		status = "NOT converged: " + out.reason
	}
	f.opt.logf("order %d: %s after %d iterations (%d evaluations, %.2fs)", L, status, out.iterations, out.evaluations, of.elapsed.Seconds())
	return of, nil
}

// exactOrder reports whether order L covers the whole lattice, so that
// the expansion equals the exact log Z.
func (f *fitter) exactOrder(L int) bool { return L >= f.sites }

// fixedOrder fits at order L. Unless SkipTruncation, the orders L-4 to
// L-1 (those that hold every term) are fitted first, each from the
// solution below it: they measure the truncation error (two orders per
// parity, see Truncation; the lowest are cheap next to order L), and
// each hands the next a start whose gradient is small enough for the
// lower-order curvature to finish in a few steps (with SkipTruncation,
// only L-1 and only for that).
// Only an unbroken run of converged orders ending at L enters the
// truncation estimate.
func (f *fitter) fixedOrder(L int, theta0 []float64) (*Result, error) {
	var lower []*orderFit
	theta := theta0
	first := max(f.minL, L-truncationOrdersBelow)
	if f.opt.SkipTruncation {
		// No truncation estimate, but a start for the lower-order
		// curvature: the order-(L-1) solution, at a tenth of the cost.
		first = L
		if f.curvatureOrder(L) < L {
			first = L - 1
		}
	}
	if !f.exactOrder(L) {
		for low := first; low < L; low++ {
			lf, err := f.fitOrderUntil(low, theta, time.Time{}, len(lower) > 0)
			if err != nil {
				return nil, err
			}
			if !lf.out.converged {
				lower = lower[:0]
				continue
			}
			lower = append(lower, lf)
			theta = lf.out.state.theta
		}
	}
	main, err := f.fitOrderUntil(L, theta, time.Time{}, len(lower) > 0)
	if err != nil {
		return nil, err
	}
	history := []*orderFit{main}
	if main.out.converged && !f.opt.SkipTruncation {
		history = append(lower, main)
	}
	return f.finish(main, history, nil)
}

// autoOrder raises the order until the truncation error is small against
// the statistical error, or the next order would take the fit past the
// work limit (MaxFitWork, the policy's ceiling and per-evaluation work):
// decisions in machine-independent quantities. The wall-clock Budget only
// guards, and a stop by it is marked machine-dependent in the result.
func (f *fitter) autoOrder(theta0 []float64, start time.Time) (*Result, error) {
	policy := f.opt.Policy
	if policy.Ceiling == 0 {
		policy = cluster.NewOrderPolicy(f.prob.Lattice, f.prob.Terms)
	}
	first := max(f.minL, f.opt.StartOrder)
	// Without MaxOrder the policy stops the rise (its ceiling, which a
	// small lattice may pass up to its number of sites, and its work
	// limit), and the note says which.
	last := f.sites
	if f.opt.MaxOrder > 0 {
		last = min(f.sites, cluster.MaxDenseQubits, f.opt.MaxOrder)
	}
	if first > last {
		first = last
	}
	var history []*orderFit
	var notes []string
	var failed *orderFit // the last order that did not converge
	var budgetStop string
	abandoned := 0 // the order the budget cut short, if any
	statErr := -1.0
	theta := theta0
	for L := first; L <= last; L++ {
		// The first order always gets to finish: without it there is no
		// answer at all.
		var deadline time.Time
		if len(history) > 0 {
			deadline = start.Add(f.opt.Budget)
		}
		of, err := f.fitOrderUntil(L, theta, deadline, len(history) > 0)
		if err != nil {
			if len(history) == 0 && failed == nil {
				return nil, err
			}
			notes = append(notes, fmt.Sprintf("order %d could not be evaluated: %v", L, err))
			break
		}
		if !of.out.converged && !deadline.IsZero() && f.opt.now().After(deadline) {
			// Abandoned by the guard: this order is within the work
			// limit (it was started), so the stop depends on the machine.
			abandoned = L
			break
		}
		if of.out.converged {
			history = append(history, of)
			theta = of.out.state.theta
			if f.exactOrder(L) {
				break
			}
			if statErr < 0 {
				statErr = f.statisticalScale(of)
			}
			tr := f.truncation(history, statErr)
			units := ""
			if f.prob.Beta <= 0 {
				units = " (units of beta*lambda)"
			}
			f.opt.logf("order %d: truncation error %s against target %.3g%s (this order: %s, took %s)", L, fmtMaybe(tr.Error, tr.Known), tr.Target, units,
				describeWork(of.work), roundDuration(of.elapsed))
			if tr.Known && tr.OK {
				// The coefficients have settled; the order still rises
				// while some fitted expectation's series has not (the
				// result would warn about it), work limit permitting.
				_, seriesStderr := f.termStderr()
				_, _, untrusted := f.seriesConvergence(of, seriesStderr)
				if len(untrusted) == 0 {
					break
				}
				f.opt.logf("order %d: %d expectation series not yet converged", L, len(untrusted))
			}
		} else {
			// A truncated expansion can fail to be convex at one order
			// and be fine at the next (on bipartite lattices even and odd
			// orders alternate), so go on.
			failed = of
			notes = append(notes, fmt.Sprintf("the fit at order %d did not converge: %s", L, of.out.reason))
		}
		if L == last {
			switch {
			case L < f.sites && L == f.opt.MaxOrder:
				notes = append(notes, fmt.Sprintf("stopped at order %d: the --max-order limit (order %d would cover all %d sites and be exact)", L, f.sites, f.sites))
			case L < f.sites:
				notes = append(notes, fmt.Sprintf("stopped at order %d: clusters of more than %d sites are not diagonalised", L, cluster.MaxDenseQubits))
			}
			break
		}
		// The decision: machine-independent work units. The next order
		// starts from this order's solution and so needs about as many
		// evaluations as this one did.
		needWork := f.nextOrderWork(of)
		if f.opt.MaxOrder == 0 {
			if ok, why := policy.Allows(f.exp, L+1); !ok {
				notes = append(notes, fmt.Sprintf("stopped at order %d: %s", L, why))
				break
			}
			if spent := f.workSpent(); spent+needWork > f.opt.MaxFitWork {
				notes = append(notes, fmt.Sprintf("stopped at order %d by the work limit: order %d would cost about %s, and with the %.3g units spent that is over the fit's automatic limit %.3g (set --order %d or --max-order %d to go further)",
					L, L+1, describeWork(needWork), spent, f.opt.MaxFitWork, L+1, L+1))
				break
			}
		}
		// The guard: wall time on this machine, from the measured time
		// of this order.
		needTime := f.nextOrderTime(of)
		f.opt.logf("order %d: predicted to cost %s; here about %s (from order %d's %s)", L+1, describeWork(needWork), roundDuration(needTime), L, roundDuration(of.elapsed))
		if rest := f.opt.Budget - f.opt.now().Sub(start); needTime > rest {
			budgetStop = fmt.Sprintf("stopped at order %d by the %s budget (machine-dependent): order %d would take about %s here, more than the %s left, but it is within %s; raise --budget for a reproducible result",
				L, describeBudget(f.opt.Budget), L+1, roundDuration(needTime), roundDuration(max(rest, 0)), f.limitName())
			break
		}
	}
	var res *Result
	var err error
	if len(history) == 0 {
		res, err = f.finish(failed, []*orderFit{failed}, notes)
	} else {
		main := history[len(history)-1]
		if failed != nil && failed.order > main.order {
			notes = append(notes, fmt.Sprintf("the result is from order %d, the highest that converged", main.order))
		}
		res, err = f.finish(main, history, notes)
	}
	if err == nil && abandoned > 0 {
		budgetStop = fmt.Sprintf("stopped at order %d by the %s budget (machine-dependent): order %d, within %s, was abandoned when the time ran out; raise --budget for a reproducible result",
			res.Order, describeBudget(f.opt.Budget), abandoned, f.limitName())
	}
	if err == nil && budgetStop != "" {
		res.StoppedByBudget = true
		res.Warnings = append(res.Warnings, budgetStop)
		f.opt.logf("%s", budgetStop)
	}
	return res, err
}

func fmtMaybe(v float64, known bool) string {
	if !known {
		return "unknown"
	}
	return fmt.Sprintf("%.3g", v)
}
