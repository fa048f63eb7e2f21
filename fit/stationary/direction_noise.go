package stationary

import (
	"fmt"
	"math"
	"sort"
	"time"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// directionNoiseBudget is the time directionNoise may spend evaluating
// the Gibbs state (two evaluations per error direction, timed on the
// thermal match's own evaluations); minDirectionRank error directions
// are propagated whatever it costs. Every direction matters, not only
// those of large variance: on the 3x3 XXZ model the 33 directions that
// carry 99% of the variance leave chi2/dof at 5.6, all 53 give 1.05
// (fields have small errors but move the expectations most).
const (
	directionNoiseBudget = 60 * time.Second
	minDirectionRank     = 8
)

// directionNoise propagates the noise of the learned direction through
// the thermal match. cov is the covariance of Theta off the span of the
// matched multipliers (np×np, the delta-method sandwich) and dirs the
// parameter-space directions of the multipliers t. For the largest error
// directions sigma_j v_j of cov it evaluates the Gibbs state at
// Theta ± sigma_j v_j; the shift u_j of the whitened term expectations
// is noise the match did not count. It
//
//   - moves the matched multipliers by dt_j = -(J^T J)^-1 J^T u_j, so one
//     standard deviation of the direction moves the parameters by
//     g_j = sigma_j v_j + dirs dt_j (returned; it replaces
//     sigma_j² v_j v_j^T in the covariance: the scale and the direction
//     are correlated through the match), and
//   - leaves the residual (I - H) u_j, whose covariance is added to the
//     identity in the consistency chi² (Woodbury identity), stored in
//     m.Chi2Direction.
//
// Delta method on a composite estimator (common practice, from memory):
// first order in the direction's noise, the rest of cov is kept as is.
// With m.response the shifts are J_w sigma_j v_j from the whitened
// Jacobian of one response evaluation, for every direction (the Gibbs
// state's response is local: the expansion's is sparse); without it
// each costs two evaluations and the time budget bounds their number.
func (m *ThermalMatch) directionNoise(sys *System, theta []float64, cov *mat.Dense, dirs [][]float64) (g [][]float64, v [][]float64, sigma []float64, err error) {
	np := len(theta)
	sym := mat.NewSymDense(np, nil)
	for p := range np {
		for q := p; q < np; q++ {
			sym.SetSym(p, q, (cov.At(p, q)+cov.At(q, p))/2)
		}
	}
	var eig mat.EigenSym
	if !eig.Factorize(sym, true) {
		return nil, nil, nil, fmt.Errorf("eigendecomposition of the direction covariance failed")
	}
	vals := eig.Values(nil)
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	order := make([]int, np)
	for i := range order {
		order[i] = i
	}
	sort.Slice(order, func(a, b int) bool { return vals[order[a]] > vals[order[b]] })
	var total float64
	for _, x := range vals {
		total += max(x, 0)
	}
	if total <= 0 {
		return nil, nil, nil, nil
	}
	nt, nu := len(dirs), len(m.use)
	lambda := make([]float64, sys.params.NumTerms())
	shifted := func(step []float64) ([]float64, error) {
		th := append([]float64(nil), theta...)
		floats.Add(th, step)
		sys.params.Expand(lambda, th)
		f, err := m.evaluate(lambda, m.Beta)
		if err != nil {
			return nil, err
		}
		out := make([]float64, nu)
		for i, k := range m.use {
			out[i] = f[k] / m.stderr[i]
			if math.IsNaN(out[i]) || math.IsInf(out[i], 0) {
				return nil, fmt.Errorf("expectation of term %s is %v", sys.terms[k].Key(), f[k])
			}
		}
		return out, nil
	}
	// With the response, u_j = J_w sigma_j v_j for every direction from
	// one evaluation (first order, as the central differences are).
	var jw *mat.Dense // whitened Jacobian, terms used × parameters
	if m.response != nil {
		th := append([]float64(nil), theta...)
		sys.params.Expand(lambda, th)
		resp, err := m.response(lambda, m.Beta)
		if err != nil {
			return nil, nil, nil, fmt.Errorf("linear response: %w", err)
		}
		jw = mat.NewDense(nu, np, nil)
		for i, k := range m.use {
			resp.DoRow(k, func(j int, x float64) {
				q := int(sys.params.Of[j])
				jw.Set(i, q, jw.At(i, q)+x/m.stderr[i])
			})
		}
		for i := range nu {
			for q := range np {
				if x := jw.At(i, q); math.IsNaN(x) || math.IsInf(x, 0) {
					return nil, nil, nil, fmt.Errorf("linear response of term %s is %v", sys.terms[m.use[i]].Key(), x)
				}
			}
		}
	}
	maxRank := np
	if m.Evaluations > 0 && jw == nil {
		per := m.evalTime / time.Duration(m.Evaluations)
		if per > 0 {
			maxRank = min(np, max(minDirectionRank, int(directionNoiseBudget/(2*per))))
		}
	}
	positive := 0
	for _, x := range vals {
		if x > 0 {
			positive++
		}
	}
	var ws [][]float64 // (I - H) u_j
	var share float64
	for _, idx := range order {
		if len(g) == maxRank || vals[idx] <= 0 {
			break
		}
		share += vals[idx]
		s := math.Sqrt(vals[idx])
		vj := mat.Col(nil, idx, &vecs)
		step := append([]float64(nil), vj...)
		floats.Scale(s, step)
		u := make([]float64, nu)
		if jw != nil {
			mat.NewVecDense(nu, u).MulVec(jw, mat.NewVecDense(np, step))
		} else {
			fp, err := shifted(step)
			if err != nil {
				return nil, nil, nil, err
			}
			floats.Scale(-1, step)
			fm, err := shifted(step)
			if err != nil {
				return nil, nil, nil, err
			}
			for i := range u {
				u[i] = (fp[i] - fm[i]) / 2
			}
		}
		// dt = -(J^T J)^-1 J^T u; H u = J (-dt) ... the refit absorbs J dt.
		jtu := make([]float64, nt)
		for a := range nt {
			jtu[a] = floats.Dot(m.jac[a], u)
		}
		dt := make([]float64, nt)
		for a := range nt {
			for b := range nt {
				dt[a] -= m.tCov.At(a, b) * jtu[b]
			}
		}
		w := append([]float64(nil), u...)
		for a := range nt {
			floats.AddScaled(w, dt[a], m.jac[a])
		}
		gj := make([]float64, np)
		floats.AddScaled(gj, s, vj)
		for a := range nt {
			floats.AddScaled(gj, dt[a], dirs[a])
		}
		g, v, sigma, ws = append(g, gj), append(v, vj), append(sigma, s), append(ws, w)
	}
	// chi² = z^T (I + W W^T)^-1 z = z.z - (W^T z)^T (I + W^T W)^-1 (W^T z).
	r := len(ws)
	m.DirectionRank, m.DirectionShare = r, min(share/total, 1)
	m.directionComplete = r == positive
	m.Chi2Direction = floats.Dot(m.z, m.z)
	if r == 0 {
		return g, v, sigma, nil
	}
	small := mat.NewSymDense(r, nil)
	wz := make([]float64, r)
	for a := range r {
		wz[a] = floats.Dot(ws[a], m.z)
		for b := a; b < r; b++ {
			x := floats.Dot(ws[a], ws[b])
			if a == b {
				x++
			}
			small.SetSym(a, b, x)
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(small) {
		return nil, nil, nil, fmt.Errorf("direction noise matrix not positive definite")
	}
	var sol mat.VecDense
	if err := ch.SolveVecTo(&sol, mat.NewVecDense(r, wz)); err != nil {
		return nil, nil, nil, err
	}
	m.Chi2Direction -= mat.Dot(mat.NewVecDense(r, wz), &sol)
	return g, v, sigma, nil
}
