package stationary

import (
	"fmt"
	"math"
	"os"

	"gonum.org/v1/gonum/floats"

	"warmfit/cluster"
	"warmfit/fit"
)

// weighted is the constraint system filled with data: for every usable
// row its entries with values and the covariance block of those values,
// and the current noise weights.
type weighted struct {
	np       int
	rowStart []int
	param    []int32   // per entry
	str      []int32   // per entry
	coef     []float64 // per entry: the sign s(A, k)
	val      []float64 // per entry: s(A, k) <P>
	covStart []int     // per row: offset of its k×k block in cov
	cov      []float64 // per row: Cov(val_e, val_e') row-major
	probes   []int     // system row of each usable row
	dropped  int
	w, r     []float64 // per row: weight and residual at the current direction
	corr     correction
	floor    []float64 // per row: the smallest variance a weight may use
	// penalty directions are lifted out of the low spectrum.
	penalty []conservedDirection

	// Full-covariance weights (weighted_full.go): scov is the string
	// covariance; full enables them, haveFull says whether winv (W =
	// Sigma^-1, rows×rows) holds the weights at the current direction.
	scov           *cluster.SparseSym
	full, haveFull bool
	winv           []float64
	// nullRows counts the row combinations the pseudo-inverse left out.
	nullRows int
}

// correction is the noise correction subtracted from the normal matrix.
type correction int

const (
	// noCorrection: X = G = sum_a w_a M_a M_a^T, which noise raises in
	// every direction by sum_a w_a v^T C_a v (used to find the near-null
	// span; the noise-alone spectrum calibrates it).
	noCorrection correction = iota
	// expectedCorrection: X = G - sum_a w_a C_a, unbiased for fixed
	// weights (bias-corrected total least squares).
	expectedCorrection
	// residualCorrection: X = G - sum_a w_a² r_a² C_a with weights and
	// residuals at the direction (the fundamental numerical scheme).
	residualCorrection
)

// biasOf returns the factor of C_a in the noise correction of row a.
func (ws *weighted) biasOf(a int) float64 {
	switch ws.corr {
	case noCorrection:
		return 0
	case expectedCorrection:
		return ws.w[a]
	}
	// w² r² = w (r²/Var): capped at residualCap so that rows the
	// model does not fit (systematic errors, r² far above its noise) do
	// not turn the correction into a runaway.
	return ws.w[a] * min(ws.w[a]*ws.r[a]*ws.r[a], residualCap)
}

// residualCap bounds r²/Var(r) in the noise correction (a 2-sigma
// residual; common practice for robust weights, from memory).
const residualCap = 4

// newWeighted fills sys with estimates, leaving out rows that use a
// missing string.
func newWeighted(sys *System, est *fit.Estimates) (*weighted, error) {
	if len(est.Values) != len(sys.Strings) {
		panic(fmt.Sprintf("stationary: %d estimates for %d strings", len(est.Values), len(sys.Strings)))
	}
	missing := make([]bool, len(sys.Strings))
	for _, j := range est.Missing {
		missing[j] = true
	}
	ws := &weighted{np: sys.params.NumParams(), rowStart: []int{0}, covStart: []int{0}}
	for a := range sys.NumRows() {
		row := sys.row(a)
		ok := true
		for _, e := range row {
			if missing[e.str] || math.IsNaN(est.Values[e.str]) {
				ok = false
				break
			}
		}
		if !ok {
			ws.dropped++
			continue
		}
		for _, e := range row {
			ws.param = append(ws.param, e.param)
			ws.str = append(ws.str, e.str)
			ws.coef = append(ws.coef, e.sign)
			ws.val = append(ws.val, e.sign*est.Values[e.str])
		}
		for _, e := range row {
			for _, f := range row {
				ws.cov = append(ws.cov, e.sign*f.sign*est.Cov.At(int(e.str), int(f.str)))
			}
		}
		ws.rowStart = append(ws.rowStart, len(ws.param))
		ws.covStart = append(ws.covStart, len(ws.cov))
		ws.probes = append(ws.probes, a)
	}
	ws.w = make([]float64, ws.rows())
	ws.r = make([]float64, ws.rows())
	ws.scov = est.Cov
	ws.full = fullWeights && est.Cov != nil && ws.rows() <= fullRowLimit
	return ws, nil
}

func (ws *weighted) rows() int { return len(ws.rowStart) - 1 }

// block returns the entries [lo, hi) and covariance block of row a.
func (ws *weighted) block(a int) (lo, hi int, c []float64) {
	return ws.rowStart[a], ws.rowStart[a+1], ws.cov[ws.covStart[a]:ws.covStart[a+1]]
}

// noiseOf returns theta^T C_a theta, the variance of row a's residual
// at parameters theta.
func (ws *weighted) noiseOf(a int, theta []float64) float64 {
	lo, hi, c := ws.block(a)
	k := hi - lo
	var v float64
	for i := 0; i < k; i++ {
		ti := theta[ws.param[lo+i]]
		for j := 0; j < k; j++ {
			v += ti * c[i*k+j] * theta[ws.param[lo+j]]
		}
	}
	return v
}

// reweight sets the weights 1/Var(r_a) and residuals at theta; with nil
// theta every row gets the trace of its block (an isotropic start).
func (ws *weighted) reweight(theta []float64) {
	var mean float64
	iso := make([]float64, ws.rows())
	for a := range ws.rows() {
		lo, hi, c := ws.block(a)
		k := hi - lo
		var v, r float64
		for i := 0; i < k; i++ {
			iso[a] += c[i*k+i]
		}
		// Variance of the residual for a unit theta spread evenly.
		iso[a] /= float64(ws.np)
		if theta == nil {
			v = iso[a]
		} else {
			v = ws.noiseOf(a, theta)
			for e := lo; e < hi; e++ {
				r += ws.val[e] * theta[ws.param[e]]
			}
		}
		ws.w[a], ws.r[a] = v, r
		mean += iso[a]
	}
	mean /= float64(max(ws.rows(), 1))
	// A theta nearly orthogonal to a row's parameters would give that row
	// an unbounded weight (and, without signal, a runaway iteration);
	// rows of an exact table have no noise at all. Floor each variance
	// at 1% of its isotropic value and far below the typical one.
	if len(ws.floor) != ws.rows() {
		ws.floor = make([]float64, ws.rows())
	}
	for a, v := range ws.w {
		ws.floor[a] = max(0.01*iso[a], 1e-12*mean, math.SmallestNonzeroFloat64)
		ws.w[a] = 1 / max(v, ws.floor[a])
	}
	ws.haveFull = false
	if ws.full && theta != nil {
		ws.setFull(theta)
	}
}

// chi2 returns sum_a w_a r_a², the weighted residual at the current
// weights and residuals.
func (ws *weighted) chi2() float64 {
	if ws.haveFull {
		return ws.fullChi2()
	}
	var s float64
	for a, r := range ws.r {
		s += ws.w[a] * r * r
	}
	return s
}

// mulVec sets dst = X v with X = sum_a w_a M_a M_a^T - sum_a w_a² r_a² C_a:
// the Hessian of the noise-weighted objective sum_a r_a²/Var(r_a) with
// the first-order correction for noise in the entries (the
// fundamental-numerical-scheme matrix of Chojnacki et al., IEEE TPAMI 22,
// 1294 (2000)). dst and v must not share memory.
func (ws *weighted) mulVec(dst, v []float64) {
	clear(dst)
	defer func() {
		if len(ws.penalty) > 0 {
			ws.addPenalty(dst, v, ws.penaltyWeight())
		}
	}()
	if ws.haveFull {
		ws.fullMulVec(dst, v)
		return
	}
	for a := range ws.rows() {
		lo, hi, c := ws.block(a)
		var t float64
		for e := lo; e < hi; e++ {
			t += ws.val[e] * v[ws.param[e]]
		}
		t *= ws.w[a]
		for e := lo; e < hi; e++ {
			dst[ws.param[e]] += t * ws.val[e]
		}
		bias := ws.biasOf(a)
		if bias == 0 {
			continue
		}
		k := hi - lo
		for i := 0; i < k; i++ {
			var y float64
			for j := 0; j < k; j++ {
				y += c[i*k+j] * v[ws.param[lo+j]]
			}
			dst[ws.param[lo+i]] -= bias * y
		}
	}
}

// dense returns X (see mulVec) as a dense row-major np×np matrix.
func (ws *weighted) dense() []float64 {
	n := ws.np
	var x []float64
	if ws.haveFull {
		x = ws.fullDense()
	} else {
		x = ws.diagDense()
	}
	if len(ws.penalty) > 0 {
		pw := ws.penaltyWeight()
		for _, c := range ws.penalty {
			for i, ui := range c.vector {
				if ui == 0 {
					continue
				}
				for j, uj := range c.vector {
					x[i*n+j] += pw * ui * uj
				}
			}
		}
	}
	return x
}

// diagDense is dense with per-row weights.
func (ws *weighted) diagDense() []float64 {
	n := ws.np
	x := make([]float64, n*n)
	for a := range ws.rows() {
		lo, hi, c := ws.block(a)
		k := hi - lo
		bias := ws.biasOf(a)
		for i := 0; i < k; i++ {
			pi := int(ws.param[lo+i])
			for j := 0; j < k; j++ {
				pj := int(ws.param[lo+j])
				x[pi*n+pj] += ws.w[a]*ws.val[lo+i]*ws.val[lo+j] - bias*c[i*k+j]
			}
		}
	}
	return x
}

// penaltyWeight returns penaltyScale times the largest diagonal entry of
// the uncorrected normal matrix: a conserved direction then sits far
// above every eigenvalue that matters.
func (ws *weighted) penaltyWeight() float64 {
	diag := make([]float64, ws.np)
	for a := range ws.rows() {
		lo, hi, _ := ws.block(a)
		for e := lo; e < hi; e++ {
			diag[ws.param[e]] += ws.w[a] * ws.val[e] * ws.val[e]
		}
	}
	return penaltyScale * max(floats.Max(diag), 1)
}

// solveCorrection is the noise correction Solve iterates with.
var solveCorrection = func() correction {
	switch os.Getenv("WARMFIT_STATIONARY_CORRECTION") {
	case "expected":
		return expectedCorrection
	case "none":
		return noCorrection
	}
	return residualCorrection
}()
