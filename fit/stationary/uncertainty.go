package stationary

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"warmfit/fit"
)

// errorBars computes delta-method standard errors of Theta from the
// noise of the constraint entries. At the truth M theta = 0, so to first
// order the stationarity condition (X theta)_f = 0 of the free
// parameters f moves by sum_a w_a M_a dr_a with dr_a = sum_j c_aj dm_j
// the residual noise of row a (c_aj = theta_p s for the entry of string
// j): the influence matrix U[p, j] = sum_a w_a M_ap c_aj maps string
// noise to it, S = U Cov(m) U^T, and
//
//	Cov(theta_f) = G_ff^-1 S_ff G_ff^-1
//
// when calibrations fix every multiplier; with a thermal match the
// directions it fixes get the match covariance instead (pseudo-inverse of
// X on their complement, an approximation that ignores correlations
// between the two).
func (res *Result) errorBars(sys *System, est *fit.Estimates, calRows []int, basis, null [][]float64) error {
	d := res.Direction
	ws := d.ws
	np := ws.np
	theta := res.Theta
	ws.reweight(theta)
	// The noise in the entries inflates both S and the plain normal
	// matrix G = sum_a w_a M_a M_a^T by the same first-order amount, so
	// the sandwich uses G (not the noise-corrected X): their biases
	// cancel, which seeded repetitions confirm (pulls_test.go).
	saved := append([]float64(nil), ws.r...)
	clear(ws.r)
	x := ws.dense()
	copy(ws.r, saved)
	// U columns per string (per-row or full-covariance weights).
	u := ws.influence(theta)
	s := make([]float64, np*np)
	est.Cov.Do(func(i, j int, v float64) {
		ci, cj := u[int32(i)], u[int32(j)]
		if ci == nil || cj == nil || v == 0 {
			return
		}
		for p, up := range ci {
			for q, uq := range cj {
				s[int(p)*np+int(q)] += v * up * uq
				if i != j {
					s[int(q)*np+int(p)] += v * up * uq
				}
			}
		}
	})
	// With full-covariance weights the sandwich's two parts are one
	// matrix, M^T W M (optionally without its noise inflation;
	// weighted_full.go, sandwichParts).
	if xs, ok := ws.sandwichParts(); ok {
		x, s = xs, xs
	}
	calibrated := make([]bool, np)
	for _, q := range calRows {
		calibrated[q] = true
	}
	if res.Match == nil {
		var free []int
		for q := range np {
			if !calibrated[q] {
				free = append(free, q)
			}
		}
		nf := len(free)
		xff := mat.NewDense(nf, nf, nil)
		sff := mat.NewDense(nf, nf, nil)
		for i, p := range free {
			for j, q := range free {
				xff.Set(i, j, x[p*np+q])
				sff.Set(i, j, s[p*np+q])
			}
		}
		var lu mat.LU
		lu.Factorize(xff)
		if c := lu.Cond(); c > 1e14 || math.IsInf(c, 0) {
			return fmt.Errorf("the constraints restricted to the free parameters are singular (condition %.3g)", c)
		}
		var a, cov mat.Dense
		if err := lu.SolveTo(&a, false, sff); err != nil {
			return err
		}
		// cov = X^-1 S X^-1 = (X^-1 (X^-1 S)^T)^T, X symmetric.
		if err := lu.SolveTo(&cov, false, a.T()); err != nil {
			return err
		}
		for i, p := range free {
			res.StdErr[p] = math.Sqrt(max(cov.At(i, i), 0))
		}
		res.freeCov, res.free = &cov, free
		return nil
	}
	// Thermal match: pseudo-inverse of X off the span of the basis.
	low, err := denseLowest(x, np, np)
	if err != nil {
		return err
	}
	proj := make([][]float64, len(basis))
	for i, b := range basis {
		proj[i] = append([]float64(nil), b...)
	}
	orthonormalise(proj)
	pinv := mat.NewDense(np, np, nil)
	for j, v := range low.vectors {
		inSpan := 0.0
		for _, b := range proj {
			o := floats.Dot(b, v)
			inSpan += o * o
		}
		if inSpan > 0.5 || low.values[j] <= 0 {
			continue
		}
		for p := range np {
			for q := range np {
				pinv.Set(p, q, pinv.At(p, q)+v[p]*v[q]/low.values[j])
			}
		}
	}
	sd := mat.NewDense(np, np, s)
	var tmp, cov mat.Dense
	tmp.Mul(pinv, sd)
	cov.Mul(&tmp, pinv)
	// The matched multipliers: theta = sum_j a_j basis_j with
	// a = aPart + null t and Cov(t) from the match.
	m := res.Match
	dirs := matchedDirections(null, basis, np)
	// The direction's own noise moves the matched multipliers too
	// (directionNoise): its largest error directions are replaced by
	// their correlated versions.
	var g, vs [][]float64
	var sig []float64
	if m.evaluate != nil {
		if g, vs, sig, err = m.directionNoise(sys, theta, &cov, dirs); err != nil {
			return fmt.Errorf("direction noise through the thermal match: %w", err)
		}
		if !m.directionComplete {
			res.Warnings = append(res.Warnings, fmt.Sprintf("the time budget (%v) let the thermal match propagate only %d of the learned direction's error directions (%.0f%% of its variance; two Gibbs-state evaluations each): the consistency test is inconclusive, and the error bars leave out the correlation of the matched scale with the other directions",
				directionNoiseBudget, m.DirectionRank, 100*m.DirectionShare))
		}
	}
	res.matchCov = &matchCovariance{cov: &cov, g: g, v: vs, sigma: sig, dirs: dirs, tCov: m.tCov}
	for p := range np {
		v := cov.At(p, p)
		for j := range g {
			v += g[j][p]*g[j][p] - sig[j]*sig[j]*vs[j][p]*vs[j][p]
		}
		v += matchedVariance(dirs, m.tCov, p)
		res.StdErr[p] = math.Sqrt(max(v, 0))
		if calibrated[p] {
			res.StdErr[p] = 0
		}
	}
	return nil
}

// orthonormalise applies Gram-Schmidt to vs in place.
func orthonormalise(vs [][]float64) {
	for i := range vs {
		for j := range i {
			floats.AddScaled(vs[i], -floats.Dot(vs[j], vs[i]), vs[j])
		}
		if n := floats.Norm(vs[i], 2); n > 0 {
			floats.Scale(1/n, vs[i])
		}
	}
}

// matchedDirections returns the parameter-space directions of the
// thermal match's free multipliers: direction j is sum_i null[j][i]
// basis[i], over np parameters.
func matchedDirections(null, basis [][]float64, np int) [][]float64 {
	dirs := make([][]float64, len(null))
	for j, nv := range null {
		dirs[j] = make([]float64, np)
		for i, b := range basis {
			floats.AddScaled(dirs[j], nv[i], b)
		}
	}
	return dirs
}

// matchedVariance is parameter p's share of the matched multipliers'
// covariance tCov along dirs.
func matchedVariance(dirs [][]float64, tCov mat.Symmetric, p int) float64 {
	var v float64
	for i := range dirs {
		for j := range dirs {
			v += dirs[i][p] * tCov.At(i, j) * dirs[j][p]
		}
	}
	return v
}
