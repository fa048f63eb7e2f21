package main

import (
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/fit/stationary"
	"warmfit/lattice"
	"warmfit/lattice/model"
	"warmfit/validate"
)

const planStationaryLong = `

Method (--method): expansion (the default) plans the expansion's maximum-entropy fit as
above. stationary plans 'warmfit fit --method stationary' instead: the stationarity
constraints Tr(rho [A, H]) = 0 (Bairey, Arad, Lindner, PRL 122, 020504 (2019)). From the
model's Gibbs state (exact outcome distributions of every basis by dense diagonalisation
up to 12 qubits, by thermal typicality with 16 random vectors up to 20; the output says
which) it predicts the constraint entries and their covariance for one shot per
basis, runs the stationarity solver and its delta-method error bars on them, and scales
the variances by 1/shots. --target is then the direction error: the coefficient error
once the overall scale is fixed to the model's norm, in --norm rms (the default here:
root mean square over the terms), linf or l2. --scale-target REL also asks for the
relative error of the overall scale fixed by the thermal match at the model's beta.
Shots never go below what puts every resolved direction of the constraints within 0.1 of
the unit direction (below that the estimator leaves its linear regime and its error bars
are too small). The plan refuses when even 10^12 shots per basis leave the signal below
the noise (the constraints vanish like beta), names the directions no number of shots
fixes (conserved quantities such as total Z in U(1) models), and, unless --compare=false,
plans the expansion fit for the same bases and precision and says which is cheaper (a
WARNING when the expansion is). Bases: covering:3 measures every correlator the
constraints need; random:K works too. For example:

  warmfit model --lattice chain:8 --preset tfim --set J=1,hx=0.8,hz=0.3 --beta 0.7 -o device.json
  warmfit plan --model device.json --method stationary --bases covering:3 --target 0.02
  warmfit plan --model device.json --method stationary --bases covering:3 --target 0.02 --scale-target 0.01 --format json -o plan.json`

// maxPlanTypicalQubits is the largest lattice the stationarity plan
// predicts (thermal typicality above cluster.MaxDenseQubits: its vectors
// take 16 bytes per amplitude each), and planTypicalVectors the number
// of random vectors it uses.
const (
	maxPlanTypicalQubits = 20
	planTypicalVectors   = 16
)

// planStationary is a stationarity plan with what the output needs.
type planStationary struct {
	*stationary.Plan
	source string
	// full comparison with the expansion (nil when not made)
	cmp *planComparison
}

// planComparison is the expansion fit's plan for the same bases and
// precision, in full coefficient errors.
type planComparison struct {
	ExpansionShots  int64  `json:"expansion_shots_per_basis"`
	StationaryShots int64  `json:"stationary_shots_per_basis"`
	Cheaper         string `json:"cheaper"`
	Order           int    `json:"expansion_order"`
	// Measure says which stationarity errors were compared.
	Measure string `json:"compared"`
	// Indicative is set when the expansion's series had not converged.
	Indicative bool   `json:"expansion_indicative,omitempty"`
	Failed     string `json:"expansion_failed,omitempty"`
}

func runPlanStationary(env *runEnv, m *model.Model, beta float64, bases []string, scheme string, format outputFormat) error {
	o := planOptions
	n := m.Lattice.NumSites()
	if n > maxPlanTypicalQubits {
		return fmt.Errorf("plan --method stationary: %d sites: the prediction needs the outcome distributions of every basis, exact up to %d qubits and by thermal typicality up to %d; plan a patch of the lattice instead (the constraints are local, so a patch with the same neighbourhoods needs about the same shots per basis)", n, cluster.MaxDenseQubits, maxPlanTypicalQubits)
	}
	if o.norm == "" || !o.flags.Changed("norm") {
		o.norm = string(stationary.NormRMS)
	}
	norm, err := parseChoice("--norm", o.norm, stationary.NormRMS, fit.NormLinf, fit.NormL2)
	if err != nil {
		return err
	}
	if o.scaleTarget < 0 || math.IsNaN(o.scaleTarget) || math.IsInf(o.scaleTarget, 0) {
		return usagef("--scale-target %v: must be a positive number (relative error of the scale)", o.scaleTarget)
	}
	var probs stationary.BasisProbabilities
	var source string
	if n <= cluster.MaxDenseQubits {
		source = fmt.Sprintf("exact outcome distributions of the %d-qubit Gibbs state (dense diagonalisation)", n)
		fmt.Fprintf(env.Stderr, "plan: stationarity: %d sites, %d terms, beta %s, %d bases (%s); expectations from %s\n", n, len(m.Terms), fmtFloat(beta), len(bases), scheme, source)
		sampler, err := validate.NewSampler(n, m.Terms, beta)
		if err != nil {
			return err
		}
		probs = sampler.Distribution
	} else {
		source = fmt.Sprintf("outcome distributions of the %d-qubit Gibbs state by thermal typicality (%d random vectors, seed %d; Hams and De Raedt, PRE 62, 4365 (2000)), statistical error a few percent on the variances", n, planTypicalVectors, o.seed)
		fmt.Fprintf(env.Stderr, "plan: stationarity: %d sites, %d terms, beta %s, %d bases (%s); expectations from %s\n", n, len(m.Terms), fmtFloat(beta), len(bases), scheme, source)
		sampler, err := validate.NewTypicalSampler(n, m.Terms, beta, validate.TypicalityOptions{Vectors: planTypicalVectors, Seed: o.seed, Workers: o.workers})
		if err != nil {
			return err
		}
		probs = sampler.Distribution
	}
	eval, _, evalSource, err := stationaryEvaluator(m)
	if err != nil {
		return err
	}
	pl, err := stationary.PlanShots(n, m.Terms, bases, probs, stationary.PlanOptions{
		Target: o.target, Norm: norm, Confidence: o.confidence, ScaleTarget: o.scaleTarget,
		Beta: beta, Evaluate: eval, System: stationary.SystemOptions{FarPairs: o.farPairs},
		Source: source + "; scale by the thermal match (" + evalSource + ")",
	})
	if err != nil {
		if errors.Is(err, stationary.ErrNoInformation) {
			return fmt.Errorf("plan --method stationary refuses: %w; at high temperature the expansion fit (--method expansion) is the estimator to plan", err)
		}
		return err
	}
	ps := &planStationary{Plan: pl, source: source}
	if o.compare {
		ps.cmp = comparePlans(env, m, beta, bases, pl)
		if c := ps.cmp; c != nil && c.Cheaper == "expansion" {
			pl.Warnings = append(pl.Warnings, fmt.Sprintf("at beta x max|coeff| = %s the expansion fit needs fewer shots for the same precision (%d against %d per basis, %s): plan and fit with --method expansion here (stationarity's signal shrinks like beta, while the expansion is at its best at high temperature and exact when its order covers the lattice)",
				fmtG3(pl.BetaMaxCoeff), c.ExpansionShots, c.StationaryShots, c.Measure))
		}
	}
	for _, warn := range pl.Warnings {
		fmt.Fprintf(env.Stderr, "WARNING: %s\n", warn)
	}
	if format == formatCSV {
		meta := &csvMeta{Command: "plan --method stationary", Contents: "one row per model term: its predicted direction error and full standard error"}
		meta.line("warmfit plan --method stationary: %d bases x %d shots = %d shots, direction target %s (%s)", len(pl.Bases), pl.ShotsPerBasis, pl.TotalShots, fmtFloat(pl.Target), pl.Norm)
		for _, n := range pl.Notes {
			meta.line("%s", n)
		}
		for _, warn := range pl.Warnings {
			meta.line("WARNING: %s", warn)
		}
		meta.set("model", o.model)
		meta.set("beta", beta)
		meta.set("method", "stationary")
		meta.set("plan", planStationaryOut(ps, scheme, nil))
		return writeCSVResult(env, o.out, o.csv, meta, func(w io.Writer) error { return planStationaryCSV(w, m.Terms, pl) })
	}
	return writeOutput(env, o.out, func(w io.Writer) error {
		if format == formatJSON {
			enc := json.NewEncoder(w)
			enc.SetIndent("", "  ")
			return enc.Encode(planStationaryOut(ps, scheme, m.Terms))
		}
		return planStationaryText(w, m.Terms, ps, scheme)
	})
}

// comparePlans plans the expansion fit for the same bases and precision
// and compares full coefficient errors (the stationarity ones with the
// scale from the thermal match; its direction errors when there is none).
func comparePlans(env *runEnv, m *model.Model, beta float64, bases []string, pl *stationary.Plan) *planComparison {
	o := planOptions
	norm, target := pl.Norm, pl.Target
	if norm == stationary.NormRMS {
		// rms over m terms is the l2 norm over sqrt(m).
		norm, target = fit.NormL2, pl.Target*math.Sqrt(float64(len(m.Terms)))
	}
	bar := newProgressBar(env, "expanding")
	ep, err := fit.PlanShots(m.Lattice, m.Terms, beta, fit.PlanOptions{
		Target: target, Norm: norm, Confidence: pl.Confidence, Bases: bases, Order: o.order.L, Workers: o.workers, Budget: o.budget,
		Progress: bar.Update,
	})
	bar.Done()
	c := &planComparison{Measure: "full coefficient errors, scale by the thermal match"}
	if err != nil {
		c.Failed = err.Error()
		fmt.Fprintf(env.Stderr, "plan: the expansion plan for comparison failed: %v\n", err)
		return c
	}
	c.Order, c.Indicative = ep.Order, len(ep.Warnings) > 0
	c.ExpansionShots = pl.ShotsFor(ep.VarPerShot, pl.Norm, pl.Target)
	vps := pl.VarPerShot
	if vps == nil {
		vps, c.Measure = pl.DirectionVarPerShot, "stationarity direction errors against the expansion's full errors"
	}
	c.StationaryShots = max(pl.ShotsFor(vps, pl.Norm, pl.Target), pl.ShotsLinear)
	c.Cheaper = "stationary"
	if c.ExpansionShots < c.StationaryShots {
		c.Cheaper = "expansion"
	}
	note := ""
	if c.Indicative {
		note = " (the expansion's series has not converged at this beta: its number is only indicative)"
	}
	fmt.Fprintf(env.Stderr, "plan: same bases and precision (%s): expansion fit (order %d) %d shots per basis, stationarity %d: %s is cheaper%s\n",
		c.Measure, c.Order, c.ExpansionShots, c.StationaryShots, c.Cheaper, note)
	return c
}

func planStationaryText(w io.Writer, terms []lattice.Term, ps *planStationary, scheme string) error {
	p := ps.Plan
	worst := 0
	for k, v := range p.DirectionStderr {
		if v > p.DirectionStderr[worst] {
			worst = k
		}
	}
	fmt.Fprintf(w, "method          stationary\n")
	fmt.Fprintf(w, "target          %s direction error (%s norm)\n", fmtFloat(p.Target), p.Norm)
	if p.ScaleTarget > 0 {
		fmt.Fprintf(w, "scale target    %s relative\n", fmtFloat(p.ScaleTarget))
	}
	fmt.Fprintf(w, "bases           %d (%s)\n", len(p.Bases), scheme)
	fmt.Fprintf(w, "shots per basis %d (direction %d, scale %d, linear regime %d)\n", p.ShotsPerBasis, p.ShotsDirection, p.ShotsScale, p.ShotsLinear)
	fmt.Fprintf(w, "total shots     %d\n", p.TotalShots)
	fmt.Fprintf(w, "direction error rms %s, largest %s (%s)\n", fmtFloat(p.DirectionRMS()), fmtFloat(p.DirectionMax()), terms[worst].Key())
	if p.ScaleStderr > 0 {
		fmt.Fprintf(w, "scale error     %s relative (thermal match)\n", fmtFloat(p.ScaleStderr))
	}
	if p.Stderr != nil {
		fmt.Fprintf(w, "stderr          largest %s, rms %s (scale by the thermal match)\n", fmtFloat(p.StderrMax()), fmtFloat(p.StderrRMS()))
	}
	fmt.Fprintf(w, "expectations    %s\n", ps.source)
	fmt.Fprintf(w, "constraints     %d rows, %d correlators, %d parameters, beta x max|coeff| %s\n", p.Rows, p.Strings, p.Params, fmtG3(p.BetaMaxCoeff))
	for _, name := range p.Invisible {
		fmt.Fprintf(w, "invisible       %s\n", name)
	}
	if c := ps.cmp; c != nil {
		if c.Failed != "" {
			fmt.Fprintf(w, "compare         expansion plan failed: %s\n", c.Failed)
		} else {
			ind := ""
			if c.Indicative {
				ind = ", expansion unconverged: indicative"
			}
			fmt.Fprintf(w, "compare         expansion %d, stationary %d shots per basis: %s cheaper (%s%s)\n", c.ExpansionShots, c.StationaryShots, c.Cheaper, c.Measure, ind)
		}
	}
	for _, n := range p.Notes {
		fmt.Fprintf(w, "note            %s\n", n)
	}
	for _, warn := range p.Warnings {
		fmt.Fprintf(w, "WARNING         %s\n", warn)
	}
	return nil
}

// planStationaryJSON is the stationarity plan as written by --format
// json (and, without terms, in the CSV sidecar's "plan").
type planStationaryJSON struct {
	Method               string                   `json:"method"`
	Target               float64                  `json:"target"`
	Norm                 fit.Norm                 `json:"norm"`
	Confidence           float64                  `json:"confidence,omitempty"`
	Z                    float64                  `json:"z,omitempty"`
	ScaleTarget          float64                  `json:"scale_target,omitempty"`
	Scheme               string                   `json:"scheme"`
	Bases                []string                 `json:"bases"`
	ShotsPerBasis        int64                    `json:"shots_per_basis"`
	TotalShots           int64                    `json:"total_shots"`
	ShotsDirection       int64                    `json:"shots_for_direction"`
	ShotsScale           int64                    `json:"shots_for_scale"`
	ShotsLinear          int64                    `json:"shots_for_linear_regime"`
	Expectations         string                   `json:"expectations"`
	Parameters           int                      `json:"parameters"`
	Constraints          int                      `json:"constraints"`
	Correlators          int                      `json:"correlators"`
	MissingCorrelators   int                      `json:"correlators_unmeasured"`
	BetaMaxCoeff         float64                  `json:"beta_max_coeff"`
	DirectionRMS         float64                  `json:"direction_rms"`
	DirectionMax         float64                  `json:"direction_max"`
	ScaleStderr          float64                  `json:"scale_rel_stderr"`
	MaxStderr            *float64                 `json:"max_stderr,omitempty"`
	RMSStderr            *float64                 `json:"rms_stderr,omitempty"`
	WeakestStderrPerShot float64                  `json:"weakest_direction_stderr_per_shot"`
	Invisible            []string                 `json:"invisible_directions"`
	Compare              *planComparison          `json:"compare,omitempty"`
	Notes                []string                 `json:"notes"`
	Warnings             []string                 `json:"warnings"`
	Terms                []planStationaryTermJSON `json:"terms,omitempty"`
}

type planStationaryTermJSON struct {
	Pauli          string   `json:"pauli"`
	Sites          []int    `json:"sites"`
	DirectionError float64  `json:"direction_stderr"`
	Stderr         *float64 `json:"stderr,omitempty"`
}

func planStationaryOut(ps *planStationary, scheme string, terms []lattice.Term) planStationaryJSON {
	p := ps.Plan
	out := planStationaryJSON{
		Method: "stationary", Target: p.Target, Norm: p.Norm, ScaleTarget: p.ScaleTarget, Scheme: scheme, Bases: p.Bases,
		ShotsPerBasis: p.ShotsPerBasis, TotalShots: p.TotalShots, ShotsDirection: p.ShotsDirection, ShotsScale: p.ShotsScale, ShotsLinear: p.ShotsLinear,
		Expectations: ps.source, Parameters: p.Params, Constraints: p.Rows, Correlators: p.Strings, MissingCorrelators: p.MissingStrings,
		BetaMaxCoeff: p.BetaMaxCoeff, DirectionRMS: p.DirectionRMS(), DirectionMax: p.DirectionMax(), ScaleStderr: p.ScaleStderr,
		WeakestStderrPerShot: p.WeakestStderrPerShot, Invisible: append([]string{}, p.Invisible...), Compare: ps.cmp,
		Notes: append([]string{}, p.Notes...), Warnings: append([]string{}, p.Warnings...),
	}
	if p.Norm == fit.NormLinf {
		out.Confidence, out.Z = p.Confidence, p.Z
	}
	if p.Stderr != nil {
		mx, r := p.StderrMax(), p.StderrRMS()
		out.MaxStderr, out.RMSStderr = &mx, &r
	}
	for k, t := range terms {
		tj := planStationaryTermJSON{Pauli: t.Pauli, Sites: t.Sites, DirectionError: p.DirectionStderr[k]}
		if p.Stderr != nil {
			se := p.Stderr[k]
			tj.Stderr = &se
		}
		out.Terms = append(out.Terms, tj)
	}
	return out
}

// planStationaryCSV writes pauli,sites,direction_stderr,stderr (stderr
// empty without a thermal match).
func planStationaryCSV(w io.Writer, terms []lattice.Term, p *stationary.Plan) error {
	cw := csv.NewWriter(w)
	if err := cw.Write([]string{"pauli", "sites", "direction_stderr", "stderr"}); err != nil {
		return err
	}
	for k, t := range terms {
		se := ""
		if p.Stderr != nil {
			se = fmtExact(p.Stderr[k])
		}
		if err := cw.Write([]string{t.Pauli, lattice.SitesString(t.Sites), fmtExact(p.DirectionStderr[k]), se}); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}
