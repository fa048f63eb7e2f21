package cluster

import (
	"fmt"
	"math"
	"runtime"
	"sort"
	"sync"
	"sync/atomic"

	"golang.org/x/sync/errgroup"

	"warmfit/lattice"
)

// Expansion is the numerical linked-cluster expansion (NLCE) of a model on
// a lattice: every extensive property P of the whole system is the sum of
// the connected-cluster weights W(c) = P(c) - sum_{s proper connected
// subcluster of c} W(s) over all connected clusters c with at most Order
// sites (Rigol, Bryant, Singh, arXiv 0706.3254). Clusters have open
// boundaries and hold every term whose support lies inside them.
//
// Instead of storing every subcluster's weight, the sum is reorganised by
// inclusion–exclusion over the perimeter of each cluster: a cluster t with
// |t| sites and b perimeter sites (sites outside t adjacent to it) enters
// the order-L sum with the multiplier
//
//	m_L(t) = sum_{j=0}^{L-|t|} (-1)^j C(b, j),
//
// because W(c) = sum over connected t in c with c inside t ∪ ∂t of
// (-1)^{|c|-|t|} P(t) (the full Möbius inversion on the subset lattice,
// whose weights vanish on disconnected sets since P is additive over
// components). So each cluster is diagonalised once, in any order, and
// contributes to all orders |t|..L at once: the expansion streams over
// clusters with memory independent of their number.
type Expansion struct {
	lat   *lattice.Lattice
	terms []lattice.Term

	// sorted lists term indices by smallest site; bySite[s]..bySite[s+1]
	// are the positions in sorted of the terms whose smallest site is s.
	sorted []int32
	bySite []int32
	pos    []int32 // pos[k]: position of term k in sorted
}

// NewExpansion prepares the expansion of the given terms on lat. Every
// term's support must be a connected set of the lattice's interaction
// graph, otherwise the linked-cluster identity fails.
func NewExpansion(lat *lattice.Lattice, terms []lattice.Term) (*Expansion, error) {
	n := lat.NumSites()
	if n == 0 {
		return nil, fmt.Errorf("lattice has no sites")
	}
	if n > math.MaxInt32 {
		return nil, fmt.Errorf("lattice has %d sites, more than the expansion supports", n)
	}
	if err := lat.CheckTerms(terms); err != nil {
		return nil, err
	}
	e := &Expansion{lat: lat, terms: terms}
	e.sorted = make([]int32, len(terms))
	for k := range e.sorted {
		e.sorted[k] = int32(k)
	}
	sort.SliceStable(e.sorted, func(a, b int) bool {
		return terms[e.sorted[a]].Sites[0] < terms[e.sorted[b]].Sites[0]
	})
	e.pos = make([]int32, len(terms))
	for p, k := range e.sorted {
		e.pos[k] = int32(p)
	}
	e.bySite = make([]int32, n+1)
	p := 0
	for s := 0; s <= n; s++ {
		for p < len(e.sorted) && terms[e.sorted[p]].Sites[0] < s {
			p++
		}
		e.bySite[s] = int32(p)
	}
	return e, nil
}

// Lattice returns the lattice the expansion runs on.
func (e *Expansion) Lattice() *lattice.Lattice { return e.lat }

// Terms returns the model terms, in the caller's order.
func (e *Expansion) Terms() []lattice.Term { return e.terms }

// Options controls one evaluation of the expansion.
type Options struct {
	// Order is the largest cluster size L (sites).
	Order int
	// Response also accumulates the sparse matrix d<E_k>/d lambda_j at
	// order ResponseOrder.
	Response bool
	// ResponseOrder is the order of the response when Response is set:
	// 0 means Order; otherwise it must lie in 1..Order. Clusters larger
	// than it skip the Kubo–Mori sums, so a lower order costs little on
	// top of the expectations at Order: a fitter takes the exact
	// gradient at Order and a cheaper curvature from one evaluation.
	ResponseOrder int
	// Workers bounds the parallelism; <= 0 means GOMAXPROCS. Results do
	// not depend on it.
	Workers int
	// MaxWork refuses evaluations whose estimated cost exceeds it, in
	// units of the diagonalisation cost summed over clusters: D^3 = 8^|c|
	// for a dense cluster, the sum of the cubed sector dimensions when the
	// model has a Symmetry; <= 0 means DefaultMaxWork.
	MaxWork float64
	// IgnoreSymmetry diagonalises every cluster densely even when the
	// model has a Symmetry: slower, with the same results to rounding;
	// for cross-checks and timing.
	IgnoreSymmetry bool
	// Progress, when set, is called after each block of anchor sites with
	// the number of blocks done and the total. It may be called from
	// several goroutines, one call at a time.
	Progress func(done, total int)
}

// Result holds the partial sums of the expansion at every order 1..Order.
// Extensive quantities are totals over the lattice; divide by NumSites for
// per-site values.
type Result struct {
	Order    int
	NumSites int
	Beta     float64
	// Symmetry is the conserved quantity whose blocks every cluster was
	// diagonalised in (NoSymmetry: dense).
	Symmetry Symmetry
	// Clusters[s-1] is the number of connected clusters with s sites.
	Clusters []int64

	// Series indexed by order-1. LogZ is log(Z / 2^N), the part of log Z
	// that depends on the Hamiltonian.
	LogZ         []float64
	Energy       []float64
	HeatCapacity []float64
	// Expect[o][k] is <E_k> summed to order o+1.
	Expect [][]float64
	// Response is d<E_k>/d lambda_j at order ResponseOrder, when
	// requested.
	Response      *SparseSym
	ResponseOrder int
}

// LogZTotal returns log Z (with the 2^N) at the highest order.
func (r *Result) LogZTotal() float64 {
	return r.LogZ[r.Order-1] + float64(r.NumSites)*math.Ln2
}

// Entropy returns the von Neumann entropy S = log Z + beta E at order o
// (1-based), in nats.
func (r *Result) Entropy(o int) float64 {
	return r.LogZ[o-1] + float64(r.NumSites)*math.Ln2 + r.Beta*r.Energy[o-1]
}

// Evaluate sums the expansion for the coefficients coeffs (one per term,
// in the order of Terms) at inverse temperature beta.
func (e *Expansion) Evaluate(coeffs []float64, beta float64, opt Options) (*Result, error) {
	if len(coeffs) != len(e.terms) {
		panic(fmt.Sprintf("cluster: %d coefficients for %d terms", len(coeffs), len(e.terms)))
	}
	if !(beta >= 0) || math.IsInf(beta, 0) {
		return nil, fmt.Errorf("beta = %v: must be finite and >= 0", beta)
	}
	L, workers, sym, err := e.checkRun(coeffs, opt)
	if err != nil {
		return nil, err
	}
	respOrder := 0 // no response
	if opt.Response {
		respOrder = L
		if opt.ResponseOrder != 0 {
			if opt.ResponseOrder < 1 || opt.ResponseOrder > L {
				return nil, fmt.Errorf("response order %d: must lie in 1..%d (the expansion order)", opt.ResponseOrder, L)
			}
			respOrder = opt.ResponseOrder
		}
	}
	blocks := e.lat.AnchorBlocks()
	accs := make([]*blockAcc, len(blocks))
	err = e.runBlocks(blocks, workers, opt.Progress, func(w *clusterWork, b int) error {
		acc, err := e.evaluateBlock(w, blocks[b], coeffs, beta, L, respOrder, sym)
		accs[b] = acc
		return err
	})
	if err != nil {
		return nil, err
	}
	r := e.merge(accs, L, beta, respOrder)
	r.Symmetry = sym
	return r, nil
}

// checkRun validates coefficients and options and returns the order, the
// worker count and the symmetry every cluster is diagonalised with.
func (e *Expansion) checkRun(coeffs []float64, opt Options) (L, workers int, sym Symmetry, err error) {
	for k, c := range coeffs {
		if math.IsNaN(c) || math.IsInf(c, 0) {
			return 0, 0, 0, fmt.Errorf("term %d (%s): coefficient %v is not finite", k, e.terms[k].Key(), c)
		}
	}
	L = opt.Order
	if L < 1 {
		return 0, 0, 0, fmt.Errorf("expansion order %d: must be at least 1", L)
	}
	if L > MaxDenseQubits {
		return 0, 0, 0, fmt.Errorf("expansion order %d: clusters above %d sites are beyond dense diagonalisation", L, MaxDenseQubits)
	}
	if !opt.IgnoreSymmetry {
		sym = e.Symmetry(coeffs)
	}
	workers = opt.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	if err := e.checkWork(L, opt.MaxWork, sym); err != nil {
		return 0, 0, 0, err
	}
	return L, workers, sym, nil
}

// runBlocks runs task for every block on at most workers goroutines, each
// with its own scratch space, reporting progress after each block.
func (e *Expansion) runBlocks(blocks [][2]int, workers int, progress func(done, total int), task func(w *clusterWork, b int) error) error {
	n := e.lat.NumSites()
	pool := sync.Pool{New: func() any { return newClusterWork(n) }}
	var done atomic.Int64
	var progressMu sync.Mutex
	g := new(errgroup.Group)
	g.SetLimit(workers)
	for b := range blocks {
		g.Go(func() error {
			w := pool.Get().(*clusterWork)
			defer pool.Put(w)
			if err := task(w, b); err != nil {
				return err
			}
			if progress != nil {
				d := int(done.Add(1))
				progressMu.Lock()
				progress(d, len(blocks))
				progressMu.Unlock()
			}
			return nil
		})
	}
	return g.Wait()
}

// blockAcc accumulates the contributions of the clusters anchored in one
// block. Terms are addressed by their position in Expansion.sorted minus
// lo: clusters anchored at a hold only terms whose smallest site is >= a.
type blockAcc struct {
	lo       int
	expect   [][]float64 // [order][pos-lo]
	logZ     []float64
	energy   []float64
	heat     []float64
	clusters []int64
	resp     []respEntry // the response entries, sorted within each hand-over
}

func (a *blockAcc) grow(hi int) {
	for o := range a.expect {
		if need := hi - a.lo; need > len(a.expect[o]) {
			a.expect[o] = append(a.expect[o], make([]float64, need-len(a.expect[o]))...)
		}
	}
}

// clusterWork is one worker's scratch space.
type clusterWork struct {
	local  []int32 // global site -> local qubit, -1 outside the cluster
	mark   []int32 // perimeter marks, tagged by cluster serial
	serial int32
	pos    []int32 // sorted positions of the terms inside the cluster
	ham    Hamiltonian
	spec   Spectrum // reused: Factorize keeps its workspace
	levels Levels   // the same for eigenvalue-only work
	th     Thermal
	vals   []float64
	resp   []float64
	mult   []float64
	lresp  *localResponse // the response of the current block
	grid   gridWork       // sums over a temperature grid
}

func newClusterWork(n int) *clusterWork {
	w := &clusterWork{local: make([]int32, n), mark: make([]int32, n)}
	for i := range w.local {
		w.local[i] = -1
	}
	return w
}

// evaluateBlock sums the clusters anchored in block; respOrder > 0 also
// sums the response at that order.
func (e *Expansion) evaluateBlock(w *clusterWork, block [2]int, coeffs []float64, beta float64, L, respOrder int, sym Symmetry) (*blockAcc, error) {
	acc := &blockAcc{
		lo:       int(e.bySite[block[0]]),
		expect:   make([][]float64, L),
		logZ:     make([]float64, L),
		energy:   make([]float64, L),
		heat:     make([]float64, L),
		clusters: make([]int64, L),
	}
	if respOrder > 0 {
		if w.lresp == nil {
			w.lresp = newLocalResponse(len(e.terms))
		}
		var discard []respEntry
		w.lresp.flush(&discard) // left over by a block that failed
	}
	err := e.eachBlockCluster(w, block, coeffs, L, func(c *clusterView) error {
		acc.clusters[c.size-1]++
		if len(c.pos) == 0 {
			return nil
		}
		return e.addCluster(w, acc, c, beta, L, respOrder, sym)
	})
	if respOrder > 0 {
		w.lresp.flush(&acc.resp)
	}
	return acc, err
}

// clusterView is one connected cluster as the visitor sees it: its size,
// the sorted positions of the terms inside it, its Hamiltonian in local
// qubits and its multipliers m_o for o = size..L. Everything is scratch
// space reused for the next cluster.
type clusterView struct {
	sites []int
	size  int
	pos   []int32
	ham   *Hamiltonian
	mult  []float64
}

// eachBlockCluster calls visit for every connected cluster of at most L
// sites anchored in block, with the cluster's terms and multipliers set
// up in w.
func (e *Expansion) eachBlockCluster(w *clusterWork, block [2]int, coeffs []float64, L int, visit func(c *clusterView) error) error {
	var err error
	view := &clusterView{ham: &w.ham}
	for anchor := block[0]; anchor < block[1] && err == nil; anchor++ {
		e.lat.EachClusterFrom(anchor, L, func(sites []int) bool {
			e.loadCluster(w, sites, coeffs)
			view.sites, view.size, view.pos = sites, len(sites), w.pos
			view.mult = view.mult[:0]
			if len(w.pos) > 0 {
				w.mult = multipliers(w.mult, len(sites), e.perimeter(w, sites), L)
				view.mult = w.mult
			}
			err = visit(view)
			for _, s := range sites {
				w.local[s] = -1
			}
			return err == nil
		})
	}
	return err
}

// loadCluster maps the cluster's sites to local qubits (w.local, which
// the caller resets) and collects the terms inside it, found from their
// smallest site, into w.pos and w.ham.
func (e *Expansion) loadCluster(w *clusterWork, sites []int, coeffs []float64) {
	for i, s := range sites {
		w.local[s] = int32(i)
	}
	w.pos = w.pos[:0]
	w.ham.NumQubits = len(sites)
	w.ham.Ops = w.ham.Ops[:0]
	w.ham.Coeffs = w.ham.Coeffs[:0]
	for _, s := range sites {
		for p := e.bySite[s]; p < e.bySite[s+1]; p++ {
			k := e.sorted[p]
			t := &e.terms[k]
			var op PauliString
			inside := true
			for i, site := range t.Sites {
				q := w.local[site]
				if q < 0 {
					inside = false
					break
				}
				op.setLetter(uint64(1)<<uint(q), t.Pauli[i]) // letters checked in NewExpansion
			}
			if !inside {
				continue
			}
			w.pos = append(w.pos, p)
			w.ham.Ops = append(w.ham.Ops, op)
			w.ham.Coeffs = append(w.ham.Coeffs, coeffs[k])
		}
	}
}

// addCluster diagonalises one cluster in the blocks of sym and adds its
// multiplied properties to every order from its size up to L, and its
// response to order respOrder (none when 0).
func (e *Expansion) addCluster(w *clusterWork, acc *blockAcc, c *clusterView, beta float64, L, respOrder int, sym Symmetry) error {
	size := c.size
	if err := w.spec.FactorizeWith(&w.ham, sym); err != nil {
		return fmt.Errorf("cluster %v: %v", c.sites, err)
	}
	th := &w.th
	if err := th.Set(&w.spec, beta); err != nil {
		return fmt.Errorf("cluster %v: %v", c.sites, err)
	}
	logZ := th.LogZ() - float64(size)*math.Ln2
	energy := th.Energy()
	heat := th.HeatCapacity()
	if cap(w.vals) < len(w.pos) {
		w.vals = make([]float64, len(w.pos))
	}
	w.vals = w.vals[:len(w.pos)]
	th.ExpectAll(w.ham.Ops, w.vals)

	maxPos := 0
	for _, p := range w.pos {
		maxPos = max(maxPos, int(p))
	}
	acc.grow(maxPos + 1)
	for o := size; o <= L; o++ {
		m := c.mult[o-size]
		if m == 0 {
			continue
		}
		acc.logZ[o-1] += m * logZ
		acc.energy[o-1] += m * energy
		acc.heat[o-1] += m * heat
		ex := acc.expect[o-1]
		for i, p := range w.pos {
			ex[int(p)-acc.lo] += m * w.vals[i]
		}
	}
	if respOrder >= size {
		m := c.mult[respOrder-size]
		if m != 0 {
			nt := len(w.pos)
			if cap(w.resp) < nt*nt {
				w.resp = make([]float64, nt*nt)
			}
			w.resp = w.resp[:nt*nt]
			th.Response(w.ham.Ops, w.resp)
			w.lresp.add(w.pos, w.resp, m, &acc.resp)
		}
	}
	return nil
}

// perimeter counts the sites outside the cluster adjacent to it; it needs
// w.local set for the cluster.
func (e *Expansion) perimeter(w *clusterWork, sites []int) int {
	w.serial++
	if w.serial == math.MaxInt32 {
		for i := range w.mark {
			w.mark[i] = 0
		}
		w.serial = 1
	}
	b := 0
	for _, s := range sites {
		for _, nb := range e.lat.Neighbors(s) {
			if w.local[nb] < 0 && w.mark[nb] != w.serial {
				w.mark[nb] = w.serial
				b++
			}
		}
	}
	return b
}

// multipliers returns m_o for o = size..L: the weight with which a
// cluster of the given size and perimeter enters the order-o sum,
// m_o = sum_{j=0}^{o-size} (-1)^j C(perimeter, j).
func multipliers(dst []float64, size, perimeter, L int) []float64 {
	dst = dst[:0]
	sum, binom := 0.0, 1.0
	for j := 0; j <= L-size; j++ {
		if j > 0 {
			binom = binom * float64(perimeter-j+1) / float64(j)
		}
		if j%2 == 0 {
			sum += binom
		} else {
			sum -= binom
		}
		dst = append(dst, math.Round(sum))
	}
	return dst
}

// merge adds the block accumulators in block order.
func (e *Expansion) merge(accs []*blockAcc, L int, beta float64, respOrder int) *Result {
	K := len(e.terms)
	r := &Result{
		Order:        L,
		NumSites:     e.lat.NumSites(),
		Beta:         beta,
		Clusters:     make([]int64, L),
		LogZ:         make([]float64, L),
		Energy:       make([]float64, L),
		HeatCapacity: make([]float64, L),
		Expect:       make([][]float64, L),
	}
	bySorted := make([][]float64, L)
	for o := range bySorted {
		bySorted[o] = make([]float64, K)
	}
	for _, a := range accs {
		for o := 0; o < L; o++ {
			r.Clusters[o] += a.clusters[o]
			r.LogZ[o] += a.logZ[o]
			r.Energy[o] += a.energy[o]
			r.HeatCapacity[o] += a.heat[o]
			for i, v := range a.expect[o] {
				bySorted[o][a.lo+i] += v
			}
		}
	}
	for o := 0; o < L; o++ {
		r.Expect[o] = make([]float64, K)
		for p, k := range e.sorted {
			r.Expect[o][k] = bySorted[o][p]
		}
	}
	if respOrder > 0 {
		entries := make([][]respEntry, len(accs))
		for b, a := range accs {
			entries[b] = a.resp
		}
		r.Response = mergeResponse(K, entries, e.sorted)
		r.ResponseOrder = respOrder
	}
	return r
}
