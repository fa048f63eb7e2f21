package validate

import (
	"fmt"
	"math"
	"runtime"
	"slices"
	"sync"

	"golang.org/x/sync/errgroup"
	"gonum.org/v1/gonum/stat/distuv"

	"warmfit/cluster"
	"warmfit/lattice/model"
)

// CrosscheckOptions tunes Crosscheck. The zero value is usable.
type CrosscheckOptions struct {
	// Tol is the largest |expansion - exact| at which a value agrees;
	// 0 means 1e-3.
	Tol float64
	// MaxOrder is the highest expansion order on any patch; 0 means the
	// patch size, at most DenseQubits, lowered while the patch's
	// expansion would cost more than its share of MaxWork.
	MaxOrder int
	// MaxWork is the work (cluster.Expansion.EstimateWork units) the
	// automatic MaxOrder may spend over all patches; each patch gets an
	// equal share, at least 1e9 units (about a second). 0 means
	// cluster.DefaultAutoWork, about a minute.
	MaxWork float64
	// DenseQubits is the largest patch diagonalised densely; larger
	// patches (up to MaxTypicalityQubits) are checked by thermal
	// typicality, whose statistical errors enter the comparison. 0 means
	// 11.
	DenseQubits int
	// Typicality tunes the typicality estimates; its Workers is ignored.
	Typicality TypicalityOptions
	// Workers bounds the number of patches worked on at once; <= 0 means
	// GOMAXPROCS. Results do not depend on it.
	Workers int
	// Progress, when set, is called after each patch with the number
	// done and the total, one call at a time.
	Progress func(done, total int)
}

// PatchCheck is the comparison on one patch.
type PatchCheck struct {
	Patch *Patch
	// Method is "dense" (exact diagonalisation) or "typicality".
	Method string
	// Vectors is the number of random vectors behind typicality
	// references (0 for dense ones).
	Vectors int
	// Exact holds the reference value of each patch term; Stderr is 0
	// for dense diagonalisation.
	Exact []Estimate
	// Expansion[o-1][i] is the expansion's value of patch term i at order
	// o, for o = 1..Orders.
	Expansion [][]float64
	// Estimate[o-1][i] is the expansion's own estimate of its truncation
	// error at order o (cluster.Converge on orders 1..o at tolerance
	// Tol); +Inf where it cannot judge.
	Estimate [][]float64
	// Orders is the highest order evaluated; at the patch's size the
	// expansion is exact by construction.
	Orders int
}

// Diff returns expansion minus exact for patch term i at order o.
func (p *PatchCheck) Diff(o, i int) float64 { return p.Expansion[o-1][i] - p.Exact[i].Value }

// OrderCheck summarises one order over every patch evaluated at it.
type OrderCheck struct {
	Order int
	// Values is the number of (patch, term) values compared.
	Values int
	// MaxDiff and RMSDiff are the largest and root-mean-square
	// |expansion - exact|; the largest is at term WorstTerm of patch
	// WorstPatch.
	MaxDiff, RMSDiff      float64
	WorstPatch, WorstTerm int
	// Noise is the largest standard error of the reference values
	// compared (0 when all are dense).
	Noise float64
	// Exact is true when every patch compared has at most Order sites:
	// the expansion then equals exact diagonalisation by construction and
	// the order says nothing about convergence.
	Exact bool
	// Agrees is true when every value of a patch larger than Order (every
	// value, when Exact) satisfies |diff| <= Tol + 2 stderr, stderr being
	// that value's own reference error. Status is "agrees" then;
	// otherwise "disagrees" when some value lies beyond what the
	// reference noise explains (Beyond > 0), else "noisy": the values
	// that miss (Unresolved) do so by less than the largest excursion of
	// noise expected among Values values, so the references are too
	// noisy to judge at this tolerance.
	Agrees             bool
	Status             string
	Unresolved, Beyond int
	// Judged counts the values whose own truncation estimate e is finite
	// and above the reference noise (2 stderr < e; a value whose
	// reference is noisier cannot test e and is not judged); Covered
	// those among them with |diff| <= e + 2 stderr.
	Judged, Covered int
	// MedianRatio is the median over the judged values of estimate /
	// |diff| (those with |diff| above rounding, 1e-12): how tight the
	// expansion's own estimate is; 0 when there is none.
	MedianRatio float64
}

// CrosscheckResult is the comparison of the expansion with exact
// results on patches of one model at one temperature.
type CrosscheckResult struct {
	Beta, Tol float64
	Patches   []PatchCheck
	// Orders[o-1] summarises order o.
	Orders []OrderCheck
	// AgreeOrder is the lowest order below the patch size from which
	// every order agrees (0 when there is none).
	AgreeOrder int
	// NoisyOrder, when AgreeOrder is 0, is the lowest order below the
	// patch size from which no order disagrees beyond the reference
	// noise (0 when there is none): the expansion matches there as well
	// as the references can tell. VectorsNeeded is then about the number
	// of random vectors that would bring 2 standard errors of every
	// reference below Tol and at least halve them (0 when not
	// applicable).
	NoisyOrder, VectorsNeeded int
	// Trusted is true when the expansion agrees from an order at least
	// one below the highest it can check short of the patch size, so that
	// the agreement shows convergence rather than the end of the patch.
	Trusted bool
	// Verdict states the outcome in words, one line per statement; lines
	// that should stop a user begin with "WARNING:".
	Verdict []string
}

// Crosscheck compares the expansion with exact results on patches of m
// at inverse temperature beta. Each site set is cut from m (CutPatch);
// on each patch every term's expectation is computed by the expansion of
// the patch at orders 1..MaxOrder and exactly, by dense diagonalisation
// up to DenseQubits sites and by thermal typicality beyond. Patches are
// worked on in parallel, each in its own slot, so the result does not
// depend on the number of workers.
func Crosscheck(m *model.Model, beta float64, siteSets [][]int, opt CrosscheckOptions) (*CrosscheckResult, error) {
	if len(siteSets) == 0 {
		return nil, fmt.Errorf("validate: crosscheck needs at least one patch")
	}
	if !(beta >= 0) || math.IsInf(beta, 0) {
		return nil, fmt.Errorf("validate: beta = %v: must be finite and >= 0", beta)
	}
	opt = opt.withDefaults()
	patches := make([]*Patch, len(siteSets))
	for i, s := range siteSets {
		p, err := CutPatch(m, s)
		if err != nil {
			return nil, fmt.Errorf("validate: %v", err)
		}
		if n := len(p.Sites); n > MaxTypicalityQubits {
			return nil, fmt.Errorf("validate: patch %s has %d sites, more than the %d exact methods reach", siteList(p.Sites), n, MaxTypicalityQubits)
		}
		patches[i] = p
	}
	share := math.Max(opt.MaxWork/float64(len(patches)), 1e9)
	res := &CrosscheckResult{Beta: beta, Tol: opt.Tol, Patches: make([]PatchCheck, len(patches))}
	g := new(errgroup.Group)
	g.SetLimit(opt.Workers)
	var mu sync.Mutex
	done := 0
	for i, p := range patches {
		g.Go(func() error {
			if err := checkPatch(&res.Patches[i], p, beta, share, opt); err != nil {
				return fmt.Errorf("validate: patch %s: %v", siteList(p.Sites), err)
			}
			if opt.Progress != nil {
				mu.Lock()
				done++
				opt.Progress(done, len(patches))
				mu.Unlock()
			}
			return nil
		})
	}
	if err := g.Wait(); err != nil {
		return nil, err
	}
	res.summarise()
	return res, nil
}

func (o CrosscheckOptions) withDefaults() CrosscheckOptions {
	if o.Tol <= 0 {
		o.Tol = 1e-3
	}
	if o.MaxWork <= 0 {
		o.MaxWork = cluster.DefaultAutoWork
	}
	if o.DenseQubits <= 0 {
		o.DenseQubits = 11
	}
	o.DenseQubits = min(o.DenseQubits, cluster.MaxDenseQubits)
	if o.Workers <= 0 {
		o.Workers = runtime.GOMAXPROCS(0)
	}
	o.Typicality.Workers = 1
	return o
}

// checkPatch fills c with the exact values and the expansion of p.
func checkPatch(c *PatchCheck, p *Patch, beta, maxWork float64, opt CrosscheckOptions) error {
	c.Patch = p
	pm := p.Model
	n := len(p.Sites)
	exp, err := cluster.NewExpansion(pm.Lattice, pm.Terms)
	if err != nil {
		return err
	}
	L := opt.MaxOrder
	if L <= 0 {
		L = min(n, opt.DenseQubits)
		for L > 1 {
			if _, w := exp.EstimateWork(L); w <= maxWork {
				break
			}
			L--
		}
	}
	L = min(L, n, cluster.MaxDenseQubits)
	coeffs := make([]float64, len(pm.Terms))
	ops := make([]cluster.PauliString, len(pm.Terms))
	for k, t := range pm.Terms {
		coeffs[k] = t.Coeff
		if ops[k], err = cluster.TermPauli(t); err != nil {
			return err
		}
	}
	if c.Exact, c.Method, c.Vectors, err = exactValues(n, pm, beta, ops, opt); err != nil {
		return err
	}
	r, err := exp.Evaluate(coeffs, beta, cluster.Options{Order: L, Workers: 1, MaxWork: math.Inf(1)})
	if err != nil {
		return err
	}
	c.Orders, c.Expansion = L, r.Expect
	c.Estimate = make([][]float64, L)
	series := make([]float64, L)
	for o := 1; o <= L; o++ {
		c.Estimate[o-1] = make([]float64, len(pm.Terms))
	}
	for k, t := range pm.Terms {
		for o := range series {
			series[o] = r.Expect[o][k]
			if math.IsNaN(series[o]) || math.IsInf(series[o], 0) {
				return fmt.Errorf("the expansion gave a non-finite <%s> at order %d", t.Key(), o+1)
			}
		}
		for o := 1; o <= L; o++ {
			c.Estimate[o-1][k] = cluster.Converge(series[:o], len(t.Sites), opt.Tol).Error
		}
	}
	return nil
}

// exactValues computes the reference expectations of ops on the patch.
func exactValues(n int, pm *model.Model, beta float64, ops []cluster.PauliString, opt CrosscheckOptions) ([]Estimate, string, int, error) {
	out := make([]Estimate, len(ops))
	if n <= opt.DenseQubits {
		th, err := ExactThermal(n, pm.Terms, beta)
		if err != nil {
			return nil, "", 0, err
		}
		vals := make([]float64, len(ops))
		th.ExpectAll(ops, vals)
		for k, v := range vals {
			out[k] = Estimate{Value: v}
		}
		return out, "dense", 0, nil
	}
	tr, err := TypicalThermal(n, pm.Terms, beta, ops, opt.Typicality)
	if err != nil {
		return nil, "", 0, err
	}
	copy(out, tr.Expect)
	return out, "typicality", tr.Vectors, nil
}

// summarise fills the per-order table, the agreement order and the
// verdict from the patch comparisons.
func (r *CrosscheckResult) summarise() {
	top := 0
	for i := range r.Patches {
		top = max(top, r.Patches[i].Orders)
	}
	r.Orders = make([]OrderCheck, top)
	for o := 1; o <= top; o++ {
		r.Orders[o-1] = r.orderCheck(o)
	}
	lastOpen := 0 // the highest order that is not exact by construction
	for _, oc := range r.Orders {
		if !oc.Exact {
			lastOpen = oc.Order
		}
	}
	for o := lastOpen; o >= 1 && r.Orders[o-1].Agrees; o-- {
		r.AgreeOrder = o
	}
	for o := lastOpen; o >= 1 && r.Orders[o-1].Beyond == 0; o-- {
		r.NoisyOrder = o
	}
	for _, oc := range r.Orders[lastOpen:] {
		if !oc.Agrees {
			r.AgreeOrder = 0 // an exact order that disagrees is a fault, not agreement
		}
		if oc.Beyond > 0 {
			r.NoisyOrder = 0
		}
	}
	if r.AgreeOrder > 0 {
		r.NoisyOrder = 0
	}
	if r.NoisyOrder > 0 {
		r.VectorsNeeded = r.vectorsToResolve()
	}
	r.Trusted = r.AgreeOrder > 0 && r.AgreeOrder < lastOpen
	r.Verdict = r.verdict(lastOpen)
}

// vectorsToResolve is about the number of random vectors that brings 2
// standard errors of every typicality reference below Tol, and at least
// halves them: the errors fall as one over the square root of the number
// of vectors.
func (r *CrosscheckResult) vectorsToResolve() int {
	need := 0
	for i := range r.Patches {
		pc := &r.Patches[i]
		if pc.Vectors == 0 {
			continue
		}
		sigma := 0.0
		for _, e := range pc.Exact {
			sigma = math.Max(sigma, e.Stderr)
		}
		ratio := math.Max(2*sigma/r.Tol, 2)
		need = max(need, roundUp2(float64(pc.Vectors)*ratio*ratio))
	}
	return need
}

// roundUp2 rounds x > 0 up to two significant digits.
func roundUp2(x float64) int {
	unit := math.Pow(10, math.Max(0, math.Floor(math.Log10(x))-1))
	return int(math.Ceil(x/unit) * unit)
}

// noiseExcursion is the largest |diff| / stderr that reference noise
// alone explains among n values of references from the given number of
// random vectors: the two-sided 5% point of the largest of n Student t
// variables with vectors-1 degrees of freedom (Bonferroni; jackknife
// errors over R vectors follow t with R-1 degrees of freedom, Efron &
// Tibshirani, An Introduction to the Bootstrap, ch. 11, from memory).
func noiseExcursion(n, vectors int) float64 {
	if vectors < 2 || n < 1 {
		return 0
	}
	t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(vectors - 1)}
	return t.Quantile(1 - 0.05/(2*float64(n)))
}

// Order statuses (OrderCheck.Status).
const (
	StatusAgrees    = "agrees"
	StatusNoisy     = "noisy"
	StatusDisagrees = "disagrees"
)

func (r *CrosscheckResult) orderCheck(o int) OrderCheck {
	oc := OrderCheck{Order: o, Exact: true, Agrees: true, WorstPatch: -1, WorstTerm: -1}
	var sum2 float64
	var ratios []float64
	count := 0
	for pi := range r.Patches {
		pc := &r.Patches[pi]
		if pc.Orders < o {
			continue
		}
		count += len(pc.Exact)
		if len(pc.Patch.Sites) > o {
			oc.Exact = false
		}
	}
	for pi := range r.Patches {
		pc := &r.Patches[pi]
		if pc.Orders < o {
			continue
		}
		open := len(pc.Patch.Sites) > o
		z := noiseExcursion(count, pc.Vectors)
		for i := range pc.Exact {
			d := math.Abs(pc.Diff(o, i))
			sigma := pc.Exact[i].Stderr
			oc.Values++
			sum2 += d * d
			oc.Noise = math.Max(oc.Noise, sigma)
			if d > oc.MaxDiff || oc.WorstPatch < 0 {
				oc.MaxDiff, oc.WorstPatch, oc.WorstTerm = d, pi, i
			}
			if (open || oc.Exact) && d > r.Tol+2*sigma {
				oc.Agrees = false
				if d > r.Tol+z*sigma {
					oc.Beyond++
				} else {
					oc.Unresolved++
				}
			}
			// A reference noisier than the estimate cannot test it.
			if e := pc.Estimate[o-1][i]; open && !math.IsInf(e, 0) && 2*sigma < e {
				oc.Judged++
				if d <= e+2*sigma {
					oc.Covered++
				}
				if d > 1e-12 {
					ratios = append(ratios, e/d)
				}
			}
		}
	}
	switch {
	case oc.Agrees:
		oc.Status = StatusAgrees
	case oc.Beyond > 0:
		oc.Status = StatusDisagrees
	default:
		oc.Status = StatusNoisy
	}
	if oc.Values > 0 {
		oc.RMSDiff = math.Sqrt(sum2 / float64(oc.Values))
	}
	if len(ratios) > 0 {
		slices.Sort(ratios)
		oc.MedianRatio = ratios[len(ratios)/2]
	}
	return oc
}

// patchesNoun names the patches checked.
func patchesNoun(n int) string {
	if n == 1 {
		return "this patch"
	}
	return "these patches"
}

// thesePatches is the subject of a sentence about the patches checked.
func thesePatches(n int) string {
	if n == 1 {
		return patchesNoun(n) + " is"
	}
	return patchesNoun(n) + " are"
}

// verdict words the outcome; lastOpen is the highest order below the
// patch size.
func (r *CrosscheckResult) verdict(lastOpen int) []string {
	var lines []string
	np := len(r.Patches)
	noise := 0.0
	judged, covered := 0, 0
	for _, oc := range r.Orders[:lastOpen] {
		noise = math.Max(noise, oc.Noise)
		judged += oc.Judged
		covered += oc.Covered
	}
	switch {
	case lastOpen == 0:
		lines = append(lines, fmt.Sprintf("WARNING: every order evaluated covers the whole patch, where the expansion is exact by construction: nothing is checked at beta = %.4g; use larger patches", r.Beta))
	case r.Trusted:
		lines = append(lines, fmt.Sprintf("trusted: at beta = %.4g the expansion agrees with exact results within %.2g on %s from order %d on (checked up to order %d, the last below the patch size)",
			r.Beta, r.Tol, everyPatch(np), r.AgreeOrder, lastOpen))
		if r.AgreeOrder > lastOpen-2 {
			// Only the orders next to the patch size confirm it, and a
			// patch holds few of the large clusters those orders add on
			// a big lattice.
			lines = append(lines, fmt.Sprintf("WARNING: the agreement from order %d is confirmed only by order %d, next to the patch size: %s too small to show that order %d converges on a large lattice at beta = %.4g; cut larger patches (--shape) to confirm",
				r.AgreeOrder, lastOpen, thesePatches(np), r.AgreeOrder, r.Beta))
		}
	case r.AgreeOrder > 0:
		lines = append(lines, fmt.Sprintf("WARNING: at beta = %.4g the expansion agrees with exact results within %.2g only at order %d, the last below the patch size: %s too small to show convergence at this temperature; use larger patches or a higher temperature",
			r.Beta, r.Tol, r.AgreeOrder, thesePatches(np)))
	case r.NoisyOrder > 0:
		oc := r.Orders[lastOpen-1]
		line := fmt.Sprintf("WARNING: inconclusive: the typicality references are too noisy to judge at tolerance %.2g (2 standard errors up to %.2g): from order %d on the expansion differs from them by no more than their noise explains, but %d of %d values at order %d miss tolerance + 2 standard errors, so agreement within %.2g is neither shown nor refuted at beta = %.4g",
			r.Tol, 2*noise, r.NoisyOrder, oc.Unresolved, oc.Values, lastOpen, r.Tol, r.Beta)
		if r.VectorsNeeded > 0 {
			line += fmt.Sprintf("; about %d random vectors (--vectors %d) would bring 2 standard errors below the tolerance, or check at a looser --tol", r.VectorsNeeded, r.VectorsNeeded)
		}
		lines = append(lines, line)
	default:
		best := r.Orders[0]
		for _, oc := range r.Orders[:lastOpen] {
			if oc.MaxDiff < best.MaxDiff {
				best = oc
			}
		}
		beyond := ""
		if noise > 0 {
			beyond = ", by more than the references' noise explains,"
		}
		lines = append(lines, fmt.Sprintf("WARNING: at beta = %.4g the expansion does NOT agree with exact results within %.2g at any order below the patch size%s (smallest largest difference %.2g, at order %d): the temperature is too low for the orders checked on %s; do not trust expansion values at this temperature",
			r.Beta, r.Tol, beyond, best.MaxDiff, best.Order, patchesNoun(np)))
	}
	if 2*noise > r.Tol && r.NoisyOrder == 0 {
		lines = append(lines, fmt.Sprintf("WARNING: the typicality references carry statistical errors up to %.2g (2 sigma %.2g > tolerance %.2g): agreement is resolved only to that level; use more random vectors (--vectors)", noise, 2*noise, r.Tol))
	}
	if judged > 0 {
		frac := float64(covered) / float64(judged)
		line := fmt.Sprintf("the expansion's own truncation estimate bounded the true difference for %d of %d judged values (%.1f%%) below the patch size", covered, judged, 100*frac)
		if noise > 0 {
			line += " (within 2 standard errors of the reference; values whose reference noise exceeds their estimate are not judged)"
		}
		if frac < 0.9 {
			line = "WARNING: " + line + ": its trusted flags are optimistic for this model"
		}
		lines = append(lines, line)
	}
	return lines
}

// everyPatch says "the patch" or "all N patches".
func everyPatch(n int) string {
	if n == 1 {
		return "the patch"
	}
	return fmt.Sprintf("all %d patches", n)
}
