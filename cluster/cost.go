package cluster

import (
	"fmt"
	"math"
	"strings"
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

// The calibration of the reference machine, a 2-core x86-64 machine with
// two workers: wall seconds on a quiet machine, measured as CPU time per
// core under shared load (BenchmarkCostCalibration in
// cost_calibration_test.go prints predicted against measured for the
// README tour, the demo and the issue benchmarks). A cluster costs
//
//	SecondsPerWorkUnit * sum_b d_b^3                 (the eigensolver; 0.7 times
//	                                                  that for blocks above 128)
//	+ secondsPerTermSquare * m * sum_b d_b^2         (expectations of its m terms)
//	+ secondsPerCluster + secondsPerBlock * blocks   (enumeration, set-up)
//
// over its symmetry blocks b of dimension d_b, the middle part twice for
// complex Hermitian clusters, and everything responseFactor times when the
// response matrix is accumulated. Predictions quote these constants;
// decisions that must be reproducible use work units, never wall time.
const (
	// SecondsPerWorkUnit is the wall time per unit of work (one D^3 of
	// the eigensolver): 2.0e-9 CPU seconds per core on the 6x6 tour
	// model at orders 6 and 7, real and parity-blocked alike.
	SecondsPerWorkUnit = 1.0e-9
	// secondsPerTermSquare is the wall time per term and squared block
	// dimension for the expectation values of a real cluster.
	secondsPerTermSquare = 0.385e-9
	// complexTermFactor multiplies it for complex Hermitian clusters
	// (every two-site Pauli product, measured 1.57 against 0.77 ns).
	complexTermFactor = 2
	// secondsPerCluster is the fixed cost of one cluster,
	// secondsPerBlock that of each of its symmetry blocks (measured on
	// U(1) clusters, whose s+1 small blocks are dominated by it).
	secondsPerCluster = 2.9e-6
	secondsPerBlock   = 1.1e-6
	// responseFactor is the cost of an evaluation with the Kubo-Mori
	// response against one without (measured 4.3 to 4.5 at orders 3-6).
	responseFactor = 4.5
	// largeBlockFactor scales SecondsPerWorkUnit for blocks larger than
	// smallReductionDim, which the blocked LAPACK reduction handles
	// faster per unit (measured 0.67 on the Heisenberg chain at order
	// 10, U(1) blocks up to 252).
	largeBlockFactor = 0.7
)

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

// PredictDuration is the expected wall time of the eigensolver part of
// work units on the reference machine; PredictEvaluation adds the costs
// that do not scale as D^3 and is the better prediction of a whole
// evaluation.
func PredictDuration(work float64) time.Duration {
	return seconds(work * SecondsPerWorkUnit)
}

// PredictEvaluation is the expected wall time of Evaluate at the given
// order on the reference machine with two workers, with or without the
// response, in the blocks of the Symmetry the model has with the
// coefficients its terms carry. Fits cost several evaluations with the
// response.
func (e *Expansion) PredictEvaluation(order int, response bool) time.Duration {
	coeffs := make([]float64, len(e.terms))
	for k, t := range e.terms {
		coeffs[k] = t.Coeff
	}
	return e.predict(order, e.Symmetry(coeffs), response)
}

// predict is PredictEvaluation in the blocks of sym.
func (e *Expansion) predict(order int, sym Symmetry, response bool) time.Duration {
	// Terms per cluster of s sites: the one-site terms of s sites and the
	// longer ones of about s-1 bonds (most clusters are tree-like).
	var single, multi float64
	complexTerms := false
	for _, t := range e.terms {
		if len(t.Sites) == 1 {
			single++
		} else {
			multi++
		}
		complexTerms = complexTerms || strings.Count(t.Pauli, "Y")%2 == 1
	}
	perSite := single / float64(e.lat.NumSites())
	perBond := 0.0
	if nb := len(e.lat.InteractionBonds()); nb > 0 {
		perBond = multi / float64(nb)
	}
	termCost := secondsPerTermSquare
	if complexTerms {
		termCost *= complexTermFactor
	}
	var total float64
	for i, c := range e.lat.EstimateClusterSizes(order) {
		s := i + 1
		m := perSite*float64(s) + perBond*float64(s-1)
		total += c * (eigenSeconds(s, sym) + termCost*m*blockSquares(s, sym) +
			secondsPerCluster + secondsPerBlock*blockCount(s, sym))
	}
	if response {
		total *= responseFactor
	}
	return seconds(total)
}

// eigenSeconds is the predicted eigensolver time of one cluster of nq
// qubits in the blocks of sym: blockWork with the faster rate of large
// blocks.
func eigenSeconds(nq int, sym Symmetry) float64 {
	rate := func(d float64) float64 {
		if d > smallReductionDim {
			return SecondsPerWorkUnit * largeBlockFactor
		}
		return SecondsPerWorkUnit
	}
	switch sym.sectorKind() {
	case byPopcount:
		var t, binom float64 = 0, 1
		for k := 0; k <= nq; k++ {
			t += binom * binom * binom * rate(binom)
			binom = binom * float64(nq-k) / float64(k+1)
		}
		return t
	case byParity:
		if nq == 0 {
			return SecondsPerWorkUnit
		}
		d := math.Pow(2, float64(nq-1))
		return 2 * d * d * d * rate(d)
	}
	d := math.Pow(2, float64(nq))
	return d * d * d * rate(d)
}

func seconds(s float64) time.Duration {
	return time.Duration(math.Min(s, 1e9) * float64(time.Second))
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
		L, e.lat.NumSites(), nc, describeDuration(e.predict(L, sym, false)), work, maxWork)
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
