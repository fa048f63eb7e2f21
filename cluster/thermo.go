package cluster

import "math"

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
// once, and reused for all temperatures. EvaluateGrid is the same pass
// with full spectra, which adds every term's expectation.
func (e *Expansion) Thermodynamics(coeffs []float64, betas []float64, opt Options) (*ThermoResult, error) {
	r, err := e.sumGrid(coeffs, betas, opt, false)
	if err != nil {
		return nil, err
	}
	return &r.ThermoResult, nil
}
