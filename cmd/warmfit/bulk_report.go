package main

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"

	"gonum.org/v1/gonum/mat"

	"warmfit/fit/bulk"
)

// jsonNumber writes NaN and infinities as null: JSON has no such numbers,
// and every null is explained by a note field next to it.
type jsonNumber float64

func (v jsonNumber) MarshalJSON() ([]byte, error) {
	f := float64(v)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return strconv.AppendFloat(nil, f, 'g', -1, 64), nil
}

type bulkJSON struct {
	Command     string              `json:"command"`
	Constants   string              `json:"constants"`
	Conventions []string            `json:"conventions"`
	Inputs      []bulkInputJSON     `json:"inputs"`
	CurieWeiss  *bulkCurieWeissJSON `json:"curie_weiss"`
	Candidates  []bulkCandidateJSON `json:"candidates"`
	Ranking     []string            `json:"ranking"`
	Best        string              `json:"best"`
	Criterion   string              `json:"criterion"`
	Warnings    []string            `json:"warnings"`
}

type bulkInputJSON struct {
	File       string `json:"file"`
	Column     string `json:"column"`
	Quantity   string `json:"quantity"`
	UnitInFile string `json:"unit_in_file"`
	Unit       string `json:"unit"`
	Points     int    `json:"points"`
	Stderr     string `json:"stderr"`
}

type bulkCurieWeissJSON struct {
	Form       string           `json:"form"`
	Series     string           `json:"series"`
	AboveK     jsonNumber       `json:"above_K"`
	Points     int              `json:"points"`
	C          jsonNumber       `json:"C_emu_K_per_mol"`
	CErr       jsonNumber       `json:"C_stderr"`
	ThetaK     jsonNumber       `json:"theta_K"`
	ThetaErr   jsonNumber       `json:"theta_stderr"`
	GSpinHalf  jsonNumber       `json:"g_spin_half"`
	Chi2       jsonNumber       `json:"chi2"`
	DOF        int              `json:"dof"`
	PValue     jsonNumber       `json:"p_value"`
	PValueNote string           `json:"p_value_note,omitempty"`
	ErrorsNote string           `json:"errors_note"`
	Exchange   []bulkCWExchange `json:"J_from_theta"`
}

type bulkCWExchange struct {
	Lattice string     `json:"lattice"`
	Z       int        `json:"z"`
	JK      jsonNumber `json:"J_K"`
	JErr    jsonNumber `json:"J_stderr"`
}

type bulkCandidateJSON struct {
	Name         string       `json:"name"`
	ForwardModel string       `json:"forward_model"`
	Error        string       `json:"error,omitempty"`
	Rejected     bool         `json:"rejected"`
	DeltaAIC     jsonNumber   `json:"delta_aic"`
	Own          *bulkFitJSON `json:"own_range"`
	Common       *bulkFitJSON `json:"common_range,omitempty"`
}

type bulkParamJSON struct {
	Name      string      `json:"name"`
	Value     jsonNumber  `json:"value"`
	Stderr    jsonNumber  `json:"stderr"`
	Unit      string      `json:"unit"`
	Fixed     bool        `json:"fixed"`
	AtBound   bool        `json:"at_bound,omitempty"`
	ValueMeV  *jsonNumber `json:"value_meV,omitempty"`
	StderrMeV *jsonNumber `json:"stderr_meV,omitempty"`
}

type bulkSeriesJSON struct {
	File          string      `json:"file"`
	Column        string      `json:"column"`
	TrustedFromK  jsonNumber  `json:"trusted_from_K"`
	Used          int         `json:"fitted_points"`
	Total         int         `json:"points"`
	Chi2          jsonNumber  `json:"chi2"`
	SigmaEstimate *jsonNumber `json:"stderr_estimated,omitempty"`
}

type bulkFitJSON struct {
	Parameters  []bulkParamJSON  `json:"parameters"`
	Free        []string         `json:"free"`
	Covariance  [][]jsonNumber   `json:"covariance"`
	Correlation [][]jsonNumber   `json:"correlation"`
	Chi2        jsonNumber       `json:"chi2"`
	Points      int              `json:"points"`
	DOF         int              `json:"dof"`
	Chi2PerDOF  jsonNumber       `json:"chi2_per_dof"`
	PValue      jsonNumber       `json:"p_value"`
	PValueNote  string           `json:"p_value_note,omitempty"`
	AIC         jsonNumber       `json:"aic"`
	BIC         jsonNumber       `json:"bic"`
	Converged   bool             `json:"converged"`
	Iterations  int              `json:"iterations"`
	Series      []bulkSeriesJSON `json:"series"`
	CutRounds   [][]jsonNumber   `json:"trusted_from_K_by_round"`
	Warnings    []string         `json:"warnings"`
}

var bulkConventions = []string{
	"H = J sum_<ij> (S^x S^x + S^y S^y + Delta S^z S^z) + J2 sum_<<ij>> S_i.S_j - g mu_B B sum_i S^z_i, S = sigma/2, energies in kelvin (E/k_B), J > 0 antiferromagnetic",
	"molar quantities are per mole of formula units; chi in emu/mol (CGS, = cm^3/mol; 1 emu/mol = 4 pi 1e-6 m^3/mol), C in J/(mol K), M in mu_B per formula unit, H = mu0 H in tesla",
	"chi = n g^2 (N_A mu_B^2/k_B) [(1 - rho) chi_site + rho/(4T)] + chi0; C = n R (1 - rho) c_site + a T^3 + b T^5; M = n g [(1 - rho) m_site + rho tanh(g mu_B B/2k_B T)/2] + chi0 H",
	"Curie–Weiss: chi = C/(T + theta), theta > 0 antiferromagnetic; for spin-1/2, theta = z J/4",
	"stderr are one standard deviation; covariance is (J^T W J)^-1 at the minimum",
}

// writeBulkJSON writes the results document.
func writeBulkJSON(w io.Writer, r *bulkRun) error {
	doc := bulkJSON{Command: "warmfit bulk", Constants: bulk.CODATAEdition, Conventions: bulkConventions,
		Criterion: fmt.Sprintf("candidates with p < %g on their own trusted range are rejected; the rest are ranked by AIC = chi^2 + 2k (Akaike 1974) on the points every candidate trusts", r.cmp.RejectBelow),
		Warnings:  append([]string{}, r.warnings...)}
	for _, s := range r.job.data {
		in := bulkInputJSON{File: s.File, Column: s.Column, Quantity: s.Quantity.String(), UnitInFile: s.Unit, Unit: s.Quantity.Unit(), Points: len(s.Points), Stderr: "given"}
		if s.StderrUnknown {
			in.Stderr = "unknown: estimated from the residual scatter"
		}
		doc.Inputs = append(doc.Inputs, in)
	}
	doc.CurieWeiss = curieWeissJSON(r)
	cmp := r.cmp
	for i, c := range cmp.Candidates {
		cj := bulkCandidateJSON{Name: c.Name, ForwardModel: c.Forward.Describe(), Rejected: cmp.Rejected[i], DeltaAIC: jsonNumber(cmp.DeltaAIC[i])}
		if err := cmp.Errors[i]; err != nil {
			cj.Error = err.Error()
		}
		cj.Own = fitJSON(cmp.Own[i])
		cj.Common = fitJSON(cmp.Common[i])
		doc.Candidates = append(doc.Candidates, cj)
	}
	for _, i := range cmp.Ranking {
		doc.Ranking = append(doc.Ranking, cmp.Candidates[i].Name)
	}
	doc.Best = doc.Ranking[0]
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(doc)
}

// curieWeissErrorsNote says what the first look's error bars leave out.
const curieWeissErrorsNote = "errors statistical only; the Curie–Weiss form is exact only as T -> infinity, so theta and g also carry a model bias of relative order theta/T"

func curieWeissJSON(r *bulkRun) *bulkCurieWeissJSON {
	cw := r.curieWeiss
	if cw == nil {
		return nil
	}
	g, _ := cw.SpinHalfG(r.job.perFormula)
	out := &bulkCurieWeissJSON{Form: "chi = C/(T + theta)", Series: cw.Series.Label(), AboveK: jsonNumber(cw.Above), Points: cw.Points,
		C: jsonNumber(cw.C), CErr: jsonNumber(cw.CErr), ThetaK: jsonNumber(cw.Theta), ThetaErr: jsonNumber(cw.ThetaErr),
		GSpinHalf: jsonNumber(g), Chi2: jsonNumber(cw.Chi2), DOF: cw.DOF, PValue: jsonNumber(cw.PValue),
		ErrorsNote: curieWeissErrorsNote}
	if math.IsNaN(cw.PValue) {
		out.PValueNote = "errors unknown: not tested"
	}
	for _, c := range r.cmp.Candidates {
		z := c.Forward.Coordination()
		j, je := cw.SpinHalfExchange(z)
		out.Exchange = append(out.Exchange, bulkCWExchange{Lattice: c.Forward.Lattice(), Z: z, JK: jsonNumber(j), JErr: jsonNumber(je)})
	}
	return out
}

func fitJSON(f *bulk.FitResult) *bulkFitJSON {
	if f == nil {
		return nil
	}
	out := &bulkFitJSON{Free: f.Free, Chi2: jsonNumber(f.Chi2), Points: f.Points, DOF: f.DOF,
		Chi2PerDOF: jsonNumber(f.Chi2 / float64(f.DOF)), PValue: jsonNumber(f.PValue), AIC: jsonNumber(f.AIC), BIC: jsonNumber(f.BIC),
		Converged: f.Converged, Iterations: f.Iterations, Warnings: append([]string{}, f.Warnings...)}
	if math.IsNaN(f.PValue) {
		out.PValueNote = "errors estimated from the residual scatter: goodness of fit not testable"
	}
	for _, p := range f.Params {
		pj := bulkParamJSON{Name: p.Name, Value: jsonNumber(p.Value), Stderr: jsonNumber(p.Stderr), Unit: p.Unit, Fixed: p.Fixed, AtBound: p.AtBound}
		if p.Unit == "K" {
			v, e := jsonNumber(p.Value/bulk.KelvinPerMeV), jsonNumber(p.Stderr/bulk.KelvinPerMeV)
			pj.ValueMeV, pj.StderrMeV = &v, &e
		}
		out.Parameters = append(out.Parameters, pj)
	}
	out.Covariance = matrixJSON(f.Covariance, len(f.Free))
	out.Correlation = matrixJSON(f.Correlation, len(f.Free))
	for _, s := range f.Series {
		sj := bulkSeriesJSON{File: s.Series.File, Column: s.Series.Column, TrustedFromK: jsonNumber(s.TrustedFrom), Used: s.Used, Total: len(s.Series.Points), Chi2: jsonNumber(s.Chi2)}
		if s.Series.StderrUnknown {
			v := jsonNumber(s.Sigma)
			sj.SigmaEstimate = &v
		}
		out.Series = append(out.Series, sj)
	}
	for _, rd := range f.Rounds {
		row := make([]jsonNumber, len(rd.TrustedFrom))
		for i, v := range rd.TrustedFrom {
			row[i] = jsonNumber(v)
		}
		out.CutRounds = append(out.CutRounds, row)
	}
	return out
}

// matrixJSON writes a symmetric matrix as rows (null when unknown).
func matrixJSON(m *mat.SymDense, n int) [][]jsonNumber {
	out := make([][]jsonNumber, n)
	for i := range out {
		out[i] = make([]jsonNumber, n)
		for j := range out[i] {
			out[i][j] = jsonNumber(math.NaN())
			if m != nil {
				out[i][j] = jsonNumber(m.At(i, j))
			}
		}
	}
	return out
}

// bulkCurvesHeader is the header of --curves (formats.md, section bulk).
var bulkCurvesHeader = []string{"candidate", "quantity", "unit", "file", "line", "T_K", "H_T", "data", "stderr", "stderr_source", "model", "pull", "trusted", "fitted"}

// writeBulkCurves writes data against every candidate's model, one row
// per point and candidate, under a plain header row.
func writeBulkCurves(w io.Writer, r *bulkRun) error {
	cw := csv.NewWriter(w)
	cw.Write(bulkCurvesHeader)
	for i, c := range r.cmp.Candidates {
		f := r.cmp.Own[i]
		if f == nil {
			continue
		}
		for _, sf := range f.Series {
			s := sf.Series
			for k, pt := range s.Points {
				sd, src := pt.Stderr, "given"
				if s.StderrUnknown {
					sd, src = sf.Sigma, "estimated"
				}
				// Outside the forward model's trusted range the model is
				// not given: a value there would be an extrapolation.
				model, pull := "", ""
				if sf.Trusted[k] {
					m := sf.Model[k]
					p := (pt.Value - m) / sd
					for _, v := range []float64{m, sd, p} {
						if math.IsNaN(v) || math.IsInf(v, 0) {
							return fmt.Errorf("candidate %s, %s line %d: the model or its error is not finite", c.Name, s.File, pt.Line)
						}
					}
					model, pull = fmtExact(m), fmtExact(p)
				}
				cw.Write([]string{c.Name, s.Quantity.String(), s.Quantity.Unit(), s.File, strconv.Itoa(pt.Line),
					fmtExact(pt.T), fmtExact(pt.H), fmtExact(pt.Value), fmtExact(sd), src, model, pull,
					strconv.FormatBool(sf.Trusted[k]), strconv.FormatBool(sf.UsedPoint[k])})
			}
		}
	}
	cw.Flush()
	return cw.Error()
}

// printBulkSummary writes the human-readable summary to stderr.
func printBulkSummary(w io.Writer, r *bulkRun) {
	if cw := r.curieWeiss; cw != nil {
		g, ge := cw.SpinHalfG(r.job.perFormula)
		fmt.Fprintf(w, "Curie–Weiss first look (%s, T >= %.4g K, %d points): C = %.5g +- %.2g emu K/mol (g = %.4g +- %.2g for spin 1/2), theta = %.4g +- %.2g K (%s)\n",
			cw.Series.Label(), cw.Above, cw.Points, cw.C, cw.CErr, g, ge, cw.Theta, cw.ThetaErr, curieWeissErrorsNote)
	}
	cmp := r.cmp
	fmt.Fprintf(w, "\n%-18s %8s %6s %10s %10s %9s  %s\n", "candidate", "chi2", "dof", "p", "dAIC", "verdict", "parameters (own trusted range)")
	for _, i := range cmp.Ranking {
		f := cmp.Own[i]
		verdict := "ok"
		if cmp.Rejected[i] {
			verdict = "rejected"
		}
		p := "n/a"
		if !math.IsNaN(f.PValue) {
			p = fmt.Sprintf("%.3g", f.PValue)
		}
		fmt.Fprintf(w, "%-18s %8.2f %6d %10s %10.2f %9s ", cmp.Candidates[i].Name, f.Chi2, f.DOF, p, cmp.DeltaAIC[i], verdict)
		for _, par := range f.Params {
			if par.Fixed {
				fmt.Fprintf(w, " %s=%.4g(fixed)", par.Name, par.Value)
				continue
			}
			if math.IsNaN(par.Stderr) {
				fmt.Fprintf(w, " %s=%.5g(undetermined)", par.Name, par.Value)
				continue
			}
			fmt.Fprintf(w, " %s=%.5g+-%.2g", par.Name, par.Value, par.Stderr)
		}
		fmt.Fprintln(w)
	}
	for i, c := range cmp.Candidates {
		if cmp.Errors[i] != nil {
			fmt.Fprintf(w, "%-18s not fitted: %v\n", c.Name, cmp.Errors[i])
		}
	}
	fmt.Fprintf(w, "best: %s\n", cmp.Candidates[cmp.Ranking[0]].Name)
}
