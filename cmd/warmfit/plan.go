package main

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"time"

	"github.com/spf13/pflag"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/lattice"
	"warmfit/lattice/model"
)

// planOptions holds the flags of "warmfit plan"; Flags resets them on
// every invocation.
var planOptions struct {
	model       string
	beta        betaFlag
	target      float64
	norm        string
	bases       string
	seed        uint64
	order       orderFlag
	confidence  float64
	format      string
	out         string
	workers     int
	budget      time.Duration
	csv         csvFlags
	method      string
	scaleTarget float64
	compare     bool
	farPairs    bool
	flags       *pflag.FlagSet
}

func init() {
	register(&command{
		Name:    "plan",
		Short:   "how many shots learn a model's coefficients to a target precision",
		Usage:   "warmfit plan --model M.json [--beta B] --target EPS [--method expansion|stationary] [--norm linf|l2|rms] [--bases covering|covering:3|random:K] [--format text|csv|json] [-o FILE]",
		Long:    planLong + planStationaryLong,
		Example: planExample,
		Flags: func(fs *pflag.FlagSet) {
			o := &planOptions
			o.flags = fs
			addModelFlag(fs, &o.model, "model `FILE` whose coefficients are to be learned (a best guess)")
			addBetaFlag(fs, &o.beta)
			fs.Float64Var(&o.target, "target", 0, "target error `EPS` of the coefficients")
			fs.StringVar(&o.norm, "norm", string(fit.NormLinf), "linf: every coefficient within eps at 95% (Bonferroni); l2: expected squared L2 error <= eps^2; rms (stationary, its default): root mean square over the terms")
			fs.StringVar(&o.bases, "bases", "covering", "measurement `SCHEME`: covering (few bases serving every term), covering:3 (every correlator stationarity needs) or random:K")
			fs.StringVar(&o.method, "method", "expansion", "estimator to plan for: expansion or stationary")
			fs.Float64Var(&o.scaleTarget, "scale-target", 0, "stationary: relative error `REL` of the overall scale (thermal match at beta); 0: none")
			fs.BoolVar(&o.compare, "compare", true, "stationary: also plan the expansion fit for the same bases and precision, and say which is cheaper")
			fs.BoolVar(&o.farPairs, "far-pairs", false, "stationary: also probe pairs of sites at distance two (as fit --far-pairs)")
			fs.Uint64Var(&o.seed, "seed", 1, "seed of random:K bases")
			addOrderFlag(fs, &o.order, "expansion order of the prediction, or auto (the order stored in a fitted model, else chosen as in predict)")
			fs.Float64Var(&o.confidence, "confidence", 0.95, "confidence of the linf guarantee")
			fs.StringVar(&o.format, "format", "text", "text (summary), csv (per term) or json")
			addOutputFlag(fs, &o.out, "the plan")
			addWorkersFlag(fs, &o.workers)
			addBudgetFlag(fs, &o.budget)
			addCSVFlags(fs, &o.csv)
		},
		Run: runPlan,
	})
}

const planLong = `Before any data are taken: how many shots per measurement basis a fit needs to learn
the model's coefficients to precision eps. The expectations
e_k and the response R = d<E>/d lambda are evaluated at the model (linked-cluster
expansion), and shot noise is propagated by the delta method used by 'warmfit fit':

  Var(e_k) = (1 - e_k^2) / (N n_k)    (N shots per basis, n_k bases measure term k)
  Cov(lambda) = P^{-1} A^T Cov(e) A P^{-1},  P = -A^T R A

Covariances between estimates that share shots are ignored (diagonal approximation).
With --norm linf, N = ceil(z^2 max_k Var_k(1) / eps^2), z the two-sided normal quantile
of a Bonferroni union bound over the fitted parameters at --confidence (95%), so that
every coefficient is within eps at once with at least that probability; with
--norm l2, N = ceil(sum_k Var_k(1) / eps^2), the expected squared L2 error.

The summary gives shots per basis, the number of bases, the total number of shots
and the predicted standard errors; --format csv lists pauli,sites,coverage,stderr per
term, --format json the whole plan.

` + csvOutputHelp

const planExample = `warmfit model --lattice square:6x6 --preset xxz --set Jxy=0.4,Jz=0.3,hz=0.2 --beta 0.5 -o m.json
warmfit plan --model m.json --target 0.01
warmfit plan --model m.json --target 0.05 --norm l2 --bases random:200 --format csv -o plan.csv
warmfit model --lattice chain:8 --preset tfim --set J=1,hx=0.8,hz=0.3 --beta 0.7 -o chain.json
warmfit plan --model chain.json --method stationary --bases covering:3 --target 0.02`

func runPlan(env *runEnv, args []string) error {
	o := planOptions
	if len(args) > 0 {
		return usagef("unexpected argument %q", args[0])
	}
	if o.model == "" {
		return usagef("--model is required")
	}
	if !(o.target > 0) || math.IsInf(o.target, 0) {
		return usagef("--target is required and must be a positive number")
	}
	method, err := parseChoice("--method", o.method, "expansion", "stationary")
	if err != nil {
		return err
	}
	norm := fit.NormLinf
	if method == "expansion" {
		if norm, err = parseChoice("--norm", o.norm, fit.NormLinf, fit.NormL2); err != nil {
			return err
		}
		for _, f := range []string{"scale-target", "compare", "far-pairs"} {
			if o.flags.Changed(f) {
				return usagef("--%s applies to --method stationary", f)
			}
		}
	}
	format, err := parseChoice("--format", o.format, formatText, formatCSV, formatJSON)
	if err != nil {
		return err
	}
	if format != formatCSV {
		if err := o.csv.misuse("--format " + o.format + "; add --format csv"); err != nil {
			return err
		}
	}
	if !(o.confidence > 0 && o.confidence < 1) {
		return usagef("--confidence %v: must lie in (0, 1)", o.confidence)
	}
	if err := checkWorkersFlag(o.workers); err != nil {
		return err
	}
	if err := checkBudgetFlag(o.budget); err != nil {
		return err
	}
	if err := checkOutputs(withCSV("-o", o.out, o.csv), o.model); err != nil {
		return err
	}
	m, beta, err := loadModelBeta(o.model, o.beta)
	if err != nil {
		return err
	}
	var unscaled string
	if fittedWithoutScale(m) {
		unscaled = unscaledModelWarning(o.model, "the plan is for learning beta*lambda: --target and the predicted stderrs are in units of beta*lambda, not of lambda")
		fmt.Fprintln(env.Stderr, unscaled)
	}
	n := m.Lattice.NumSites()
	bases, scheme, err := fit.SchemeBases(o.bases, n, m.Terms, o.seed)
	if err != nil {
		return usagef("--%v", err)
	}
	if method == "stationary" {
		return runPlanStationary(env, m, beta, bases, scheme, format)
	}
	order := o.order.L
	if order == 0 {
		order = fittedOrder(m)
		if order > 0 {
			fmt.Fprintf(env.Stderr, "plan: order %d, the order the model was fitted at\n", order)
		}
	}
	exp, err := cluster.NewExpansion(m.Lattice, m.Terms)
	if err != nil {
		return err
	}
	policy := cluster.NewOrderPolicy(m.Lattice, m.Terms)
	policy.Budget = o.budget
	if err := admitExpansion(env, "plan", exp, n, order, true, policy, o.budget); err != nil {
		return err
	}
	bar := newProgressBar(env, "expanding")
	plan, err := fit.PlanShots(m.Lattice, m.Terms, beta, fit.PlanOptions{
		Target: o.target, Norm: norm, Confidence: o.confidence, Bases: bases, Order: order, Workers: o.workers, Budget: o.budget,
		Progress: bar.Update,
	})
	bar.Done()
	if err != nil {
		return err
	}
	fmt.Fprintf(env.Stderr, "plan: %s, %d sites, %d terms, beta %s, order-%d expansion\n", m.Lattice.Spec.Kind, n, len(m.Terms), fmtFloat(beta), plan.Order)
	for _, warn := range plan.Warnings {
		fmt.Fprintf(env.Stderr, "WARNING: %s\n", warn)
	}
	if format == formatCSV {
		meta := planCSVMeta(plan, scheme)
		if unscaled != "" {
			meta.line("%s", unscaled)
		}
		meta.set("model", o.model)
		meta.set("beta", beta)
		return writeCSVResult(env, o.out, o.csv, meta, func(w io.Writer) error { return planWriteCSV(w, m.Terms, plan) })
	}
	return writeOutput(env, o.out, func(w io.Writer) error {
		switch format {
		case formatJSON:
			return planWriteJSON(w, m.Terms, plan, scheme)
		}
		return planWriteText(w, m.Terms, plan, scheme)
	})
}

func planWriteText(w io.Writer, terms []lattice.Term, p *fit.Plan, scheme string) error {
	worst := 0
	for k, v := range p.Stderr {
		if v > p.Stderr[worst] {
			worst = k
		}
	}
	fmt.Fprintf(w, "target          %s (%s norm)\n", fmtFloat(p.Target), p.Norm)
	fmt.Fprintf(w, "bases           %d (%s)\n", len(p.Bases), scheme)
	fmt.Fprintf(w, "shots per basis %d\n", p.ShotsPerBasis)
	fmt.Fprintf(w, "total shots     %d\n", p.TotalShots)
	fmt.Fprintf(w, "stderr          largest %s (%s), root-sum-square %s\n", fmtFloat(p.PredictedLinf()), terms[worst].Key(), fmtFloat(p.PredictedL2()))
	for _, n := range p.Notes {
		fmt.Fprintf(w, "note            %s\n", n)
	}
	for _, warn := range p.Warnings {
		fmt.Fprintf(w, "WARNING         %s\n", warn)
	}
	if len(p.Bases) <= 12 {
		for i, b := range p.Bases {
			fmt.Fprintf(w, "basis %-9d %s\n", i+1, b)
		}
	}
	return nil
}

// planCSVMeta is the metadata of the per-term plan CSV.
func planCSVMeta(p *fit.Plan, scheme string) *csvMeta {
	meta := &csvMeta{Command: "plan", Contents: "one row per model term: how many bases measure it and its predicted stderr"}
	meta.line("warmfit plan: %d bases x %d shots = %d shots, target %s (%s)", len(p.Bases), p.ShotsPerBasis, p.TotalShots, fmtFloat(p.Target), p.Norm)
	for _, n := range p.Notes {
		meta.line("%s", n)
	}
	for _, warn := range p.Warnings {
		meta.line("WARNING: %s", warn)
	}
	meta.set("target", p.Target)
	meta.set("norm", p.Norm)
	if p.Norm == fit.NormLinf {
		meta.set("confidence", p.Confidence)
	}
	meta.set("scheme", scheme)
	meta.set("bases", p.Bases)
	meta.set("shots_per_basis", p.ShotsPerBasis)
	meta.set("total_shots", p.TotalShots)
	meta.set("order", p.Order)
	meta.set("parameters", p.Params)
	meta.set("max_stderr", p.PredictedLinf())
	meta.set("l2_stderr", p.PredictedL2())
	return meta
}

func planWriteCSV(w io.Writer, terms []lattice.Term, p *fit.Plan) error {
	cw := csv.NewWriter(w)
	if err := cw.Write([]string{"pauli", "sites", "coverage", "stderr"}); err != nil {
		return err
	}
	for k, t := range terms {
		rec := []string{t.Pauli, lattice.SitesString(t.Sites), strconv.Itoa(p.Coverage[k]), fmtExact(p.Stderr[k])}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// planJSON is the plan as written by --format json.
type planJSON struct {
	Target        float64        `json:"target"`
	Norm          fit.Norm       `json:"norm"`
	Confidence    float64        `json:"confidence,omitempty"`
	Z             float64        `json:"z,omitempty"`
	Scheme        string         `json:"scheme"`
	Bases         []string       `json:"bases"`
	ShotsPerBasis int64          `json:"shots_per_basis"`
	TotalShots    int64          `json:"total_shots"`
	Order         int            `json:"order"`
	Parameters    int            `json:"parameters"`
	MaxStderr     float64        `json:"max_stderr"`
	L2Stderr      float64        `json:"l2_stderr"`
	Notes         []string       `json:"notes"`
	Warnings      []string       `json:"warnings"`
	Terms         []planTermJSON `json:"terms"`
}

type planTermJSON struct {
	Pauli    string  `json:"pauli"`
	Sites    []int   `json:"sites"`
	Coverage int     `json:"coverage"`
	Stderr   float64 `json:"stderr"`
}

func planWriteJSON(w io.Writer, terms []lattice.Term, p *fit.Plan, scheme string) error {
	out := planJSON{
		Target: p.Target, Norm: p.Norm, Scheme: scheme, Bases: p.Bases,
		ShotsPerBasis: p.ShotsPerBasis, TotalShots: p.TotalShots, Order: p.Order, Parameters: p.Params,
		MaxStderr: p.PredictedLinf(), L2Stderr: p.PredictedL2(), Notes: p.Notes,
		Warnings: append([]string{}, p.Warnings...), // [] rather than null when there are none
	}
	if p.Norm == fit.NormLinf {
		out.Confidence, out.Z = p.Confidence, p.Z
	}
	for k, t := range terms {
		out.Terms = append(out.Terms, planTermJSON{Pauli: t.Pauli, Sites: t.Sites, Coverage: p.Coverage[k], Stderr: p.Stderr[k]})
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(out)
}

// fittedOrder is the expansion order stored in a fitted model's report,
// or 0 when the model was not fitted.
func fittedOrder(m *model.Model) int {
	var rep struct {
		Order int `json:"order"`
	}
	if len(m.Fit) == 0 || json.Unmarshal(m.Fit, &rep) != nil {
		return 0
	}
	return rep.Order
}
