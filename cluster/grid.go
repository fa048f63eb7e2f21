package cluster

import (
	"fmt"
	"math"
	"sync"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
)

// GridResult holds the expansion's partial sums on a grid of inverse
// temperatures: the thermodynamics of ThermoResult and every term's
// expectation.
type GridResult struct {
	ThermoResult
	// Expect[i][o][k] is <E_k> at Betas[i] summed to order o+1.
	Expect [][][]float64
}

// EvaluateGrid sums the expansion for the coefficients coeffs (one per
// term, in the order of Terms) at every inverse temperature of betas in
// one pass over the clusters. The eigendecomposition of a cluster does
// not depend on beta: each cluster is diagonalised once (in the blocks of
// the model's Symmetry), the diagonal elements <n|E_k|n> of its terms are
// computed once, and every beta is then a Boltzmann-weighted sum of them.
// A grid of G temperatures therefore costs about one Evaluate plus G
// small matrix products per cluster instead of G evaluations.
//
// Expect[i], LogZ[i], Energy[i] and HeatCapacity[i] equal those of
// Evaluate(coeffs, betas[i], opt) to rounding (Evaluate drops states of
// weight below 1e-18/Dim, this sum keeps them). Options.Response is not
// supported and returns an error. The result holds len(betas) x Order x
// len(Terms) values; while the pass runs, each block in flight holds
// len(betas) x Order partial sums of the terms its clusters reach.
func (e *Expansion) EvaluateGrid(coeffs []float64, betas []float64, opt Options) (*GridResult, error) {
	if opt.Response {
		return nil, fmt.Errorf("the response is not available on a temperature grid; use Evaluate")
	}
	return e.sumGrid(coeffs, betas, opt, true)
}

// sumGrid is the pass over the clusters behind Thermodynamics (withExpect
// false: eigenvalues only, through Levels) and EvaluateGrid (withExpect
// true: full spectra and the diagonal elements of the terms). Each block
// accumulates in a blockAcc whose order-indexed slices hold beta i,
// order o at i*L+o, and a gridMerger adds the blocks in order.
func (e *Expansion) sumGrid(coeffs []float64, betas []float64, opt Options, withExpect bool) (*GridResult, error) {
	if len(coeffs) != len(e.terms) {
		panic(fmt.Sprintf("cluster: %d coefficients for %d terms", len(coeffs), len(e.terms)))
	}
	for _, b := range betas {
		if !(b >= 0) || math.IsInf(b, 0) {
			return nil, fmt.Errorf("beta = %v: must be finite and >= 0", b)
		}
	}
	L, workers, sym, err := e.checkRun(coeffs, opt)
	if err != nil {
		return nil, err
	}
	nb := len(betas)
	blocks := e.lat.AnchorBlocks()
	m := e.newGridMerger(len(blocks), L, betas, sym, withExpect)
	err = e.runBlocks(blocks, workers, opt.Progress, func(w *clusterWork, b int) error {
		acc := &blockAcc{
			lo:     int(e.bySite[blocks[b][0]]),
			logZ:   make([]float64, nb*L),
			energy: make([]float64, nb*L),
			heat:   make([]float64, nb*L),
		}
		if withExpect {
			acc.expect = make([][]float64, nb*L)
		}
		err := e.eachBlockCluster(w, blocks[b], coeffs, L, func(c *clusterView) error {
			if len(c.pos) == 0 {
				return nil
			}
			var err error
			if withExpect {
				err = w.gridSpectrum(c, betas, sym)
			} else {
				err = w.gridLevels(c, betas, sym)
			}
			if err != nil {
				return fmt.Errorf("cluster %v: %v", c.sites, err)
			}
			acc.addGrid(w, c, nb, L, withExpect)
			return nil
		})
		if err != nil {
			return err
		}
		m.add(b, acc)
		return nil
	})
	if err != nil {
		return nil, err
	}
	return m.result(), nil
}

// gridWork is the part of a worker's scratch space a temperature grid
// uses: the Gibbs sums of the current cluster at every beta and, with
// expectations, the weights, diagonal elements and expectations.
type gridWork struct {
	sums    []gibbsSums
	weights []float64 // [beta][level]
	diag    []float64 // [term][level]
	vals    []float64 // [beta][term]
}

// gridLevels computes the Gibbs sums of cluster c at every beta from its
// eigenvalues alone.
func (w *clusterWork) gridLevels(c *clusterView, betas []float64, sym Symmetry) error {
	if err := w.levels.FactorizeWith(c.ham, sym); err != nil {
		return err
	}
	w.grid.sums = w.grid.sums[:0]
	for _, beta := range betas {
		g, err := w.levels.Gibbs(beta)
		if err != nil {
			return err
		}
		w.grid.sums = append(w.grid.sums, gibbsSums{logZ: g.LogZ, energy: g.Energy, heatCap: g.HeatCapacity})
	}
	return nil
}

// gridSpectrum diagonalises cluster c once and computes its Gibbs sums
// and term expectations at every beta: vals = weights · diag^T.
func (w *clusterWork) gridSpectrum(c *clusterView, betas []float64, sym Symmetry) error {
	s := &w.spec
	if err := s.FactorizeWith(c.ham, sym); err != nil {
		return err
	}
	g := &w.grid
	d, nt, nb := s.dim, len(c.pos), len(betas)
	g.weights = grow(g.weights, nb*d)
	g.diag = grow(g.diag, nt*d)
	g.vals = grow(g.vals, nb*nt)
	g.sums = g.sums[:0]
	for i, beta := range betas {
		sums, err := boltzmann(s.values, beta, g.weights[i*d:(i+1)*d])
		if err != nil {
			return err
		}
		g.sums = append(g.sums, sums)
	}
	s.diagonalElements(c.ham.Ops, g.diag)
	blas64.Gemm(blas.NoTrans, blas.Trans, 1,
		blas64.General{Rows: nb, Cols: d, Stride: d, Data: g.weights},
		blas64.General{Rows: nt, Cols: d, Stride: d, Data: g.diag},
		0, blas64.General{Rows: nb, Cols: nt, Stride: nt, Data: g.vals})
	return nil
}

// addGrid adds the multiplied grid sums of cluster c (in w.grid) to every
// order from its size up to L.
func (a *blockAcc) addGrid(w *clusterWork, c *clusterView, nb, L int, withExpect bool) {
	g := &w.grid
	nt := len(c.pos)
	if withExpect {
		maxPos := 0
		for _, p := range c.pos {
			maxPos = max(maxPos, int(p))
		}
		a.grow(maxPos + 1)
	}
	logN := float64(c.size) * math.Ln2
	for o := c.size; o <= L; o++ {
		m := c.mult[o-c.size]
		if m == 0 {
			continue
		}
		for i := 0; i < nb; i++ {
			at := i*L + o - 1
			a.logZ[at] += m * (g.sums[i].logZ - logN)
			a.energy[at] += m * g.sums[i].energy
			a.heat[at] += m * g.sums[i].heatCap
			if !withExpect {
				continue
			}
			ex := a.expect[at]
			for t, p := range c.pos {
				ex[int(p)-a.lo] += m * g.vals[i*nt+t]
			}
		}
	}
}

// gridMerger adds the block accumulators of a grid pass in block order
// as they arrive: a finished block waits only until every block before it
// is done, so the result is the same for any schedule while memory stays
// at a few blocks' partial sums instead of all of them (each holds
// len(betas) x Order sums of the terms its clusters reach).
type gridMerger struct {
	e          *Expansion
	mu         sync.Mutex
	pending    []*blockAcc // finished blocks not yet added
	next       int         // the first block not yet added
	nb, L      int
	withExpect bool
	r          *GridResult
	bySorted   []float64 // [beta][order][sorted position]
}

func (e *Expansion) newGridMerger(blocks, L int, betas []float64, sym Symmetry, withExpect bool) *gridMerger {
	nb := len(betas)
	m := &gridMerger{e: e, pending: make([]*blockAcc, blocks), nb: nb, L: L, withExpect: withExpect}
	m.r = &GridResult{ThermoResult: ThermoResult{
		Order: L, NumSites: e.lat.NumSites(), Betas: append([]float64(nil), betas...), Symmetry: sym,
	}}
	grid := func() [][]float64 {
		g := make([][]float64, nb)
		for i := range g {
			g[i] = make([]float64, L)
		}
		return g
	}
	m.r.LogZ, m.r.Energy, m.r.HeatCapacity = grid(), grid(), grid()
	if withExpect {
		m.bySorted = make([]float64, nb*L*len(e.terms))
	}
	return m
}

// add records block b and adds every block that is now next in order.
func (m *gridMerger) add(b int, acc *blockAcc) {
	m.mu.Lock()
	defer m.mu.Unlock()
	m.pending[b] = acc
	K := len(m.e.terms)
	for ; m.next < len(m.pending) && m.pending[m.next] != nil; m.next++ {
		a := m.pending[m.next]
		m.pending[m.next] = nil
		for i := 0; i < m.nb; i++ {
			for o := 0; o < m.L; o++ {
				at := i*m.L + o
				m.r.LogZ[i][o] += a.logZ[at]
				m.r.Energy[i][o] += a.energy[at]
				m.r.HeatCapacity[i][o] += a.heat[at]
				if m.withExpect {
					dst := m.bySorted[at*K+a.lo:]
					for p, v := range a.expect[at] {
						dst[p] += v
					}
				}
			}
		}
	}
}

// result returns the sums once every block has been added, with the
// expectations in the caller's term order.
func (m *gridMerger) result() *GridResult {
	if m.next != len(m.pending) {
		panic("cluster: grid result before every block was added")
	}
	r, K := m.r, len(m.e.terms)
	if m.withExpect {
		r.Expect = make([][][]float64, m.nb)
		for i := range r.Expect {
			r.Expect[i] = make([][]float64, m.L)
			for o := range r.Expect[i] {
				row := make([]float64, K)
				src := m.bySorted[(i*m.L+o)*K:]
				for p, k := range m.e.sorted {
					row[k] = src[p]
				}
				r.Expect[i][o] = row
			}
		}
	}
	return r
}
