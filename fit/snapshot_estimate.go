package fit

import (
	"fmt"
	"io"
	"math"
	"math/bits"

	"warmfit/lattice"
)

// SnapshotEstimator turns product-basis snapshots into estimates of term
// expectation values with their covariance, accumulating as shots stream
// in (it never stores shots).
//
// A shot in basis B (one letter per qubit) serves term a when B shows a's
// letters on a's support; it contributes x_a = prod over the support of
// +1 for outcome '0' and -1 for '1'. The estimate of e_a is the mean m_a
// of x_a over the N_a shots serving a. Those shots are independent and,
// whatever else the basis measures, x_a has the same distribution in each
// (mean e_a, variance 1 - e_a²), so
//
//	Var(m_a) = (1 - e_a²)/N_a,
//
// estimated by (1 - m_a²)/(N_a - 1), the sample variance of x_a (x_a² = 1)
// over N_a. Near m_a = ±1 that plug-in value collapses (it is 0 when all
// shots agree), so it is floored by the posterior variance of e_a under a
// uniform prior on p = (1 + e_a)/2 (Laplace's rule of succession, common
// practice): 4 p~(1 - p~)/(N_a + 3) with p~ = (k + 1)/(N_a + 2), k the
// number of +1 outcomes. The two agree to O(1/N²) away from the boundary.
// Terms with fewer than two shots have no usable estimate.
//
// Two terms a, b whose letters agree on shared sites are served together
// by N_ab shots; on those shots (x_a, x_b) has one joint distribution
// with covariance c_ab = <P_a P_b> - e_a e_b, and shots are independent,
// so
//
//	Cov(m_a, m_b) = N_ab c_ab / (N_a N_b),
//
// with c_ab estimated by the unbiased sample covariance over the N_ab
// shared shots (pairs with N_ab < 2 get no entry). Which pairs are kept is
// set by CovarianceOptions. When a and b are served by exactly the same
// shots this is the sample covariance matrix over N, positive
// semi-definite.
//
// Sums are kept as exact integers, so results do not depend on the order
// of shots. Shots of one basis are processed 64 at a time as bit words
// (x_a x_b summed by popcount), so the cost per shot is about one byte
// read per term site served, plus (pairs served)/64.
type SnapshotEstimator struct {
	n     int
	terms []lattice.Term
	opt   CovarianceOptions

	pairsOf [][]pairRef
	npairs  int

	termN, termS               []int64 // shots and sum of x per term
	pairN, pairA, pairB, pairP []int64 // shared shots, sum x_a, sum x_b, sum x_a x_b

	plans      map[string]*basisPlan
	planBytes  int
	planBudget int // bytes of plans kept before folding them in
	total      int64

	// scratch for building plans and for merged shots
	pos []int32
	xs  []int64
}

// basisPlan is what one basis serves, with accumulators not yet added to
// the estimator's totals.
type basisPlan struct {
	terms []int32 // served terms, increasing
	start []int32 // served term j has sites sites[start[j]:start[j+1]]
	sites []int32
	pairs []planPair

	shots  int64
	sum    []int64 // per served term: sum of count·x
	prod   []int64 // per pair: sum of count·x_a·x_b
	words  []uint64
	nbatch uint
}

// planPair is a kept pair served by a basis: positions in basisPlan.terms
// and the pair index.
type planPair struct{ a, b, pair int32 }

// maxPlanBytes bounds the memory of cached basis plans; past it they are
// folded into the totals and dropped (only speed changes).
const maxPlanBytes = 64 << 20

// NewSnapshotEstimator prepares estimates of terms (canonical, on qubits
// 0..n-1) from shots on n qubits.
func NewSnapshotEstimator(n int, terms []lattice.Term, opt CovarianceOptions) (*SnapshotEstimator, error) {
	if n <= 0 {
		return nil, fmt.Errorf("number of qubits %d must be positive", n)
	}
	if err := checkTerms(n, terms); err != nil {
		return nil, err
	}
	for _, k := range opt.AllowMissing {
		if k < 0 || k >= len(terms) {
			return nil, fmt.Errorf("AllowMissing index %d outside 0..%d", k, len(terms)-1)
		}
	}
	pairsOf, npairs, err := covariancePairs(n, terms, opt)
	if err != nil {
		return nil, err
	}
	return &SnapshotEstimator{
		n: n, terms: terms, opt: opt,
		pairsOf: pairsOf, npairs: npairs,
		termN: make([]int64, len(terms)), termS: make([]int64, len(terms)),
		pairN: make([]int64, npairs), pairA: make([]int64, npairs),
		pairB: make([]int64, npairs), pairP: make([]int64, npairs),
		plans:      make(map[string]*basisPlan),
		planBudget: maxPlanBytes,
		pos:        make([]int32, len(terms)),
	}, nil
}

// Shots returns the number of shots added so far.
func (e *SnapshotEstimator) Shots() int64 { return e.total }

// Add records count identical shots: basis has one letter X/Y/Z per
// qubit, outcome one digit 0/1 per qubit ('0' is the +1 eigenvalue).
func (e *SnapshotEstimator) Add(basis, outcome string, count int64) error {
	if msg := checkBasis(basis, e.n); msg != "" {
		return fmt.Errorf("basis %q: %s", truncate(basis, 40), msg)
	}
	if msg := checkOutcome(outcome, e.n); msg != "" {
		return fmt.Errorf("outcome %q: %s", truncate(outcome, 40), msg)
	}
	if count <= 0 {
		return fmt.Errorf("shot count %d is not positive", count)
	}
	p, ok := e.plans[basis]
	if !ok {
		p = e.newPlan(basis)
	}
	accumulate(e, p, outcome, count)
	return nil
}

// addBytes is Add for input already checked by scanSnapshotBytes.
func (e *SnapshotEstimator) addBytes(basis, outcome []byte, count int64) error {
	p, ok := e.plans[string(basis)]
	if !ok {
		p = e.newPlan(string(basis))
	}
	accumulate(e, p, outcome, count)
	return nil
}

// EstimateSnapshots streams a snapshot file (see ScanSnapshots) into
// estimates of terms.
func EstimateSnapshots(r io.Reader, name string, n int, terms []lattice.Term, opt CovarianceOptions) (*Estimates, error) {
	e, err := NewSnapshotEstimator(n, terms, opt)
	if err != nil {
		return nil, err
	}
	if err := scanSnapshotBytes(r, name, n, e.addBytes); err != nil {
		return nil, err
	}
	est, err := e.Result()
	if err != nil {
		return nil, fmt.Errorf("%s: %w", displayName(name), err)
	}
	return est, nil
}

func serves(basis string, t lattice.Term) bool {
	for i, s := range t.Sites {
		if basis[s] != t.Pauli[i] {
			return false
		}
	}
	return true
}

func (e *SnapshotEstimator) newPlan(basis string) *basisPlan {
	p := &basisPlan{start: []int32{0}}
	for k, t := range e.terms {
		if serves(basis, t) {
			p.terms = append(p.terms, int32(k))
			for _, s := range t.Sites {
				p.sites = append(p.sites, int32(s))
			}
			p.start = append(p.start, int32(len(p.sites)))
			e.pos[k] = int32(len(p.terms)) // position + 1
		}
	}
	for ja, a := range p.terms {
		for _, r := range e.pairsOf[a] {
			if jb := e.pos[r.other]; jb > 0 {
				p.pairs = append(p.pairs, planPair{a: int32(ja), b: jb - 1, pair: r.pair})
			}
		}
	}
	for _, a := range p.terms {
		e.pos[a] = 0
	}
	p.sum = make([]int64, len(p.terms))
	p.prod = make([]int64, len(p.pairs))
	p.words = make([]uint64, len(p.terms))

	size := len(basis) + 36*len(p.terms) + 20*len(p.pairs) + 128
	if e.planBytes+size > e.planBudget {
		e.flushPlans()
		clear(e.plans)
		e.planBytes = 0
	}
	e.plans[basis] = p
	e.planBytes += size
	return p
}

// accumulate adds count shots with the given outcome to plan p. Single
// shots go into the current 64-shot batch of sign bits.
func accumulate[S ~string | ~[]byte](e *SnapshotEstimator, p *basisPlan, outcome S, count int64) {
	e.total += count
	if count == 1 {
		bit := uint64(1) << p.nbatch
		for j := range p.terms {
			// '0' is 0x30 and '1' 0x31: the low bit of the xor of the
			// digits is the parity of the ones, 1 for x = -1.
			var par byte
			for _, s := range p.sites[p.start[j]:p.start[j+1]] {
				par ^= outcome[s]
			}
			p.words[j] |= uint64(par&1) * bit
		}
		p.nbatch++
		if p.nbatch == 64 {
			p.flushBatch()
		}
		return
	}
	if cap(e.xs) < len(p.terms) {
		e.xs = make([]int64, len(p.terms))
	}
	xs := e.xs[:len(p.terms)]
	for j := range p.terms {
		var par byte
		for _, s := range p.sites[p.start[j]:p.start[j+1]] {
			par ^= outcome[s]
		}
		xs[j] = 1 - 2*int64(par&1)
		p.sum[j] += count * xs[j]
	}
	for i, pp := range p.pairs {
		p.prod[i] += count * xs[pp.a] * xs[pp.b]
	}
	p.shots += count
}

// flushBatch folds the batched single shots into the plan's sums.
func (p *basisPlan) flushBatch() {
	if p.nbatch == 0 {
		return
	}
	nb := int64(p.nbatch)
	for i, pp := range p.pairs {
		p.prod[i] += nb - 2*int64(bits.OnesCount64(p.words[pp.a]^p.words[pp.b]))
	}
	for j, w := range p.words {
		p.sum[j] += nb - 2*int64(bits.OnesCount64(w))
		p.words[j] = 0
	}
	p.shots += nb
	p.nbatch = 0
}

// flushPlans folds every plan's sums into the totals.
func (e *SnapshotEstimator) flushPlans() {
	for _, p := range e.plans {
		p.flushBatch()
		if p.shots == 0 {
			continue
		}
		for i, pp := range p.pairs {
			k := pp.pair
			e.pairN[k] += p.shots
			e.pairA[k] += p.sum[pp.a]
			e.pairB[k] += p.sum[pp.b]
			e.pairP[k] += p.prod[i]
			p.prod[i] = 0
		}
		for j, t := range p.terms {
			e.termN[t] += p.shots
			e.termS[t] += p.sum[j]
			p.sum[j] = 0
		}
		p.shots = 0
	}
}

// minShots is the fewest shots that give a usable estimate: a sample
// variance needs two.
const minShots = 2

// shotVariance is the variance of the mean of count outcomes ±1 with the
// given sum: the larger of the sample-variance value (1 - m²)/(N - 1) and
// the uniform-prior posterior variance (see SnapshotEstimator).
func shotVariance(sum, count int64) float64 {
	n := float64(count)
	m := float64(sum) / n
	plugin := (1 - m*m) / (n - 1)
	p := (float64(count+sum)/2 + 1) / (n + 2)
	floor := 4 * p * (1 - p) / (n + 3)
	return max(plugin, floor)
}

// Result returns the estimates from the shots added so far; it may be
// called again after more shots. It fails, listing them, when terms not
// in CovarianceOptions.AllowMissing have fewer than two shots.
func (e *SnapshotEstimator) Result() (*Estimates, error) {
	e.flushPlans()
	est := newEstimates(len(e.terms))
	var absent []int
	usable := make([]bool, len(e.terms))
	for k := range e.terms {
		n := e.termN[k]
		est.Shots[k] = n
		if n < minShots {
			absent = append(absent, k)
			continue
		}
		usable[k] = true
		v := shotVariance(e.termS[k], n)
		est.Values[k] = float64(e.termS[k]) / float64(n)
		est.Stderr[k] = math.Sqrt(v)
		est.Cov.Set(k, k, v)
	}
	why := func(k int) string {
		switch e.termN[k] {
		case 0:
			return "no shot measured its letters"
		case 1:
			return "only 1 shot"
		}
		return fmt.Sprintf("%d shots", e.termN[k])
	}
	if err := est.markMissing(e.terms, absent, e.opt.AllowMissing, why); err != nil {
		return nil, err
	}
	for a, refs := range e.pairsOf {
		for _, r := range refs {
			b, k := int(r.other), r.pair
			nab := e.pairN[k]
			if nab < 2 || !usable[a] || !usable[b] {
				continue
			}
			fab := float64(nab)
			c := (float64(e.pairP[k]) - float64(e.pairA[k])*float64(e.pairB[k])/fab) / (fab - 1)
			est.Cov.Set(a, b, fab*c/(float64(e.termN[a])*float64(e.termN[b])))
		}
	}
	return est, nil
}
