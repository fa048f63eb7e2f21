package stationary

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"warmfit/fit"
)

// ExpansionEstimate is the maximum-entropy fit of package fit (the
// expansion) in the form Combine needs: its parameters, aligned with
// System.Params, and its first-order map from the term data to them
// (fit.Result.Propagate), so that the correlation between the two
// estimators, which use the same shots, is computed rather than guessed.
type ExpansionEstimate struct {
	Theta []float64
	// Propagate maps a change of the term expectations (aligned with
	// System.Terms) to the first-order change of Theta.
	Propagate func(de []float64) ([]float64, error)
	// Systematic holds standard errors added to the parameters of the
	// expansion, independent of the shots: their truncation errors where
	// the series has not converged (fit.Truncation.ParamError); nil
	// where it is exact or converged.
	Systematic []float64
}

// CombineOptions tune Combine. The zero value gives the defaults.
type CombineOptions struct {
	// Alpha is the p-value of the consistency test below which the two
	// estimators are called inconsistent (default 1e-3).
	Alpha float64
	// MaxEntries bounds the dense influence matrices (parameters times
	// strings; default 2e7, about 160 MB each: several are held at once).
	MaxEntries int
}

// Combination is the expansion fit combined with the stationarity
// constraints.
type Combination struct {
	// Theta and Cov are the combined parameters and their covariance
	// (first-order delta method, correlations from shared shots
	// included); StdErr is the square root of its diagonal.
	Theta  []float64
	Cov    *mat.SymDense
	StdErr []float64
	// ExpansionStdErr are the error bars of the expansion alone on the
	// same covariance model (its delta method on the strings' covariance).
	ExpansionStdErr []float64
	// Chi2 is the consistency test: the components of the expansion's
	// estimate off the learned direction, which stationarity says vanish,
	// weighted by the inverse of their covariance (both estimators'
	// noise and their correlation), with DOF = the number of such
	// components (parameters - 1 - invisible directions) and P its
	// upper-tail probability. A small P means the expansion is biased
	// (not converged) or stationarity is (too little signal, or a state
	// that is not stationary); Consistent is P >= Alpha.
	Chi2       float64
	DOF        int
	P          float64
	Consistent bool
	// VarianceRatio is the median over parameters of the combined
	// variance over the expansion's: how much the constraints add.
	VarianceRatio float64
}

// Combine combines the expansion fit exp with the stationarity direction
// d (from Solve on the same estimates est) by generalised least squares.
//
// Stationarity fixes the direction u of the parameters; the scale and
// the invisible directions it leaves open. Its statement about the
// expansion's estimate theta_e is therefore that the components
// delta = V^T theta_e vanish, V an orthonormal basis of the directions
// stationarity resolves (orthogonal to u and to every invisible
// direction). Both theta_e and the learned u are smooth functions of the
// same string estimates m, so to first order
//
//	d theta_e = L_e dm        (L_e: the expansion's Propagate)
//	d delta   = V^T (L_e + G^+ U) dm
//
// with G the noise-weighted normal matrix of the constraints at
// theta = (u . theta_e) u and U the influence of the strings on its
// stationarity condition (the map Fix uses for its error bars). With
// Cov(m) from the shots this gives the joint covariance of (theta_e,
// delta), cross-correlation included, and the best linear unbiased
// combination is the regression of theta_e on delta:
//
//	theta_c = theta_e - C_ed C_dd^{-1} delta,   Cov(theta_c) = C_ee - C_ed C_dd^{-1} C_de,
//
// which is never less precise than the expansion alone (in the linear
// regime) and keeps the expansion's scale: the combination needs no
// thermal match. chi² = delta^T C_dd^{-1} delta tests the consistency of
// the two (Combination.Consistent); where it fails, one of them is
// biased and the combination must not be used (the caller decides which
// one to keep). Combine returns an error when the dense matrices would
// exceed CombineOptions.MaxEntries or a covariance is singular.
func Combine(sys *System, est *fit.Estimates, d *Direction, exp ExpansionEstimate, opt CombineOptions) (*Combination, error) {
	if opt.Alpha <= 0 {
		opt.Alpha = 1e-3
	}
	if opt.MaxEntries <= 0 {
		opt.MaxEntries = 2e7
	}
	ws := d.ws
	np, ns, nt := ws.np, len(sys.Strings), len(sys.terms)
	if len(exp.Theta) != np {
		panic(fmt.Sprintf("stationary: Combine: %d expansion parameters for %d", len(exp.Theta), np))
	}
	if np*ns > opt.MaxEntries {
		return nil, fmt.Errorf("stationary: combining %d parameters over %d strings needs %d dense entries, above the limit %d", np, ns, np*ns, opt.MaxEntries)
	}
	u := d.Theta
	scale := floats.Dot(u, exp.Theta)
	if !(math.Abs(scale) > 0) {
		return nil, errors.New("stationary: the expansion's estimate is orthogonal to the learned direction")
	}
	thetaRef := make([]float64, np)
	floats.AddScaled(thetaRef, scale, u)

	// The expansion's influence L_e (np × ns): nonzero only in the
	// columns of the terms' own strings.
	le := mat.NewDense(np, ns, nil)
	de := make([]float64, nt)
	for k := range nt {
		clear(de)
		de[k] = 1
		col, err := exp.Propagate(de)
		if err != nil {
			return nil, err
		}
		j := sys.TermString[k]
		for p := range np {
			le.Set(p, j, le.At(p, j)+col[p])
		}
	}

	g, uInf := ws.influenceAt(thetaRef, ns)
	// V: the directions stationarity resolves, orthogonal to u and to the
	// invisible directions; G^+ on their span.
	excl := [][]float64{append([]float64(nil), u...)}
	for _, inv := range d.Invisible {
		excl = append(excl, append([]float64(nil), inv.Vector...))
	}
	orthonormalise(excl)
	proj := mat.NewDense(np, np, nil)
	for i := range np {
		proj.Set(i, i, 1)
	}
	for _, v := range excl {
		for i := range np {
			for j := range np {
				proj.Set(i, j, proj.At(i, j)-v[i]*v[j])
			}
		}
	}
	var pg, pgp mat.Dense
	pg.Mul(proj, g)
	pgp.Mul(&pg, proj)
	sym := mat.NewSymDense(np, nil)
	for i := range np {
		for j := i; j < np; j++ {
			sym.SetSym(i, j, (pgp.At(i, j)+pgp.At(j, i))/2)
		}
	}
	var es mat.EigenSym
	if !es.Factorize(sym, true) {
		return nil, errors.New("stationary: eigendecomposition of the constraint normal matrix failed")
	}
	vals := es.Values(nil)
	var vecs mat.Dense
	es.VectorsTo(&vecs)
	top := floats.Max(vals)
	var keep []int
	for j, v := range vals {
		if v > 1e-12*top {
			keep = append(keep, j)
		}
	}
	r := len(keep)
	if want := np - len(excl); r > want {
		// The excluded span has eigenvalue zero exactly; rounding can
		// lift it: keep the largest.
		keep = keep[r-want:]
		r = want
	}
	if r == 0 {
		return nil, errors.New("stationary: the constraints resolve no direction to combine")
	}
	v := mat.NewDense(np, r, nil)
	ginv := mat.NewDense(np, np, nil)
	for c, j := range keep {
		col := mat.Col(nil, j, &vecs)
		v.SetCol(c, col)
		for p := range np {
			for q := range np {
				ginv.Set(p, q, ginv.At(p, q)+col[p]*col[q]/vals[j])
			}
		}
	}
	// L = L_e + G^+ U, B = V^T L.
	var l mat.Dense
	l.Mul(ginv, uInf)
	l.Add(&l, le)
	var b mat.Dense
	b.Mul(v.T(), &l)

	// Y = [L_e; B] ((np+r) × ns); T = Cov(m) Y^T column by column.
	ny := np + r
	y := mat.NewDense(ny, ns, nil)
	y.Slice(0, np, 0, ns).(*mat.Dense).Copy(le)
	y.Slice(np, ny, 0, ns).(*mat.Dense).Copy(&b)
	tmat := mat.NewDense(ns, ny, nil)
	row := make([]float64, ns)
	out := make([]float64, ns)
	for i := range ny {
		mat.Row(row, i, y)
		est.Cov.MulVec(out, row)
		tmat.SetCol(i, out)
	}
	var joint mat.Dense
	joint.Mul(y, tmat)
	delta := mat.NewVecDense(r, nil)
	delta.MulVec(v.T(), mat.NewVecDense(np, exp.Theta))
	cddOf := func() *mat.SymDense {
		c := mat.NewSymDense(r, nil)
		for i := range r {
			for j := i; j < r; j++ {
				c.SetSym(i, j, (joint.At(np+i, np+j)+joint.At(np+j, np+i))/2)
			}
		}
		return c
	}
	var ch mat.Cholesky
	if !ch.Factorize(cddOf()) {
		return nil, errors.New("stationary: the covariance of the expansion's components off the learned direction is not positive definite")
	}
	var w mat.VecDense
	if err := ch.SolveVecTo(&w, delta); err != nil {
		return nil, err
	}
	// The consistency test counts the shots' noise only: a systematic
	// error as large as a truncation estimate would hide the very bias
	// the test is for.
	res := &Combination{DOF: r}
	res.Chi2 = mat.Dot(delta, &w)
	res.P = distuv.ChiSquared{K: float64(r)}.Survival(res.Chi2)
	res.Consistent = res.P >= opt.Alpha

	// The expansion's systematic error, for the estimate and its error
	// bars: S = diag(s²) on theta_e, hence S V on its covariance with
	// delta = V^T theta_e and V^T S V on delta's.
	if exp.Systematic != nil {
		if len(exp.Systematic) != np {
			panic(fmt.Sprintf("stationary: Combine: %d systematic errors for %d parameters", len(exp.Systematic), np))
		}
		for p, sp := range exp.Systematic {
			s2 := sp * sp
			joint.Set(p, p, joint.At(p, p)+s2)
			for c := range r {
				joint.Set(p, np+c, joint.At(p, np+c)+s2*v.At(p, c))
				joint.Set(np+c, p, joint.At(np+c, p)+s2*v.At(p, c))
				for c2 := range r {
					joint.Set(np+c, np+c2, joint.At(np+c, np+c2)+s2*v.At(p, c)*v.At(p, c2))
				}
			}
		}
		if !ch.Factorize(cddOf()) {
			return nil, errors.New("stationary: the covariance of the expansion's components off the learned direction is not positive definite")
		}
		if err := ch.SolveVecTo(&w, delta); err != nil {
			return nil, err
		}
	}
	cee := joint.Slice(0, np, 0, np)
	ced := joint.Slice(0, np, np, ny)

	var shift mat.VecDense
	shift.MulVec(ced, &w)
	res.Theta = make([]float64, np)
	for p := range np {
		res.Theta[p] = exp.Theta[p] - shift.AtVec(p)
	}
	var x, red mat.Dense // x = C_dd^{-1} C_de, red = C_ed x
	if err := ch.SolveTo(&x, ced.T()); err != nil {
		return nil, err
	}
	red.Mul(ced, &x)
	res.Cov = mat.NewSymDense(np, nil)
	res.StdErr = make([]float64, np)
	res.ExpansionStdErr = make([]float64, np)
	ratios := make([]float64, 0, np)
	for p := range np {
		for q := p; q < np; q++ {
			c := (cee.At(p, q)+cee.At(q, p))/2 - (red.At(p, q)+red.At(q, p))/2
			res.Cov.SetSym(p, q, c)
		}
		ve := cee.At(p, p)
		vc := max(res.Cov.At(p, p), 0)
		res.StdErr[p] = math.Sqrt(vc)
		res.ExpansionStdErr[p] = math.Sqrt(max(ve, 0))
		if ve > 0 {
			ratios = append(ratios, vc/ve)
		}
	}
	sort.Float64s(ratios)
	if len(ratios) > 0 {
		res.VarianceRatio = ratios[len(ratios)/2]
	}
	return res, nil
}

// influenceAt returns, at parameters theta (not normalised), the normal
// matrix G = sum_a w_a M_a M_a^T (no noise correction, no penalty) and
// the influence U[p, j] = sum_a w_a M_ap d r_a/d m_j of the string
// estimates on the stationarity condition G theta = 0 (np × strings),
// with the weights w_a = 1/Var(r_a(theta)); ns is the number of strings. The weights, residuals and
// settings of ws are restored.
func (ws *weighted) influenceAt(theta []float64, ns int) (g, u *mat.Dense) {
	np := ws.np
	savedW, savedR := append([]float64(nil), ws.w...), append([]float64(nil), ws.r...)
	savedCorr, savedPen := ws.corr, ws.penalty
	savedFull, savedWinv := ws.haveFull, ws.winv
	defer func() {
		copy(ws.w, savedW)
		copy(ws.r, savedR)
		ws.corr, ws.penalty = savedCorr, savedPen
		ws.haveFull, ws.winv = savedFull, savedWinv
	}()
	ws.reweight(theta)
	ws.corr, ws.penalty = noCorrection, nil
	g = mat.NewDense(np, np, ws.dense())
	u = mat.NewDense(np, ns, nil)
	// Per-row or full-covariance weights, as G (weighted_full.go).
	for j, col := range ws.influence(theta) {
		for p, v := range col {
			u.Set(int(p), int(j), v)
		}
	}
	return g, u
}

// Choice names the estimate a caller of Combine should use.
type Choice string

const (
	UseCombined   Choice = "combined"   // the two are consistent
	UseExpansion  Choice = "expansion"  // inconsistent, the expansion is trusted (converged or exact)
	UseStationary Choice = "stationary" // inconsistent, the expansion is not trusted: it is dropped as biased
)

// Choose says which estimate to use and why: the combination when the
// consistency test passes; otherwise the expansion when it is trusted
// (its series converged, or its order covers the lattice, so it is
// exact and stationarity is the one off: weak signal), else stationarity
// alone (the expansion is biased: not converged at this temperature).
func (c *Combination) Choose(expansionTrusted bool) (Choice, string) {
	test := fmt.Sprintf("consistency chi2 %.4g for %d dof (p = %.3g)", c.Chi2, c.DOF, c.P)
	switch {
	case c.Consistent:
		return UseCombined, fmt.Sprintf("the expansion and the stationarity constraints agree (%s); the combination's median variance is %.2g of the expansion's", test, c.VarianceRatio)
	case expansionTrusted:
		return UseExpansion, fmt.Sprintf("the expansion and the stationarity constraints disagree (%s) although the expansion is trusted: the stationarity direction is off by more than its error bars (too little signal, or a state that is not stationary); the expansion is kept", test)
	}
	return UseStationary, fmt.Sprintf("the expansion and the stationarity constraints disagree (%s) and the expansion is not trusted at this order: it is biased (not converged) and dropped; stationarity alone is used", test)
}
