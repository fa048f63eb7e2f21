package fit

import (
	"encoding/json"
	"math"
)

// Report is the "fit" object written into a fitted model file: what was
// done, how far it can be trusted, and every warning. Optional numbers are
// pointers, omitted when undefined, so that no NaN or infinity is ever
// written.
type Report struct {
	Converged     bool      `json:"converged"`
	Reason        string    `json:"reason,omitempty"`
	Iterations    int       `json:"iterations"`
	AllIterations int       `json:"iterations_all_orders"`
	Evaluations   int       `json:"evaluations"`
	GradientSigma *float64  `json:"gradient_sigma,omitempty"` // max |gradient| / data noise
	GradientAbs   *float64  `json:"gradient_abs,omitempty"`   // exact data: max mean residual
	Tolerance     float64   `json:"tolerance"`
	Order         int       `json:"order"`
	OrderMode     OrderMode `json:"order_selection"`
	// OrderByBudget is true when the wall-clock budget, not the data or
	// the work limit, stopped the automatic order: another machine may
	// choose another order (the warnings say so).
	OrderByBudget bool    `json:"order_stopped_by_budget,omitempty"`
	Beta          float64 `json:"beta"`
	BetaKnown     bool    `json:"beta_known"`
	// BetaSource says where Beta comes from.
	BetaSource   BetaSource         `json:"beta_source"`
	EnergyScale  *ReportEnergyScale `json:"energy_scale,omitempty"`
	CoeffMeaning CoeffMeaning       `json:"coefficients"`
	Terms        int                `json:"terms"`
	Parameters   int                `json:"parameters"`
	DataKind     DataKind           `json:"data,omitempty"`
	DataFile     string             `json:"data_file,omitempty"`
	ExactData    bool               `json:"exact_data"`
	// Unmeasured counts terms without data fitted through their group.
	Unmeasured  int    `json:"unmeasured_terms,omitempty"`
	ErrorMethod string `json:"error_bars,omitempty"`
	// ResponseOrder is the order of the response the error bars use
	// (the fit's order, or one less when the exact one was too costly).
	ResponseOrder int `json:"error_bars_response_order,omitempty"`

	Truncation   ReportTruncation    `json:"truncation"`
	Chi2         *ReportChi2         `json:"chi2,omitempty"`
	Threshold    ReportThreshold     `json:"threshold"`
	Series       ReportSeries        `json:"series"`
	Significance *ReportSignificance `json:"significance,omitempty"`
	Truth        *ReportTruth        `json:"truth,omitempty"`
	// Estimator says which estimator produced the coefficients and why,
	// when the caller chose among several (nil: the expansion fit alone).
	Estimator *ReportEstimator `json:"estimator,omitempty"`

	Warnings       []string `json:"warnings"`
	Notes          []string `json:"notes,omitempty"`
	ElapsedSeconds float64  `json:"elapsed_seconds"`
}

// ReportEnergyScale is an EnergyScale in the report.
type ReportEnergyScale struct {
	From       string   `json:"from"` // the calibration, as a person writes it
	Term       string   `json:"term,omitempty"`
	Value      float64  `json:"value,omitempty"`
	Beta       float64  `json:"beta"`
	BetaStderr *float64 `json:"beta_stderr,omitempty"`
	Method     string   `json:"method"`
	// TrueBeta and BetaPull compare beta with the truth's (with --truth).
	TrueBeta *float64 `json:"true_beta,omitempty"`
	BetaPull *float64 `json:"beta_pull,omitempty"`
}

// ReportTruncation is Truncation in the report.
type ReportTruncation struct {
	Known     bool      `json:"known"`
	Exact     bool      `json:"exact"`
	Orders    []int     `json:"orders"`
	Steps     []float64 `json:"steps"`
	Error     *float64  `json:"error,omitempty"`
	StatError float64   `json:"statistical_error"`
	Target    float64   `json:"target"`
	OK        bool      `json:"ok"`
	MaxRatio  *float64  `json:"max_ratio,omitempty"`
	// OverStderr counts the parameters whose truncation estimate exceeds
	// their stderr; Rates are the two-order decay rates extrapolated.
	OverStderr int       `json:"over_stderr"`
	Rates      []float64 `json:"decay_rates,omitempty"`
}

// ReportChi2 is the goodness of fit of tied parameters.
type ReportChi2 struct {
	Value  float64 `json:"value"`
	Dof    int     `json:"dof"`
	PerDof float64 `json:"per_dof"`
	P      float64 `json:"p_value"`
	Note   string  `json:"note"`
}

// ReportThreshold is the sufficient-temperature bound at the solution.
type ReportThreshold struct {
	Degree    int      `json:"degree"`
	MaxCoeff  float64  `json:"max_coeff"`
	Beta      *float64 `json:"beta_bound,omitempty"` // omitted when infinite
	Satisfied bool     `json:"satisfied"`
}

// ReportSeries summarises the convergence of the term expectations.
type ReportSeries struct {
	Terms     int    `json:"terms"`
	Untrusted int    `json:"untrusted"`
	Criterion string `json:"criterion"`
	// UntrustedTerms names the first maxListed untrusted terms.
	UntrustedTerms []string `json:"untrusted_terms,omitempty"`
}

// maxListed bounds the terms named in a report list.
const maxListed = 20

// ReportSignificance summarises structure learning.
type ReportSignificance struct {
	Method      string  `json:"method"`
	Q           float64 `json:"q"`
	Significant int     `json:"significant"`
	Parameters  int     `json:"parameters"`
	CutoffP     float64 `json:"cutoff_p"`
}

// ReportTruth is a TruthComparison in the report.
type ReportTruth struct {
	File string  `json:"file,omitempty"`
	L2   float64 `json:"l2"`
	Linf float64 `json:"linf"`
	// LargestErrorTerm has the largest |fit - truth| (Linf),
	// LargestPullTerm the largest |z| (MaxAbsZ).
	LargestErrorTerm string   `json:"largest_error_term,omitempty"`
	LargestPullTerm  string   `json:"largest_pull_term,omitempty"`
	MaxAbsZ          *float64 `json:"max_abs_z,omitempty"`
	RMSZ             *float64 `json:"rms_z,omitempty"`
	Missing          int      `json:"missing_terms"`
	MissingLinf      float64  `json:"missing_linf,omitempty"`
	// Z holds the z-scores (fit - truth)/stderr keyed by term
	// (lattice.TermKey, as "ZZ 0 1"); null where the stderr is zero.
	Z map[string]*float64 `json:"z_scores,omitempty"`
	// Scale is the factor the true coefficients were multiplied by
	// before the comparison (the truth's beta when the fit learnt
	// beta*lambda), omitted when 1.
	Scale float64 `json:"truth_scale,omitempty"`
}

func finitePtr(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

// BetaSource says where the beta of a Report comes from.
type BetaSource string

// Sources of a Report's beta.
const (
	BetaGiven           BetaSource = "given"        // by the caller (Problem.Beta)
	BetaFromEnergyScale BetaSource = "energy scale" // recovered by ScaleEnergy; see EnergyScale
	BetaUnknown         BetaSource = "unknown"      // 1 by convention: the coefficients are beta*lambda
)

// CoeffMeaning says what a Report's coefficients are.
type CoeffMeaning string

// Meanings of a Report's coefficients.
const (
	CoeffLambda     CoeffMeaning = "lambda"
	CoeffBetaLambda CoeffMeaning = "beta*lambda"
)

// OrderMode says how the order of a fit was chosen.
type OrderMode string

// Order modes of a Report.
const (
	OrderFixed OrderMode = "fixed" // the caller's Options.Order
	OrderAuto  OrderMode = "auto"  // raised by the fitter (Options.Order 0)
)

// NewReport builds the report of a fit. mode is OrderFixed or OrderAuto; data
// kind and file label the input; tol is the stopping tolerance used.
func NewReport(r *Result, mode OrderMode, dataKind DataKind, dataFile string, tol float64) *Report {
	rep := &Report{
		Converged:     r.Converged,
		Reason:        r.Reason,
		Iterations:    r.Iterations,
		AllIterations: r.TotalIterations,
		Evaluations:   r.Evaluations,
		Tolerance:     tol,
		Order:         r.Order,
		OrderMode:     mode,
		OrderByBudget: r.StoppedByBudget,
		Beta:          r.Beta,
		BetaKnown:     r.BetaKnown,
		CoeffMeaning:  CoeffLambda,
		Terms:         len(r.Terms),
		Parameters:    r.Params.NumParams(),
		DataKind:      dataKind,
		DataFile:      dataFile,
		ExactData:     r.Exact,
		Unmeasured:    len(r.Unmeasured),
		ErrorMethod:   r.ErrorMethod,
		ResponseOrder: r.ResponseOrder,
		Warnings:      append([]string{}, r.Warnings...),
		Notes:         r.Notes,
	}
	rep.ElapsedSeconds = math.Round(r.Elapsed.Seconds()*1000) / 1000
	rep.BetaSource = BetaGiven
	if es := r.EnergyScale; es != nil {
		rep.BetaSource = BetaFromEnergyScale
		rep.EnergyScale = &ReportEnergyScale{
			From: es.Calibration.String(), Term: es.Calibration.Term, Value: es.Calibration.Value,
			Beta: es.Beta, BetaStderr: finitePtr(es.BetaStderr), Method: es.Method,
		}
	} else if !r.BetaKnown {
		rep.BetaSource = BetaUnknown
		rep.CoeffMeaning = CoeffBetaLambda
	}
	if r.Exact {
		rep.GradientAbs = finitePtr(r.GradientAbs)
	} else {
		rep.GradientSigma = finitePtr(r.GradientSigma)
		if r.GradientAbs > 0 {
			rep.GradientAbs = finitePtr(r.GradientAbs)
		}
	}
	t := r.Truncation
	rep.Truncation = ReportTruncation{
		Known: t.Known, Exact: t.Exact, Orders: t.Orders, Steps: t.Steps,
		StatError: t.StatError, Target: t.Target, OK: t.OK,
	}
	if rep.Truncation.Orders == nil {
		rep.Truncation.Orders = []int{r.Order}
	}
	if rep.Truncation.Steps == nil {
		rep.Truncation.Steps = []float64{}
	}
	if t.Known {
		rep.Truncation.Error = finitePtr(t.Error)
	}
	if t.MaxRatio > 0 {
		rep.Truncation.MaxRatio = finitePtr(t.MaxRatio)
	}
	rep.Truncation.OverStderr = t.OverStderr
	for _, x := range t.Rates {
		if !math.IsNaN(x) && !math.IsInf(x, 0) {
			rep.Truncation.Rates = append(rep.Truncation.Rates, x)
		}
	}
	if r.Dof > 0 {
		rep.Chi2 = &ReportChi2{
			Value: r.Chi2, Dof: r.Dof, PerDof: r.Chi2 / float64(r.Dof), P: r.Chi2P,
			Note: "residuals of tied parameters weighted by the data variances (diagonal approximation: covariances between estimates ignored)",
		}
	}
	rep.Threshold = ReportThreshold{Degree: r.Bound.Degree, MaxCoeff: r.Bound.MaxCoeff, Beta: finitePtr(r.Bound.Beta), Satisfied: r.Beta < r.Bound.Beta}
	rep.Series = ReportSeries{Terms: len(r.Terms), Untrusted: len(r.Untrusted), Criterion: "estimated truncation error of <E_k> (cluster.Converge) at most 0.1 x its stderr"}
	for _, k := range r.Untrusted[:min(len(r.Untrusted), maxListed)] {
		rep.Series.UntrustedTerms = append(rep.Series.UntrustedTerms, r.Terms[k].Key())
	}
	if r.Exact {
		rep.Series.Criterion = "estimated truncation error of <E_k> (cluster.Converge) at most 1e-6 (exact data)"
	}
	if s := r.Significance; s != nil {
		rep.Significance = &ReportSignificance{
			Method:      "two-sided z = |coeff|/stderr, Benjamini-Hochberg false-discovery rate",
			Q:           s.Q,
			Significant: s.Count,
			Parameters:  len(s.Significant),
			CutoffP:     s.Cutoff,
		}
	}
	return rep
}

// SetTruth adds a comparison with the true model to the report.
func (rep *Report) SetTruth(c *TruthComparison, r *Result, file string) {
	t := &ReportTruth{File: file, L2: c.L2, Linf: c.Linf, Missing: c.Missing, MissingLinf: c.MissingLinf}
	if c.Scale != 1 {
		t.Scale = c.Scale
	}
	if c.LargestErrorTerm >= 0 {
		t.LargestErrorTerm = r.Terms[c.LargestErrorTerm].Key()
	}
	if c.LargestPullTerm >= 0 {
		t.LargestPullTerm = r.Terms[c.LargestPullTerm].Key()
	}
	if c.RMSZ > 0 {
		t.MaxAbsZ = finitePtr(c.MaxAbsZ)
		t.RMSZ = finitePtr(c.RMSZ)
		t.Z = make(map[string]*float64, len(c.Z))
		for k, z := range c.Z {
			t.Z[r.Terms[k].Key()] = finitePtr(z)
		}
	}
	rep.Truth = t
}

// JSON returns the report as a JSON object.
func (rep *Report) JSON() (json.RawMessage, error) {
	return json.Marshal(rep)
}
