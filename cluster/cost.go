package cluster

import (
	"fmt"
	"math"
	"time"
)

// The cost model of the expansion, in machine-independent units: one
// unit is the work D^3 = 8^|c| of diagonalising a cluster of |c| sites
// densely; a cluster diagonalised in the blocks of a Symmetry costs the
// sum of the cubes of its sector dimensions (blockWork). Every refusal,
// every automatic order choice and every time prediction of the project
// goes through this file, so that they agree with each other and can be
// calibrated in one place.

// DefaultMaxWork is the largest evaluation Evaluate and Thermodynamics
// accept unless Options.MaxWork says otherwise: about an hour on a
// 2-core machine.
const DefaultMaxWork = 3e12

// SecondsPerWorkUnit is the measured wall time per unit of work with two
// workers on the reference 2-core machine (20x20 square lattice, order 6,
// 1.8e10 units in 21 s). Predictions quote it; decisions that must be
// reproducible use work units, never wall time.
const SecondsPerWorkUnit = 1.2e-9

// EstimateWork returns the expected number of clusters and the work of an
// evaluation at the given order, from lattice.EstimateClusterSizes, with
// the blocks of the Symmetry the model has with the coefficients its terms
// carry (Evaluate and Thermodynamics refuse by the symmetry of the
// coefficients they are given).
func (e *Expansion) EstimateWork(order int) (clusters int64, work float64) {
	coeffs := make([]float64, len(e.terms))
	for k, t := range e.terms {
		coeffs[k] = t.Coeff
	}
	return e.estimateWork(order, e.Symmetry(coeffs))
}

// estimateWork is EstimateWork for clusters diagonalised in the blocks of
// sym: blockWork units per cluster.
func (e *Expansion) estimateWork(order int, sym Symmetry) (clusters int64, work float64) {
	var total float64
	for s, c := range e.lat.EstimateClusterSizes(order) {
		total += c
		work += c * blockWork(s+1, sym)
	}
	return int64(math.Round(total)), work
}

// PredictDuration is the expected wall time of work units on the
// reference machine.
func PredictDuration(work float64) time.Duration {
	return time.Duration(work * SecondsPerWorkUnit * float64(time.Second))
}

// checkWork refuses an evaluation at order L in the blocks of sym whose
// estimated work exceeds maxWork (<= 0: DefaultMaxWork), quoting the
// expected time.
func (e *Expansion) checkWork(L int, maxWork float64, sym Symmetry) error {
	if maxWork <= 0 {
		maxWork = DefaultMaxWork
	}
	nc, work := e.estimateWork(L, sym)
	if work <= maxWork {
		return nil
	}
	return fmt.Errorf("expansion order %d on %d sites: about %d clusters, roughly %s on a 2-core machine (%.3g units of work, over the limit %.3g); lower the order",
		L, e.lat.NumSites(), nc, describeDuration(PredictDuration(work)), work, maxWork)
}

// describeDuration writes a duration the way a person estimates one:
// "40 s", "12 min", "3.5 h", "9000 h".
func describeDuration(d time.Duration) string {
	switch s := d.Seconds(); {
	case s < 90:
		return fmt.Sprintf("%.2g s", s)
	case s < 5400:
		return fmt.Sprintf("%.2g min", s/60)
	default:
		return fmt.Sprintf("%.3g h", s/3600)
	}
}
