package stationary

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"warmfit/cluster"
	"warmfit/fit"
)

// Evaluator returns the Gibbs-state expectation of every term (aligned
// with System.Terms) for coefficients lambda at inverse temperature
// beta: the linked-cluster expansion where it converges, exact patches
// otherwise, or dense exact diagonalisation for small systems.
type Evaluator func(lambda []float64, beta float64) ([]float64, error)

// Gauge is what the user knows beyond the constraints, used to fix the
// scale and the invisible directions.
type Gauge struct {
	// Calibrated maps parameter names (System.Params().Names: a term key
	// such as "ZZ 0 1", or a group name) to known values.
	Calibrated map[string]float64
	// Beta is the known inverse temperature (0 when unknown). With
	// Evaluate it fixes what the calibrations leave open by a thermal
	// match: the free multipliers of the learned directions are chosen
	// so that the Gibbs state reproduces the measured term expectations.
	Beta     float64
	Evaluate Evaluator
	// Response, when set, gives the Jacobian of Evaluate in one pass
	// (the expansion's or the exact state's linear response): the
	// direction's noise is then propagated through the match along every
	// error direction at the cost of one evaluation, instead of two
	// evaluations per direction within a time budget.
	Response ResponseEvaluator
}

// ResponseEvaluator returns d<E_k>/d lambda_j of the Gibbs state at
// lambda and beta (terms × terms, aligned with System.Terms): sparse for
// the expansion, whose response vanishes beyond its clusters.
type ResponseEvaluator func(lambda []float64, beta float64) (*cluster.SparseSym, error)

// Result is a learned Hamiltonian.
type Result struct {
	// Lambda are the coefficients (aligned with System.Terms), Theta the
	// parameters and StdErr their delta-method standard errors (NaN when
	// not computed; zero for calibrated parameters).
	Lambda, Theta, StdErr []float64
	// Fixed says in words how the scale and the invisible directions
	// were fixed (calibrations, thermal match, tied groups).
	Fixed string
	// Match is the thermal match when one was made (nil otherwise).
	Match *ThermalMatch
	// ErrorScale is the factor the error bars were scaled by because the
	// thermal match's chi² (direction noise included) exceeded its
	// degrees of freedom (1 when not scaled).
	ErrorScale float64
	// Warnings are problems the caller must show (for example error bars
	// not computed).
	Warnings  []string
	Direction *Direction
	// ErrorMethod says how StdErr was computed: "dense" (the sandwich
	// with dense matrices, up to Options.DenseLimit parameters),
	// "sparse" (conjugate gradients and probing, beyond it), or "" when
	// not computed.
	ErrorMethod string

	// freeCov is the delta-method covariance of the parameters free[i]
	// when calibrations fix every multiplier (errorBars; nil otherwise):
	// the planner (PlanShots) projects it onto the direction's errors.
	freeCov *mat.Dense
	free    []int
	// matchCov holds the parts of the covariance with a thermal match
	// (errorBars; nil otherwise), for the planner's scale error.
	matchCov *matchCovariance
}

// ErrUnderdetermined is returned (wrapped) when the gauge leaves a
// direction open.
var ErrUnderdetermined = errors.New("stationary: the scale or an invisible direction is not fixed")

// Fix turns a direction into coefficients using the gauge, and computes
// delta-method error bars on the constraint noise: with dense matrices up
// to Options.DenseLimit parameters, by deflated conjugate gradients and
// probing beyond (sparseErrorBars; Result.ErrorMethod says which).
func Fix(sys *System, est *fit.Estimates, d *Direction, g Gauge, opt Options) (*Result, error) {
	opt = opt.withDefaults()
	p := sys.params
	np := p.NumParams()
	// The unknown part: the direction and every invisible direction.
	basis := [][]float64{d.Theta}
	names := []string{"scale"}
	for _, inv := range d.Invisible {
		basis = append(basis, inv.Vector)
		names = append(names, inv.Name)
	}
	nb := len(basis)
	index := map[string]int{}
	for q, name := range p.Names {
		index[name] = q
	}
	var calRows []int
	var calVals []float64
	calNames := make([]string, 0, len(g.Calibrated))
	for name := range g.Calibrated {
		calNames = append(calNames, name)
	}
	sort.Strings(calNames)
	for _, name := range calNames {
		q, ok := index[name]
		if !ok {
			return nil, fmt.Errorf("stationary: calibrated coefficient %q is not a parameter of the model (want a term key such as %q or a group name)", name, p.Names[0])
		}
		calRows = append(calRows, q)
		calVals = append(calVals, g.Calibrated[name])
	}
	// a = aPart + null t: aPart meets the calibrations (least squares),
	// null spans the multipliers they leave free.
	aPart := make([]float64, nb)
	var null [][]float64
	if len(calRows) > 0 {
		c := mat.NewDense(len(calRows), nb, nil)
		for i, q := range calRows {
			for j, b := range basis {
				c.Set(i, j, b[q])
			}
		}
		var svd mat.SVD
		if !svd.Factorize(c, mat.SVDFull) {
			return nil, errors.New("stationary: SVD of the calibration conditions failed")
		}
		sv := svd.Values(nil)
		var u, v mat.Dense
		svd.UTo(&u)
		svd.VTo(&v)
		rank := 0
		for _, s := range sv {
			if s > 1e-3*sv[0] {
				rank++
			}
		}
		for j := range rank {
			coef := mat.Col(nil, j, &u)
			f := floats.Dot(coef, calVals) / sv[j]
			for i := range nb {
				aPart[i] += f * v.At(i, j)
			}
		}
		for j := rank; j < nb; j++ {
			null = append(null, mat.Col(nil, j, &v))
		}
	} else {
		for j := range nb {
			e := make([]float64, nb)
			e[j] = 1
			null = append(null, e)
		}
	}
	res := &Result{Direction: d}
	var fixed []string
	if len(calRows) > 0 {
		fixed = append(fixed, fmt.Sprintf("calibrated %s", strings.Join(calNames, ", ")))
	}
	if p.Tied() {
		fixed = append(fixed, fmt.Sprintf("tied groups (%d parameters for %d terms)", np, p.NumTerms()))
	}
	theta := make([]float64, np)
	combine := func(a []float64) []float64 {
		clear(theta)
		for j, b := range basis {
			floats.AddScaled(theta, a[j], b)
		}
		return theta
	}
	a := aPart
	open := make([]string, 0, len(null))
	for _, nv := range null {
		open = append(open, names[floats.MaxIdx(absAll(nv))])
	}
	if len(null) > 0 {
		if g.Beta <= 0 || g.Evaluate == nil {
			return nil, fmt.Errorf("%w: %d of %d unknown multipliers open (%s); give %d more calibrated coefficient(s), or a known beta for a thermal match",
				ErrUnderdetermined, len(null), nb, strings.Join(open, "; "), len(null))
		}
		m, err := thermalMatch(sys, est, g, aPart, null, combine)
		if err != nil {
			return nil, err
		}
		a = m.a
		res.Match = m
		fixed = append(fixed, fmt.Sprintf("thermal match at known beta %g (%d free multiplier(s): %s)",
			g.Beta, len(null), strings.Join(open, ", ")))
	}
	res.Theta = append([]float64(nil), combine(a)...)
	res.Lambda = make([]float64, p.NumTerms())
	p.Expand(res.Lambda, res.Theta)
	res.Fixed = strings.Join(fixed, "; ")
	if len(d.Invisible) > 0 {
		invNames := make([]string, len(d.Invisible))
		for i, inv := range d.Invisible {
			invNames[i] = inv.Name
		}
		res.Fixed += fmt.Sprintf("; invisible directions fixed with the scale: %s", strings.Join(invNames, "; "))
	}
	res.StdErr = make([]float64, np)
	errorBars, method := res.errorBars, "dense"
	// Full-covariance weights (weighted_full.go) exist only up to
	// fullRowLimit rows, hence for dense-sized systems; the sparse path
	// uses per-row weights.
	if np > opt.DenseLimit && !d.ws.full {
		errorBars, method = res.sparseErrorBars, "sparse"
	}
	if err := errorBars(sys, est, calRows, basis, null); err != nil {
		res.Warnings = append(res.Warnings, method+" error bars not computed: "+err.Error())
		for i := range res.StdErr {
			res.StdErr[i] = math.NaN()
		}
		return res, nil
	}
	res.ErrorMethod = method
	// A thermal match whose chi² (the direction's noise included) exceeds
	// its degrees of freedom means the error model is too small: scale the
	// error bars by sqrt(chi²/dof) (the scale factor of the Particle Data
	// Group's averages, PDG Review "Introduction", section on
	// inconsistent data). Seeded repetitions on 3x3 XXZ at high
	// temperature showed pull rms 3 with chi²/dof 4.3 unscaled.
	res.ErrorScale = 1
	if m := res.Match; m != nil && m.DirectionRank > 0 && m.DOF > 0 {
		if f := m.Chi2Direction / float64(m.DOF); f > 1 {
			res.ErrorScale = math.Sqrt(f)
			floats.Scale(res.ErrorScale, res.StdErr)
		}
	}
	return res, nil
}
