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
// of shots. A basis met planThreshold times gets a cached plan (the terms
// and pairs it serves); its single shots are then processed 64 at a time
// as bit words (x_a x_b summed by popcount), so the cost per shot is
// about one byte read per term site served, plus (pairs served)/64.
// Bases seen rarely (random-basis schemes) go through a per-support
// index: one table lookup per support finds the served terms, and pair
// sums are taken 256 shots at a time, support pair by support pair, to
// stay in cache; the cost is then about one table lookup per kept
// support pair per shot.
type SnapshotEstimator struct {
	n     int
	terms []lattice.Term
	opt   CovarianceOptions

	pairsOf [][]pairRef
	npairs  int
	index   *supportIndex

	termN, termS []int64   // shots and sum of x per term
	pairs        []pairSum // per kept pair

	plans      map[string]*basisPlan
	planBytes  int
	planBudget int              // bytes of plans kept before folding them in
	seen       map[string]int32 // lines met per basis without a plan
	total      int64

	buf directBuffer // shots without a plan

	// scratch for building plans
	servedAt []int32 // per support: served term or -1
	codeAt   []int32 // per support: letter code shown by the basis
}

// pairSum accumulates a kept pair a < b over the shots serving both:
// their number and the sums of x_a, x_b and x_a x_b.
type pairSum struct{ n, a, b, p int64 }

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
	xs     []int64 // signs of a merged line, allocated on first use
}

// planPair is a kept pair served by a basis: positions in basisPlan.terms
// (a for the lower term index) and the pair index.
type planPair struct{ a, b, pair int32 }

const (
	// maxPlanBytes bounds the memory of cached basis plans; past it they
	// are folded into the totals and dropped (only speed changes).
	maxPlanBytes = 64 << 20
	// planThreshold is how many lines of a basis are processed directly
	// before it gets a plan: building, caching and folding in a plan
	// costs about as much as ten direct shots, and pays only for bases
	// measured many times.
	planThreshold = 16
	// maxSeen bounds the basis counts kept for planThreshold.
	maxSeen = 1 << 16
)

// NewSnapshotEstimator prepares estimates of terms (canonical, distinct,
// on qubits 0..n-1, at most 8 sites each) from shots on n qubits.
func NewSnapshotEstimator(n int, terms []lattice.Term, opt CovarianceOptions) (*SnapshotEstimator, error) {
	if n <= 0 {
		return nil, fmt.Errorf("number of qubits %d must be positive", n)
	}
	if err := lattice.CheckTerms(n, terms); err != nil {
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
	index, err := newSupportIndex(terms, pairsOf, npairs)
	if err != nil {
		return nil, err
	}
	ng := len(index.groups)
	return &SnapshotEstimator{
		n: n, terms: terms, opt: opt,
		pairsOf: pairsOf, npairs: npairs, index: index,
		termN: make([]int64, len(terms)), termS: make([]int64, len(terms)),
		pairs:      make([]pairSum, npairs),
		plans:      make(map[string]*basisPlan),
		planBudget: maxPlanBytes,
		seen:       make(map[string]int32),
		servedAt:   make([]int32, ng),
		codeAt:     make([]int32, ng),
		buf: directBuffer{
			vals:   make([]int16, ng*directBatch),
			counts: make([]int64, directBatch),
		},
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
	if count > maxTotalShots-e.total {
		return errTooManyShots
	}
	add(e, basis, outcome, count)
	return nil
}

// maxTotalShots keeps every integer sum far from int64 overflow.
const maxTotalShots = 1 << 62

var errTooManyShots = fmt.Errorf("more than 2^62 shots in total")

// addBytes is Add for input already checked by scanSnapshotBytes.
func (e *SnapshotEstimator) addBytes(basis, outcome []byte, count int64) error {
	if count > maxTotalShots-e.total {
		return errTooManyShots
	}
	add(e, basis, outcome, count)
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

func add[S ~string | ~[]byte](e *SnapshotEstimator, basis, outcome S, count int64) {
	e.total += count
	if p, ok := e.plans[string(basis)]; ok {
		accumulate(p, outcome, count)
		return
	}
	seen, ok := e.seen[string(basis)]
	if seen+1 >= planThreshold {
		delete(e.seen, string(basis))
		p := e.newPlan(string(basis))
		accumulate(p, outcome, count)
		return
	}
	if ok {
		e.seen[string(basis)] = seen + 1
	} else {
		if len(e.seen) >= maxSeen {
			clear(e.seen)
		}
		e.seen[string(basis)] = 1
	}
	direct(e, basis, outcome, count)
}

// lookup fills servedAt and codeAt for basis.
func lookup[S ~string | ~[]byte](e *SnapshotEstimator, basis S) {
	for g, grp := range e.index.groups {
		code, mul := 0, 1
		for _, s := range grp.sites {
			code += letterCode(basis[s]) * mul
			mul *= 3
		}
		e.codeAt[g] = int32(code)
		e.servedAt[g] = grp.slots[code]
	}
}

// directBatch is how many shots without a plan are buffered before
// their pair sums are taken, support pair by support pair: the few
// accumulators of one support pair then stay in cache for the whole
// batch, instead of every shot touching one cache line per support pair.
const directBatch = 256

// directBuffer holds shots without a plan, transposed: vals[g*directBatch
// + i] is -1 when shot i serves no term on support g, else 2·code + bit,
// code the letters shown on g and bit 1 when the served term's x is -1.
type directBuffer struct {
	n      int
	vals   []int16
	counts []int64
}

// direct adds count shots of a basis without a plan: term sums at once,
// pair sums when the buffer is full.
func direct[S ~string | ~[]byte](e *SnapshotEstimator, basis, outcome S, count int64) {
	buf := &e.buf
	i := buf.n
	for g, grp := range e.index.groups {
		code, mul := 0, 1
		for _, s := range grp.sites {
			code += letterCode(basis[s]) * mul
			mul *= 3
		}
		t := grp.slots[code]
		if t < 0 {
			buf.vals[g*directBatch+i] = -1
			continue
		}
		var par byte
		for _, s := range grp.sites {
			par ^= outcome[s]
		}
		bit := int64(par & 1)
		e.termN[t] += count
		e.termS[t] += count * (1 - 2*bit)
		buf.vals[g*directBatch+i] = int16(2*code) | int16(bit)
	}
	buf.counts[i] = count
	buf.n++
	if buf.n == directBatch {
		e.flushDirect()
	}
}

// flushDirect adds the pair sums of the buffered shots.
func (e *SnapshotEstimator) flushDirect() {
	buf := &e.buf
	n := buf.n
	if n == 0 {
		return
	}
	table := e.index.table
	counts := buf.counts[:n]
	for _, sp := range e.index.pairs {
		rs := buf.vals[int(sp.s)*directBatch:][:n]
		rt := buf.vals[int(sp.t)*directBatch:][:n]
		for i, c := range counts {
			vs, vt := rs[i], rt[i]
			if vs < 0 || vt < 0 {
				continue
			}
			v := table[sp.off+int32(vs>>1)+sp.ns*int32(vt>>1)]
			if v < 0 {
				continue
			}
			xs, xt := 1-2*int64(vs&1), 1-2*int64(vt&1)
			if v&1 != 0 {
				xs, xt = xt, xs
			}
			ps := &e.pairs[v>>1]
			ps.n += c
			ps.a += c * xs
			ps.b += c * xt
			ps.p += c * xs * xt
		}
	}
	buf.n = 0
}

// newPlan builds and caches the plan of basis.
func (e *SnapshotEstimator) newPlan(basis string) *basisPlan {
	lookup(e, basis)
	p := &basisPlan{start: []int32{0}}
	// Served terms in increasing index order; pos maps support -> position.
	for k, g := range e.index.termSup {
		if e.servedAt[g] == int32(k) {
			p.terms = append(p.terms, int32(k))
			p.sites = append(p.sites, e.index.groups[g].sites...)
			p.start = append(p.start, int32(len(p.sites)))
		}
	}
	pos := make(map[int32]int32, len(p.terms))
	for j, t := range p.terms {
		pos[t] = int32(j)
	}
	for _, sp := range e.index.pairs {
		ts, tt := e.servedAt[sp.s], e.servedAt[sp.t]
		if ts < 0 || tt < 0 {
			continue
		}
		v := e.index.table[sp.off+e.codeAt[sp.s]+sp.ns*e.codeAt[sp.t]]
		if v < 0 {
			continue
		}
		lo, hi := min(ts, tt), max(ts, tt)
		p.pairs = append(p.pairs, planPair{a: pos[lo], b: pos[hi], pair: v >> 1})
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
func accumulate[S ~string | ~[]byte](p *basisPlan, outcome S, count int64) {
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
	if p.xs == nil {
		p.xs = make([]int64, len(p.terms))
	}
	for j := range p.terms {
		var par byte
		for _, s := range p.sites[p.start[j]:p.start[j+1]] {
			par ^= outcome[s]
		}
		p.xs[j] = 1 - 2*int64(par&1)
		p.sum[j] += count * p.xs[j]
	}
	for i, pp := range p.pairs {
		p.prod[i] += count * p.xs[pp.a] * p.xs[pp.b]
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
			ps := &e.pairs[pp.pair]
			ps.n += p.shots
			ps.a += p.sum[pp.a]
			ps.b += p.sum[pp.b]
			ps.p += p.prod[i]
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
	e.flushDirect()
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
	if err := est.markMissing(e.terms, absent, e.opt.AllowMissing, why, "measure them: at least two shots in a basis whose letters match each term on its sites ('warmfit plan --bases covering' lists such a set of bases, 'warmfit sample' shows the file format)"); err != nil {
		return nil, err
	}
	for a, refs := range e.pairsOf {
		for _, r := range refs {
			b, ps := int(r.other), e.pairs[r.pair]
			if ps.n < 2 || !usable[a] || !usable[b] {
				continue
			}
			fab := float64(ps.n)
			c := (float64(ps.p) - float64(ps.a)*float64(ps.b)/fab) / (fab - 1)
			est.Cov.Set(a, b, fab*c/(float64(e.termN[a])*float64(e.termN[b])))
		}
	}
	return est, nil
}
