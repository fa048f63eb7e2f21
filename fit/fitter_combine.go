package fit

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// Propagate returns the first-order change of Theta for a change de of
// the data values (aligned with the terms): dtheta = (A^T R A)^{-1} A^T de,
// the map whose sandwich with the data covariance gives the error bars.
// Another estimator that uses the same shots (package fit/stationary)
// needs it for the correlation between its estimate and this one. It is
// available for converged fits with error bars and every term measured,
// before ScaleEnergy; otherwise it returns an error saying why.
func (r *Result) Propagate(de []float64) ([]float64, error) {
	if len(de) != r.Params.NumTerms() {
		panic(fmt.Sprintf("fit: Propagate: %d data changes for %d terms", len(de), r.Params.NumTerms()))
	}
	if r.propagate == nil {
		return nil, errors.New("fit: the first-order map from data to parameters is not available (no error bars, exact data, terms fitted by moment matching, or an energy scale applied)")
	}
	return r.propagate(de)
}

// WithParameters returns a copy of r whose parameters are another
// estimate theta with covariance cov (np×np), for example the
// combination of this fit with the stationarity constraints: the
// coefficients, error bars, significance flags and the covariance that
// ScaleEnergy uses are replaced, note is added to the Notes, and
// everything else (order, convergence, series, warnings, Expect at the
// expansion's solution) still describes the expansion fit. theta and
// cov are copied.
func (r *Result) WithParameters(theta []float64, cov *mat.SymDense, note string) (*Result, error) {
	np := r.Params.NumParams()
	if len(theta) != np || cov.SymmetricDim() != np {
		panic(fmt.Sprintf("fit: WithParameters: %d parameters and a %d×%d covariance for %d parameters", len(theta), cov.SymmetricDim(), cov.SymmetricDim(), np))
	}
	se := make([]float64, np)
	for q := range np {
		v := cov.At(q, q)
		if !(v >= 0) || math.IsInf(v, 0) || math.IsNaN(theta[q]) || math.IsInf(theta[q], 0) {
			return nil, fmt.Errorf("fit: parameter %d of the replacement estimate is %v with variance %v", q, theta[q], v)
		}
		se[q] = math.Sqrt(v)
	}
	out := *r
	out.Theta = slices.Clone(theta)
	out.ThetaStderr = se
	out.Coeffs = make([]float64, r.Params.NumTerms())
	r.Params.Expand(out.Coeffs, out.Theta)
	out.Terms = slices.Clone(r.Terms)
	for k := range out.Terms {
		out.Terms[k].Sites = slices.Clone(r.Terms[k].Sites)
		out.Terms[k].Coeff = out.Coeffs[k]
		out.Terms[k].Stderr, out.Terms[k].HasStderr = se[r.Params.Of[k]], true
	}
	c := mat.NewSymDense(np, nil)
	c.CopySym(cov)
	out.covColumn = func(q int) ([]float64, error) { return mat.Col(nil, q, c), nil }
	out.propagate = nil
	if r.Significance != nil {
		out.Significance = NewSignificance(out.Theta, se, r.Significance.Q)
	}
	out.Notes = append(slices.Clone(r.Notes), note)
	return &out, nil
}

// ReportEstimator records, in the report, which estimator produced the
// coefficients when a caller chose among several, and why.
type ReportEstimator struct {
	// Method is "expansion", "combined" (the expansion fit combined with
	// the stationarity constraints) or another caller's name.
	Method string `json:"method"`
	// Reason says in words why this estimator was used.
	Reason string `json:"reason"`
	// Combination is the caller's record of the combination (its
	// consistency test and weights), when one was made.
	Combination json.RawMessage `json:"combination,omitempty"`
}
