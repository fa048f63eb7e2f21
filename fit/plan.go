package fit

import (
	"errors"
	"fmt"
	"math"
	"time"

	"gonum.org/v1/gonum/stat/distuv"

	"warmfit/cluster"
	"warmfit/lattice"
)

// Norm is the norm in which a shot plan's target error is measured.
type Norm string

// Norms of the target error accepted by PlanShots.
const (
	NormLinf Norm = "linf"
	NormL2   Norm = "l2"
)

// PlanOptions controls PlanShots.
type PlanOptions struct {
	// Target is the error eps the fitted coefficients should reach.
	Target float64
	// Norm is NormLinf (default): every coefficient within Target at
	// Confidence, simultaneously; or NormL2: the expected squared L2
	// error sum_k E(fit_k - lambda_k)^2 at most Target^2.
	Norm Norm
	// Confidence of the NormLinf guarantee; default 0.95.
	Confidence float64
	// Bases is the measurement scheme (one letter per qubit each); nil
	// means CoveringBases.
	Bases []string
	// Order is the expansion order used to predict the response; 0
	// chooses it as every command does (cluster.OrderPolicy: raised while
	// some expectation is untrusted at 1e-3, within the work limit).
	Order   int
	Workers int
	// Budget, when positive, is the wall time the automatic order choice
	// may spend (cluster.OrderPolicy.Budget).
	Budget time.Duration
	// Progress, when not nil, is called as the expansion's clusters are
	// done (cluster.Options.Progress).
	Progress func(done, total int)
	// DenseLimit as in Options; default 1500.
	DenseLimit int
}

// Plan is a shot budget for learning a model to a target precision.
type Plan struct {
	Bases []string
	// Coverage[k] is the number of bases that measure term k.
	Coverage      []int
	ShotsPerBasis int64
	TotalShots    int64
	// VarPerShot[k] is the variance of the fitted coefficient of term k
	// with one shot per basis; Stderr[k] the predicted standard error at
	// ShotsPerBasis.
	VarPerShot []float64
	Stderr     []float64
	Norm       Norm
	Target     float64
	Confidence float64
	// Z is the two-sided normal quantile of the Bonferroni bound
	// (NormLinf), Phi^{-1}(1 - (1 - Confidence)/(2 m)) over the m fitted
	// parameters.
	Z     float64
	Order int
	// OrderReason says how Order was chosen.
	OrderReason string
	// Params is the number of fitted parameters (groups count once).
	Params int
	// Expect holds <E_k> at the model (the order-Order expansion).
	Expect []float64
	Notes  []string
	// Warnings say where the plan could mislead (an unconverged series);
	// each is one sentence without a "WARNING" prefix.
	Warnings []string
}

// PlanShots predicts how many shots per basis learn the model's
// coefficients to the target precision when every basis of the scheme is
// measured equally often, from the expectations and the response of the
// model itself (the delta method of Fit, evaluated before any data).
//
// With N shots per basis, term k is measured N n_k times (n_k bases
// serve it), so Var(e_k) = (1 - e_k^2)/(N n_k) (references.md,
// "Measurement statistics"). The covariances between estimates from the
// same shots are ignored (diagonal approximation): Cov(e) = D/N with
// D = diag((1 - e_k^2)/n_k). Then Cov(theta) = P^{-1} A^T D A P^{-1} / N
// with P = -A^T R A and R = d<E>/d lambda, which already holds the factor
// beta, and
//
//	NormLinf: N = ceil(z^2 max_k Var_k(1) / eps^2), z from a Bonferroni
//	          union bound over the m parameters at the confidence;
//	NormL2:   N = ceil(sum_k Var_k(1) / eps^2).
func PlanShots(lat *lattice.Lattice, terms []lattice.Term, beta float64, opt PlanOptions) (*Plan, error) {
	opt, err := checkPlanOptions(lat, terms, beta, opt)
	if err != nil {
		return nil, err
	}
	n := lat.NumSites()
	minL := 0
	for _, t := range terms {
		minL = max(minL, len(t.Sites))
	}
	exp, err := cluster.NewExpansion(lat, terms)
	if err != nil {
		return nil, err
	}
	coeffs := make([]float64, len(terms))
	for k, t := range terms {
		coeffs[k] = t.Coeff
	}
	L := opt.Order
	orderReason := fmt.Sprintf("order %d as asked", L)
	var budgetNote string
	if L <= 0 {
		policy := cluster.NewOrderPolicy(lat, terms)
		policy.Budget = opt.Budget
		_, choice, err := exp.ChooseOrder(coeffs, beta, 1e-3, policy, cluster.Options{Workers: opt.Workers, Progress: opt.Progress})
		if err != nil {
			return nil, err
		}
		L, orderReason = choice.Order, "order chosen automatically: "+choice.Reason
		// The choice judged expectations; the plan also needs the
		// response, several times their cost: the budget guards that
		// evaluation too.
		if opt.Budget > 0 {
			chosen := L
			for L > minL && exp.PredictEvaluation(L, true) > opt.Budget {
				L--
			}
			if L < chosen {
				budgetNote = fmt.Sprintf("the order was lowered from %d to %d because the response evaluation at order %d is predicted to take %v, more than the budget %v: the plan depends on this machine's speed; raise --budget or give --order for a reproducible plan",
					chosen, L, chosen, exp.PredictEvaluation(chosen, true).Round(time.Second), opt.Budget)
				orderReason += fmt.Sprintf("; lowered to %d by the budget", L)
			}
		}
	}
	if L < minL {
		return nil, fmt.Errorf("plan: order %d cannot hold terms on %d sites", L, minL)
	}
	bases := opt.Bases
	if bases == nil {
		var err error
		if bases, err = CoveringBases(n, terms); err != nil {
			return nil, err
		}
	}
	p := &Plan{Bases: bases, Norm: opt.Norm, Target: opt.Target, Confidence: opt.Confidence, Order: L, OrderReason: orderReason}
	if budgetNote != "" {
		p.Warnings = append(p.Warnings, budgetNote)
	}
	if p.Coverage, err = basisCoverage(bases, n, terms); err != nil {
		return nil, err
	}

	res, err := exp.Evaluate(coeffs, beta, cluster.Options{Order: L, Response: true, Workers: opt.Workers, Progress: opt.Progress})
	if err != nil {
		return nil, err
	}
	if err := p.setVariances(res, terms, opt); err != nil {
		return nil, err
	}
	if opt.Norm == NormLinf {
		alpha := 1 - opt.Confidence
		p.Z = distuv.UnitNormal.Quantile(1 - alpha/(2*float64(p.Params)))
	}
	if err := p.setShots(opt.Target); err != nil {
		return nil, err
	}
	p.Notes = append(p.Notes,
		"diagonal approximation: covariances between estimates that share shots are ignored",
		fmt.Sprintf("response and expectations from the order-%d expansion at the model", L))
	// A plan resting on an unconverged series is a guess; say so.
	untrusted := 0
	for _, c := range res.TermConvergence(terms, 1e-3) {
		if !c.Trusted {
			untrusted++
		}
	}
	if untrusted > 0 {
		p.Warnings = append(p.Warnings, fmt.Sprintf("the order-%d expansion has not converged for %d of %d term expectations at this beta: the plan is only indicative; raise the order or check the temperature", L, untrusted, len(terms)))
	}
	if opt.Norm == NormLinf {
		p.Notes = append(p.Notes, fmt.Sprintf("linf: Bonferroni union bound over %d parameters at %g confidence, z = %.4g", p.Params, opt.Confidence, p.Z))
	} else {
		p.Notes = append(p.Notes, "l2: expected squared L2 error of all term coefficients at most target^2")
	}
	return p, nil
}

// checkPlanOptions refuses a problem PlanShots cannot plan for and
// returns opt with its defaults filled in.
func checkPlanOptions(lat *lattice.Lattice, terms []lattice.Term, beta float64, opt PlanOptions) (PlanOptions, error) {
	if lat == nil || len(terms) == 0 {
		return opt, errors.New("plan: no lattice or no terms")
	}
	if !(beta > 0) || math.IsInf(beta, 0) {
		return opt, fmt.Errorf("plan: beta = %v must be positive and finite", beta)
	}
	if !(opt.Target > 0) || math.IsInf(opt.Target, 0) {
		return opt, fmt.Errorf("plan: target %v must be positive and finite", opt.Target)
	}
	if opt.Norm == "" {
		opt.Norm = NormLinf
	}
	if opt.Norm != NormLinf && opt.Norm != NormL2 {
		return opt, fmt.Errorf("plan: norm %q: want %s or %s", opt.Norm, NormLinf, NormL2)
	}
	if opt.Confidence == 0 {
		opt.Confidence = 0.95
	}
	if !(opt.Confidence > 0 && opt.Confidence < 1) {
		return opt, fmt.Errorf("plan: confidence %v must lie in (0, 1)", opt.Confidence)
	}
	if opt.DenseLimit <= 0 {
		opt.DenseLimit = 1500
	}
	return opt, nil
}

// basisCoverage returns how many of the bases (n letters each) measure
// each term, and an error naming the first terms no basis measures.
func basisCoverage(bases []string, n int, terms []lattice.Term) ([]int, error) {
	for i, b := range bases {
		if len(b) != n {
			return nil, fmt.Errorf("plan: basis %d has %d letters for %d qubits", i, len(b), n)
		}
	}
	coverage := make([]int, len(terms))
	var uncovered []string
	for k, t := range terms {
		for _, b := range bases {
			if Serves(b, t) {
				coverage[k]++
			}
		}
		if coverage[k] == 0 && len(uncovered) < 10 {
			uncovered = append(uncovered, t.Key())
		}
	}
	if len(uncovered) > 0 {
		return nil, fmt.Errorf("plan: no basis measures term(s) %v: the scheme cannot learn them", uncovered)
	}
	return coverage, nil
}

// setVariances sets Expect, Params and VarPerShot from the expansion at
// the plan's order: the delta method with the diagonal data covariance
// D = diag((1 - e_k^2)/n_k) of one shot per basis.
func (p *Plan) setVariances(res *cluster.Result, terms []lattice.Term, opt PlanOptions) error {
	L := p.Order
	p.Expect = res.Expect[L-1]
	params := NewParams(terms)
	p.Params = params.NumParams()
	d := make([]float64, len(terms))
	for k, e := range p.Expect {
		if math.Abs(e) >= 1 || math.IsNaN(e) {
			return fmt.Errorf("plan: the expansion gives <%s> = %v at order %d: the temperature is too low for this order", terms[k].Key(), e, L)
		}
		d[k] = (1 - e*e) / float64(p.Coverage[k])
	}
	hess := params.project(res.Response, -1)
	vars, _, err := paramVariances(hess, params.project(diagMatrix(d), 1), opt.DenseLimit, opt.Workers, params.spatialOrder(terms))
	if err != nil {
		return fmt.Errorf("plan: %v", err)
	}
	p.VarPerShot = make([]float64, len(terms))
	for k := range terms {
		p.VarPerShot[k] = vars[params.Of[k]]
	}
	return nil
}

// setShots sets ShotsPerBasis, TotalShots and Stderr for the target from
// VarPerShot, Norm and (NormLinf) Z.
func (p *Plan) setShots(target float64) error {
	var maxVar, sumVar, shots float64
	for _, v := range p.VarPerShot {
		maxVar = math.Max(maxVar, v)
		sumVar += v
	}
	switch p.Norm {
	case NormLinf:
		shots = p.Z * p.Z * maxVar / (target * target)
	case NormL2:
		shots = sumVar / (target * target)
	default:
		return fmt.Errorf("plan: norm %q: want %s or %s", p.Norm, NormLinf, NormL2)
	}
	if shots > math.MaxInt64/float64(len(p.Bases)+1) {
		return fmt.Errorf("plan: about %.3g shots per basis needed: beyond any experiment", shots)
	}
	p.ShotsPerBasis = max(int64(math.Ceil(shots)), 2)
	p.TotalShots = p.ShotsPerBasis * int64(len(p.Bases))
	p.Stderr = make([]float64, len(p.VarPerShot))
	for k, v := range p.VarPerShot {
		p.Stderr[k] = math.Sqrt(v / float64(p.ShotsPerBasis))
	}
	return nil
}

// PredictedLinf returns the largest predicted standard error.
func (p *Plan) PredictedLinf() float64 { return maxAbs(p.Stderr) }

// PredictedL2 returns the predicted root expected squared L2 error.
func (p *Plan) PredictedL2() float64 {
	var s float64
	for _, v := range p.Stderr {
		s += v * v
	}
	return math.Sqrt(s)
}
