package fit

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/mat"

	"warmfit/cluster"
)

// Terms without data. When a template term has no usable data but shares
// its parameter with measured terms, the sufficient statistic A^T e of
// that parameter is incomplete and the maximum-entropy dual no longer
// applies. The fit then matches moments on the measured members: with
// A_m the rows of A for measured terms it solves
//
//	r(theta) = A_m^T (e_m - <E>_m(A theta)) = 0,
//
// one equation per parameter, by damped Newton on the non-symmetric
// Jacobian J = dr/dtheta = -A_m^T R A (R = d<E>/d lambda), with a
// backtracking line search on the weighted residual norm. Error bars
// follow from the delta method: dtheta = -J^{-1} A_m^T de_m, so
// Cov(theta) = J^{-1} (A_m^T Cov(e_m) A_m) J^{-T}.

// maxMomentParams bounds the number of parameters of a fit with
// unmeasured terms: its Jacobian is factorised densely (n^2 memory,
// n^3 time).
const maxMomentParams = 3000

// momentMethod names the solver in notes.
const momentMethod = "moment matching on measured members"

// markUnmeasured records the terms without data, refusing any whose
// parameter has no measured member (listing them) and problems too large
// for the dense Jacobian.
func (f *fitter) markUnmeasured(missing []int) error {
	terms := f.prob.Terms
	f.measured = make([]bool, len(terms))
	for k := range f.measured {
		f.measured[k] = true
	}
	for _, k := range missing {
		if k < 0 || k >= len(terms) {
			return fmt.Errorf("data: missing term index %d outside 0..%d", k, len(terms)-1)
		}
		f.measured[k] = false
	}
	var bad []int
	for _, k := range missing {
		if !slices.ContainsFunc(f.params.Members[f.params.Of[k]], func(j int) bool { return f.measured[j] }) {
			bad = append(bad, k)
		}
	}
	if len(bad) > 0 {
		const show = 10
		var parts []string
		for _, k := range bad[:min(show, len(bad))] {
			why := "ungrouped"
			if g := terms[k].Group; g != "" {
				why = fmt.Sprintf("group %q has no measured member", g)
			}
			parts = append(parts, fmt.Sprintf("%s (%s)", terms[k].Key(), why))
		}
		msg := strings.Join(parts, "; ")
		if len(bad) > show {
			msg += fmt.Sprintf("; and %d more", len(bad)-show)
		}
		return fmt.Errorf("%d template terms have no data and share no coefficient with a measured term: %s (measure them, tie them to a measured group, or drop them from the template)", len(bad), msg)
	}
	if n := f.params.NumParams(); n > maxMomentParams {
		return fmt.Errorf("%d template terms have no data: fitting them through their groups factorises a dense %dx%d Jacobian, above the limit of %d parameters (measure every term, or drop the unmeasured ones)", len(missing), n, n, maxMomentParams)
	}
	// No NaN may travel further: unmeasured values are never read, but
	// keep them finite.
	f.values = slices.Clone(f.values)
	for _, k := range missing {
		f.values[k] = 0
	}
	return nil
}

// isMeasured reports whether term k has data.
func (f *fitter) isMeasured(k int) bool { return f.measured == nil || f.measured[k] }

// average sets theta to the mean of lambda over each parameter's
// measured terms (Params.Average when every term is measured).
func (f *fitter) average(theta, lambda []float64) {
	if f.measured == nil {
		f.params.Average(theta, lambda)
		return
	}
	for q, m := range f.params.Members {
		var s float64
		n := 0
		for _, k := range m {
			if f.measured[k] {
				s += lambda[k]
				n++
			}
		}
		theta[q] = s / float64(n)
	}
}

// unmeasuredNote says how unmeasured terms were fitted, "" when every
// term had data.
func (f *fitter) unmeasuredNote() string {
	if f.measured == nil {
		return ""
	}
	n, groups := 0, map[int]bool{}
	for k, ok := range f.measured {
		if !ok {
			n++
			groups[f.params.Of[k]] = true
		}
	}
	return fmt.Sprintf("%d terms had no data and were fitted through their group (%d groups; %s: A_m^T <E>_m = A_m^T e_m, error bars from J^{-1} A_m^T Cov(e_m) A_m J^{-T})", n, len(groups), momentMethod)
}

// momentJacobian returns J = -A_m^T R A at the state, dense.
func (np *newtonProblem) momentJacobian(s *newtonState) *mat.Dense {
	n := np.params.NumParams()
	j := mat.NewDense(n, n, nil)
	raw := j.RawMatrix()
	for q, members := range np.params.Members {
		row := raw.Data[q*raw.Stride : q*raw.Stride+n]
		for _, k := range members {
			if !np.measured[k] {
				continue
			}
			s.ev.response.DoRow(k, func(c int, v float64) {
				row[np.params.Of[c]] -= v
			})
		}
	}
	return j
}

// momentWeights returns the weights of the merit function
// phi = sum_q w_q r_q^2: 1/sigma_q^2 for noisy parameters and 1/|q|^2
// for exact ones, matching the stopping rule's scales.
func (np *newtonProblem) momentWeights() []float64 {
	w := make([]float64, np.params.NumParams())
	for q, s := range np.sigma {
		if s > 0 {
			w[q] = 1 / (s * s)
		} else {
			m := float64(len(np.params.Members[q]))
			w[q] = 1 / (m * m)
		}
	}
	return w
}

func weightedNorm2(w, r []float64) float64 {
	var s float64
	for q, x := range r {
		s += w[q] * x * x
	}
	return s
}

// matchMoments solves r(theta) = 0 by damped Newton from theta0 (the
// driver run with momentMatching): each step solves J d = -r by LU and
// backtracks on phi = ||r||_W^2 until phi(t) <= (1 - 2 c t) phi(0)
// (Armijo on phi, whose slope along the Newton direction is -2 phi;
// Nocedal and Wright, Numerical Optimization, 2nd ed., Sec. 11.2). It
// stops by the same rule as minimize.
func (np *newtonProblem) matchMoments(theta0 []float64) (*newtonOutcome, error) {
	m := &momentMatching{np: np, w: np.momentWeights()}
	// Rounding noise of r_q is about 1e-13 |q| (sums of |q| expectations
	// of order one); below it phi cannot decrease.
	for q, members := range np.params.Members {
		x := 1e-13 * float64(len(members))
		m.slack += m.w[q] * x * x
	}
	return np.run(theta0, m)
}

// momentMatching is moment matching: dense Jacobian steps, Armijo on the
// weighted residual norm.
type momentMatching struct {
	np    *newtonProblem
	w     []float64 // weights of the merit function
	slack float64   // its rounding noise
}

func (m *momentMatching) curvature(out *newtonOutcome, s *newtonState) {
	out.jacobian = m.np.momentJacobian(s)
}

func (m *momentMatching) direction(out *newtonOutcome, cur *newtonState, d []float64, polishing bool) (stepKind, string) {
	np := m.np
	n := len(d)
	var lu mat.LU
	lu.Factorize(out.jacobian)
	if c := lu.Cond(); !(c <= 1e14) {
		if polishing {
			return stepDone, ""
		}
		if np.approximate() {
			return stepSwitch, "the lower-order Jacobian is singular"
		}
		return stepStop, fmt.Sprintf("the moment-matching Jacobian is singular (condition number %.2g): some parameters are not determined by the measured terms, or the order is too low for this temperature", c)
	}
	rhs := mat.NewVecDense(n, nil)
	for q, r := range cur.resid {
		rhs.SetVec(q, -r)
	}
	var dv mat.VecDense
	if err := lu.SolveVecTo(&dv, false, rhs); err != nil {
		var cond mat.Condition
		if !errors.As(err, &cond) {
			return stepStop, fmt.Sprintf("Newton system not solved: %v", err)
		}
	}
	for q := range d {
		d[q] = dv.AtVec(q)
	}
	return stepOK, ""
}

// accept is the Armijo condition on the weighted residual norm.
func (m *momentMatching) accept(cur, next *newtonState, t float64) bool {
	const c1 = 1e-4
	return weightedNorm2(m.w, next.resid) <= (1-2*c1*t)*weightedNorm2(m.w, cur.resid)+m.slack
}

func (m *momentMatching) noun() string    { return "residual" }
func (m *momentMatching) logWord() string { return " (moment matching)" }
func (m *momentMatching) failure() string {
	return "no decrease of the residual: it is below the floating-point resolution of the expansion, or the expansion is not valid at this order and temperature"
}

// momentVariances returns diag(J^{-1} B J^{-T}) for the moment-matching
// Jacobian J and B = A_m^T Cov(e_m) A_m.
func momentVariances(j *mat.Dense, b *cluster.SparseSym) ([]float64, error) {
	n, _ := j.Dims()
	var lu mat.LU
	lu.Factorize(j)
	if c := lu.Cond(); !(c <= 1e14) {
		return nil, fmt.Errorf("the moment-matching Jacobian at the solution is singular to working precision (condition number %.2g): some parameters are not determined by the measured terms", c)
	}
	// Solve J^T Y = I: Y = J^{-T}, so row j of Y holds column j of
	// J^{-1}, contiguous for the sums below.
	var y mat.Dense
	if err := lu.SolveTo(&y, true, eye(n)); err != nil {
		var cond mat.Condition
		if !errors.As(err, &cond) {
			return nil, fmt.Errorf("inverting the moment-matching Jacobian: %v", err)
		}
	}
	raw := y.RawMatrix()
	// var_q = sum_{a,c} Jinv[q,a] B[a,c] Jinv[q,c] = sum B[a,c] Y[a,q] Y[c,q].
	vars := make([]float64, n)
	for a := 0; a < n; a++ {
		ra := raw.Data[a*raw.Stride : a*raw.Stride+n]
		cols, bvals := b.Row(a)
		for e, c32 := range cols {
			c, bv := int(c32), bvals[e]
			rc := raw.Data[c*raw.Stride : c*raw.Stride+n]
			for q := range vars {
				vars[q] += bv * ra[q] * rc[q]
			}
		}
	}
	return checkVariances(vars)
}

func eye(n int) *mat.Dense {
	m := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		m.Set(i, i, 1)
	}
	return m
}

// termStderr returns the data stderr per term with NaN for unmeasured
// terms, and the stderr that sets the expansion tolerance of each term:
// its own, or for an unmeasured term the smallest of its measured group
// members'.
func (f *fitter) termStderr() (data, series []float64) {
	data = f.prob.Data.Stderr
	if f.measured == nil {
		return data, data
	}
	data = slices.Clone(data)
	series = slices.Clone(data)
	for k, ok := range f.measured {
		if ok {
			continue
		}
		data[k] = math.NaN()
		s := math.Inf(1)
		for _, j := range f.params.Members[f.params.Of[k]] {
			if f.measured[j] {
				s = math.Min(s, f.prob.Data.Stderr[j])
			}
		}
		series[k] = s
	}
	return data, series
}
