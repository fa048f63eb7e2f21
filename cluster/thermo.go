package cluster

import (
	"fmt"
	"math"
)

// ThermoResult holds the expansion's partial sums of the lattice's
// thermodynamics on a grid of inverse temperatures. Extensive values are
// totals; index [i][o] is beta Betas[i] at order o+1.
type ThermoResult struct {
	Order    int
	NumSites int
	Betas    []float64
	// Symmetry is the conserved quantity whose blocks every cluster's
	// levels were computed in (NoSymmetry: dense).
	Symmetry Symmetry
	// LogZ is log(Z / 2^N).
	LogZ         [][]float64
	Energy       [][]float64
	HeatCapacity [][]float64
}

// Entropy returns the entropy in nats at grid point i and order o
// (1-based): log Z + beta E.
func (r *ThermoResult) Entropy(i, o int) float64 {
	return r.LogZ[i][o-1] + float64(r.NumSites)*math.Ln2 + r.Betas[i]*r.Energy[i][o-1]
}

// Thermodynamics sums log Z, energy and heat capacity over the expansion
// for every beta of the grid at once: only the eigenvalues of each
// cluster are computed (Levels, in the blocks of the model's Symmetry),
// once, and reused for all temperatures.
func (e *Expansion) Thermodynamics(coeffs []float64, betas []float64, opt Options) (*ThermoResult, error) {
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
	// One flat slot per block: [quantity][beta][order].
	slots := make([][]float64, len(blocks))
	err = e.runBlocks(blocks, workers, opt.Progress, func(w *clusterWork, b int) error {
		acc := make([]float64, 3*nb*L)
		slots[b] = acc
		return e.eachBlockCluster(w, blocks[b], coeffs, L, func(c *clusterView) error {
			if len(c.pos) == 0 {
				return nil
			}
			if err := w.levels.FactorizeWith(c.ham, sym); err != nil {
				return fmt.Errorf("cluster %v: %v", c.sites, err)
			}
			for i, beta := range betas {
				g, err := w.levels.Gibbs(beta)
				if err != nil {
					return fmt.Errorf("cluster %v: %v", c.sites, err)
				}
				logZ := g.LogZ - float64(c.size)*math.Ln2
				energy, heat := g.Energy, g.HeatCapacity
				for o := c.size; o <= L; o++ {
					m := c.mult[o-c.size]
					acc[(0*nb+i)*L+o-1] += m * logZ
					acc[(1*nb+i)*L+o-1] += m * energy
					acc[(2*nb+i)*L+o-1] += m * heat
				}
			}
			return nil
		})
	})
	if err != nil {
		return nil, err
	}
	r := &ThermoResult{Order: L, NumSites: e.lat.NumSites(), Betas: append([]float64(nil), betas...), Symmetry: sym}
	grid := func() [][]float64 {
		g := make([][]float64, nb)
		for i := range g {
			g[i] = make([]float64, L)
		}
		return g
	}
	r.LogZ, r.Energy, r.HeatCapacity = grid(), grid(), grid()
	for _, acc := range slots {
		for i := 0; i < nb; i++ {
			for o := 0; o < L; o++ {
				r.LogZ[i][o] += acc[(0*nb+i)*L+o]
				r.Energy[i][o] += acc[(1*nb+i)*L+o]
				r.HeatCapacity[i][o] += acc[(2*nb+i)*L+o]
			}
		}
	}
	return r, nil
}
