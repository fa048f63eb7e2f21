package stationary

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"warmfit/cluster"
	"warmfit/fit"
)

// BasisProbabilities returns the outcome probabilities of the state in
// one product basis (one letter X/Y/Z per qubit): entry x is the
// probability of the outcome whose bit q is 1 when qubit q gave the -1
// eigenvalue. validate.Sampler.Distribution is one (exact, dense ED).
type BasisProbabilities func(basis string) ([]float64, error)

// Prediction is what snapshots in a measurement scheme show on average:
// the expectation of every string of a System and the covariance of
// their snapshot estimates (fit.SnapshotEstimator) for one shot per
// basis.
type Prediction struct {
	// Values[j] is <Strings[j]> in the state.
	Values []float64
	// Coverage[j] is the number of bases that serve string j; strings no
	// basis serves are listed in Missing.
	Coverage []int
	Missing  []int
	// CovPerShot is the covariance of the estimates with one shot per
	// basis; with N shots per basis it is CovPerShot/N.
	CovPerShot *cluster.SparseSym
	// Bases is the number of bases of the scheme.
	Bases int
}

// maxPredictQubits bounds the 2^n outcome distributions Predict handles,
// maxPredictStrings the correlators whose covariance it keeps dense (8
// bytes per pair: 800 MB at the bound).
const (
	maxPredictQubits  = 24
	maxPredictStrings = 10000
)

// Predict computes the Prediction of the strings of sys in the given
// bases from the outcome probabilities of each basis.
//
// In basis b a shot gives x_j = ±1 for every string j that b serves, and
// the estimator averages x_j over the N_j = N n_j shots serving j (n_j
// bases, N shots each). Shots are independent, so
//
//	Cov(m_j, m_k) = sum over bases b serving both of c_b(j, k) / (N n_j n_k),
//	c_b(j, k) = E_b[x_j x_k] - e_j e_k,
//
// the formula fit.SnapshotEstimator estimates (its doc comment). Every
// parity E_b[prod_{q in m} (-1)^{x_q}] of basis b is one entry of the
// Walsh-Hadamard transform of its distribution (O(n 2^n) per basis), and
// x_j x_k is the parity of the symmetric difference of the supports.
func Predict(sys *System, bases []string, probs BasisProbabilities) (*Prediction, error) {
	n := sys.NumQubits()
	if n > maxPredictQubits {
		return nil, fmt.Errorf("stationary: predicting %d qubits from outcome distributions needs 2^%d entries per basis; the limit is %d qubits", n, n, maxPredictQubits)
	}
	ns := len(sys.Strings)
	if ns > maxPredictStrings {
		return nil, fmt.Errorf("stationary: %d correlators: the prediction keeps their covariance dense, up to %d", ns, maxPredictStrings)
	}
	masks := make([]uint64, ns)
	for j, s := range sys.Strings {
		for _, q := range s.Sites {
			masks[j] |= 1 << uint(q)
		}
	}
	p := &Prediction{Values: make([]float64, ns), Coverage: make([]int, ns), Bases: len(bases)}
	// Summed c_b over bases, dense over the strings (a few thousand at
	// most on the lattices exact distributions reach).
	acc := make([]float64, ns*ns)
	served := make([]int, 0, ns)
	for bi, b := range bases {
		if len(b) != n {
			return nil, fmt.Errorf("stationary: basis %d has %d letters for %d qubits", bi, len(b), n)
		}
		served = served[:0]
		for j, s := range sys.Strings {
			if fit.Serves(b, s) {
				served = append(served, j)
			}
		}
		if len(served) == 0 {
			continue
		}
		w, err := probs(b)
		if err != nil {
			return nil, fmt.Errorf("stationary: basis %s: %w", b, err)
		}
		if len(w) != 1<<uint(n) {
			return nil, fmt.Errorf("stationary: basis %s: %d probabilities for %d qubits", b, len(w), n)
		}
		w = append([]float64(nil), w...)
		walshHadamard(w)
		for _, j := range served {
			p.Values[j] += w[masks[j]]
			p.Coverage[j]++
		}
		for x, j := range served {
			ej := w[masks[j]]
			for _, k := range served[x:] {
				c := w[masks[j]^masks[k]] - ej*w[masks[k]]
				acc[j*ns+k] += c
			}
		}
	}
	for j := range p.Values {
		if p.Coverage[j] == 0 {
			p.Missing = append(p.Missing, j)
			p.Values[j] = math.NaN()
			continue
		}
		p.Values[j] /= float64(p.Coverage[j])
	}
	// The summed c_b used each basis's own e_j; they agree up to rounding
	// (one state), so the sum is the formula above.
	rowPtr := make([]int, ns+1)
	var col []int32
	var val []float64
	for j := range ns {
		for k := range ns {
			a, b := min(j, k), max(j, k)
			v := acc[a*ns+b]
			if v == 0 || p.Coverage[j] == 0 || p.Coverage[k] == 0 {
				continue
			}
			col = append(col, int32(k))
			val = append(val, v/float64(p.Coverage[j]*p.Coverage[k]))
		}
		rowPtr[j+1] = len(col)
	}
	p.CovPerShot = cluster.NewSparseSymCSR(ns, rowPtr, col, val)
	return p, nil
}

// walshHadamard replaces w by its Walsh-Hadamard transform in place:
// w'[m] = sum_x w[x] (-1)^popcount(x & m). len(w) is a power of two.
func walshHadamard(w []float64) {
	for h := 1; h < len(w); h <<= 1 {
		for i := 0; i < len(w); i += 2 * h {
			for j := i; j < i+h; j++ {
				a, b := w[j], w[j+h]
				w[j], w[j+h] = a+b, a-b
			}
		}
	}
}

// Estimates returns the estimates snapshots with shots per basis give
// on average: the exact values with the predicted covariance. A
// Solve on them returns the exact direction, and Fix the delta-method
// error bars of that many shots.
func (p *Prediction) Estimates(shots float64) *fit.Estimates {
	if !(shots > 0) {
		panic(fmt.Sprintf("stationary: Prediction.Estimates with %v shots", shots))
	}
	ns := len(p.Values)
	est := &fit.Estimates{
		Values:  append([]float64(nil), p.Values...),
		Stderr:  make([]float64, ns),
		Shots:   make([]int64, ns),
		Missing: append([]int(nil), p.Missing...),
	}
	rowPtr := make([]int, ns+1)
	var col []int32
	var val []float64
	for j := range ns {
		cols, vals := p.CovPerShot.Row(j)
		col = append(col, cols...)
		for _, v := range vals {
			val = append(val, v/shots)
		}
		rowPtr[j+1] = len(col)
		est.Stderr[j] = math.Sqrt(max(p.CovPerShot.At(j, j), 0) / shots)
		est.Shots[j] = int64(math.Round(shots)) * int64(p.Coverage[j])
	}
	est.Cov = cluster.NewSparseSymCSR(ns, rowPtr, col, val)
	return est
}

// makeStationary moves the values by the least-squares correction that
// makes the coefficients lambda an exact null vector of the constraints
// (M(values) lambda = 0 in every row with data), and returns the largest
// change. Exact Gibbs expectations need none (up to rounding); those of
// thermal typicality do: a typicality state is not exactly stationary,
// and its small residuals would turn the planned direction and its error
// bars (Solve at many shots) away from the model's.
func (p *Prediction) makeStationary(sys *System, lambda []float64) (float64, error) {
	missing := make([]bool, len(p.Values))
	for _, j := range p.Missing {
		missing[j] = true
	}
	// Rows with data, and the columns (strings) they use.
	var rows []int
	col := map[int32]int{}
	var cols []int32
	for a := range sys.NumRows() {
		ok := true
		for _, e := range sys.row(a) {
			if missing[e.str] {
				ok = false
				break
			}
		}
		if !ok {
			continue
		}
		rows = append(rows, a)
		for _, e := range sys.row(a) {
			if _, seen := col[e.str]; !seen {
				col[e.str] = len(cols)
				cols = append(cols, e.str)
			}
		}
	}
	if len(rows) == 0 {
		return 0, nil
	}
	// r = A v with A[a, j] = sum of sign lambda_k over the entries of row
	// a on string j; the correction is -A^T (A A^T)^+ r.
	am := mat.NewDense(len(rows), len(cols), nil)
	r := mat.NewVecDense(len(rows), nil)
	for i, a := range rows {
		var ra float64
		for _, e := range sys.row(a) {
			c := e.sign * lambda[e.term]
			am.Set(i, col[e.str], am.At(i, col[e.str])+c)
			ra += c * p.Values[e.str]
		}
		r.SetVec(i, ra)
	}
	var svd mat.SVD
	if !svd.Factorize(am, mat.SVDThin) {
		return 0, fmt.Errorf("stationary: SVD of the constraint map failed")
	}
	var u, v mat.Dense
	svd.UTo(&u)
	svd.VTo(&v)
	sv := svd.Values(nil)
	delta := make([]float64, len(cols))
	for k, s := range sv {
		if s <= 1e-12*sv[0] {
			continue
		}
		f := mat.Dot(u.ColView(k), r) / s
		for j := range delta {
			delta[j] -= f * v.At(j, k)
		}
	}
	var largest float64
	for j, d := range delta {
		p.Values[cols[j]] += d
		largest = max(largest, math.Abs(d))
	}
	return largest, nil
}
