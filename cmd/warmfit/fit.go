package main

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"github.com/spf13/pflag"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/lattice"
	"warmfit/lattice/model"
)

// fitFlags holds the flags of "warmfit fit".
type fitFlags struct {
	model    string
	data     string
	beta     betaFlag
	order    orderFlag
	oldTol   float64 // the retired --tol, answered with a pointer
	budget   time.Duration
	truth    string
	format   outputFormat
	out      string
	tol      float64
	maxIter  int
	start    fitStart
	fdr      float64
	covDist  int
	workers  int
	verbose  bool
	maxOrder int
	scale    string
	csv      csvFlags
}

// fitOptions holds the flags of "warmfit fit"; Flags resets them on every
// invocation.
var fitOptions fitFlags

// fitStart is the value of fit --start: where the Newton iteration starts.
type fitStart string

const (
	startFirstOrder fitStart = "first-order" // lambda = -e/beta
	startTemplate   fitStart = "template"    // the template's coefficients
)

func init() {
	register(&command{
		Name:    "fit",
		Short:   "learn a Hamiltonian's coefficients from measurements of its Gibbs state",
		Usage:   "warmfit fit --model TEMPLATE.json --data FILE [--beta B] [--order L|auto] [--budget 60s] [--truth M.json] [--format json|csv] [-o OUT.json]",
		Long:    fitLong + fitMethodLong + fitCombinedLong,
		Example: fitExample,
		Flags: func(fs *pflag.FlagSet) {
			o := &fitOptions
			addModelFlag(fs, &o.model, "template model `FILE`: lattice, terms, groups (coefficients are ignored unless --start template)")
			fs.StringVar(&o.data, "data", "", "expectation table or snapshot `FILE` (told apart by the header)")
			addBetaFlag(fs, &o.beta, "inverse temperature (overrides the template's; without either, beta*lambda is fitted)")
			o.beta.omitted = betaOmittedFits
			addOrderFlag(fs, &o.order, "expansion order (largest cluster), or auto")
			fs.IntVar(&o.maxOrder, "max-order", 0, "highest order --order auto may use (default: the automatic ceiling, "+autoCeilingText+")")
			addBudgetFlag(fs, &o.budget)
			fs.StringVar(&o.truth, "truth", "", "true model `FILE`: report z-scores and L2/Linf errors against it")
			fs.StringVar(&o.scale, "scale-from", "", "without beta: fix the energy scale from `TERM=VALUE` (a calibrated coefficient, e.g. \"ZZ 0 1=0.25\") or beta=B; VALUE may be V+-ERR")
			fs.StringVar((*string)(&o.format), "format", string(formatJSON), "output format: json (fitted model with report) or csv")
			addOutputFlag(fs, &o.out, "the fit")
			fs.Float64Var(&o.tol, "gradient-tol", 1e-3, "stop when every gradient component is below this times its data noise")
			fs.Float64Var(&o.oldTol, "tol", 0, "replaced by --gradient-tol")
			_ = fs.MarkHidden("tol")
			fs.IntVar(&o.maxIter, "max-iter", 50, "Newton iterations per order")
			fs.StringVar((*string)(&o.start), "start", string(startFirstOrder), "starting point: first-order (lambda = -e/beta) or template")
			fs.Float64Var(&o.fdr, "fdr", 0.05, "false-discovery rate of the significance flags (Benjamini-Hochberg)")
			fs.IntVar(&o.covDist, "cov-distance", 1, "snapshots: keep covariances of terms within this graph distance")
			addWorkersFlag(fs, &o.workers)
			fs.BoolVarP(&o.verbose, "verbose", "v", false, "log every Newton iteration")
			addCSVFlags(fs, &o.csv)
			addFitMethodFlags(fs)
		},
		Run: runFit,
	})
}

const fitLong = `The coefficients lambda of H = sum_k lambda_k E_k are those whose Gibbs state
exp(-beta H)/Z reproduces the measured expectation values e_k, found by minimising the
convex maximum-entropy dual G(lambda) = log Z(lambda) + beta sum_k lambda_k e_k with
log Z from the numerical linked-cluster expansion. Newton steps are solved by
conjugate gradients on the sparse Hessian and damped by a line search on G. On
large lattices the steps take the exact gradient at order L with the Hessian of
order L-1 (the order-L one costs about four forward passes); a step that stalls
falls back on the exact Hessian.

The template (--model) gives the lattice and the terms; terms sharing a "group" share
one coefficient. The data (--data) are an expectation table (pauli,sites,value,stderr;
stderr "exact" marks a value known exactly; a blank stderr is refused) or a snapshot file (basis,outcome,count), from
which expectations and their covariance are estimated. Every template term needs
data unless it shares its group with a measured term: such terms are fitted through
their group by moment matching on the measured members (A_m^T <E>_m = A_m^T e_m,
one equation per parameter, solved by damped Newton with a dense LU; error bars
J^{-1} A_m^T Cov(e_m) A_m J^{-T}), and the report says how many. Other terms without
data, and data terms missing from the template, are an error that lists them.

Convergence: the fit stops when every component of the gradient is below --gradient-tol
times its data noise (for exact data, when the mean residual is below 1e-10). A fit
that does not converge exits with status 1, says why, leaves -o untouched and
writes its last iterate to OUT.unconverged.json.

Error bars: delta method, Cov(theta) = M Cov(e) M^T with M = (A^T R A)^{-1} A^T,
R = d<E>/d lambda at the solution, of order L or, on large lattices, L-1 (the
report's "error_bars_response_order"; the two differ by about 1%). The lower
orders L-4 to L-1 are fitted first, each from the solution below, and estimate
every coefficient's truncation error: its changes over those orders extrapolated
per parity (even and odd cluster sizes contribute unequally), times a safety
factor 2, calibrated against exact results (README). A WARNING says when some
coefficient's estimate exceeds its stderr. With --order auto (the default), the
order rises until the largest estimate is at most 0.1 x the median statistical
error and the fitted expectations' series have converged, until it reaches the automatic ceiling
(` + autoCeilingText + `;
past that, all the sites of a small lattice when that is cheap: there the expansion is
exact), or until the next order would take the fit past its work limit (6e10 units of D^3
work, about a minute on the reference 2-core machine, counted from the cost model
and the Newton iterations, so the same data give the same order on any machine);
the report says plainly when the truncation error matters. --budget only guards
the wall time: when this machine is too slow for it and it stops the rise first,
a WARNING says the order is machine-dependent ("order_stopped_by_budget" in the
report) and that a larger --budget gives the reproducible result. The report also gives the sufficient-temperature bound,
the number of term expectations whose expansion has not converged, chi^2/dof for
tied groups, and, with --truth, z-scores and L2/Linf errors.

Structure learning: every coefficient gets "significant": true/false from the
two-sided z = |coeff|/stderr with the Benjamini-Hochberg rule at false-discovery
rate --fdr (default q = 0.05).

` + scaleFromHelp + `

Output: the fitted model as JSON with a per-term "stderr" and a "fit" report object
(it feeds straight back into 'warmfit predict'), or with --format csv the table
pauli,sites,coeff,stderr,significant. A plain-language summary goes to stderr, with
WARNING lines whenever the result could mislead.

` + csvOutputHelp + ` For --format csv the sidecar holds the whole
fit report (the "fit" object of the JSON output) under "fit".`

const fitExample = `# simulate, then learn back a disordered XXZ model on a 4x4 lattice
warmfit model --lattice square:4x4 --preset xxz --set Jxy=0.4,Jz=0.3,hz=0.2 --disorder 0.1 --beta 0.5 -o truth.json
warmfit model --lattice square:4x4 --preset xxz --set Jxy=1,Jz=1,hz=1 --beta 0.5 -o template.json
warmfit predict --model truth.json --order 8 -o e.csv
warmfit fit --model template.json --data e.csv --truth truth.json -o fitted.json

# snapshots of the same 16 qubits, fixed order, coefficients as CSV
warmfit sample --model truth.json --shots 20000 -o shots4.csv
warmfit fit --model template.json --data shots4.csv --order 5 --format csv -o fitted.csv`

func runFit(env *runEnv, args []string) error {
	o := fitOptions
	calibration, err := checkFitFlags(&o, args)
	if err != nil {
		return err
	}
	order := o.order.L
	if err := checkOutputs(withCSV("-o", o.out, o.csv), o.model, o.data, o.truth); err != nil {
		return err
	}
	tmpl, err := readModelFlag("--model", o.model, "the template model")
	if err != nil {
		return err
	}
	beta, betaSource := fitBeta(env, &o, tmpl)
	if calibration, err = checkFitScale(&o, tmpl, calibration, beta, betaSource); err != nil {
		return err
	}
	if done, err := fitMethodFirst(env, tmpl, beta); done {
		return err
	}
	truth, err := readFitTruth(&o, tmpl)
	if err != nil {
		return err
	}
	// A request past the limits is refused before the data are read, but
	// the estimate line waits for the data to parse: a file that does not
	// parse fails before any line about the work to come.
	var estimate bytes.Buffer
	if err := admitFit(&runEnv{Stdout: env.Stdout, Stderr: &estimate, Stdin: env.Stdin}, &o, tmpl, order); err != nil {
		env.Stderr.Write(estimate.Bytes())
		return err
	}
	est, dataSummary, err := fit.LoadEstimates(o.data, tmpl.Lattice, tmpl.Terms, fit.CovarianceOptions{Distance: o.covDist})
	if err != nil {
		return err
	}
	env.Stderr.Write(estimate.Bytes())
	kind := dataSummary.Kind
	opt, bar := fitRunOptions(env, &o, tmpl, order)
	announceFit(env, &o, tmpl, kind, beta, betaSource, calibration)
	res, err := fit.Fit(&fit.Problem{Lattice: tmpl.Lattice, Terms: tmpl.Terms, Data: est, Beta: beta}, opt)
	bar.Done()
	refit := func(order int) (*fit.Result, error) {
		if err := admitFit(env, &o, tmpl, order); err != nil {
			return nil, err
		}
		ropt, rbar := fitRunOptions(env, &o, tmpl, order)
		defer rbar.Done()
		return fit.Fit(&fit.Problem{Lattice: tmpl.Lattice, Terms: tmpl.Terms, Data: est, Beta: beta}, ropt)
	}
	var done bool
	var estimator *fit.ReportEstimator
	if done, res, estimator, err = fitMethodAfter(env, tmpl, beta, res, err, refit); done {
		return err
	}
	if err != nil {
		return fmt.Errorf("%s: %w", o.data, err)
	}
	if calibration != nil && res.Converged {
		if res, err = applyEnergyScale(env.Stderr, res, *calibration); err != nil {
			return err
		}
	}
	rep, cmp, err := fitReport(env, &o, res, order, kind, truth)
	if err != nil {
		return err
	}
	rep.Estimator = estimator
	fitSummary(env.Stderr, res, rep, cmp)
	return writeFitResult(env, &o, tmpl, res, rep, cmp)
}

// checkFitFlags refuses flag values out of range, before any file is
// read, and parses --scale-from (nil without it).
func checkFitFlags(o *fitFlags, args []string) (*fit.Calibration, error) {
	if len(args) > 0 {
		return nil, usagef("unexpected argument %q", args[0])
	}
	if o.model == "" {
		return nil, usagef("--model is required")
	}
	if o.data == "" {
		return nil, usagef("--data is required")
	}
	if _, err := parseChoice("--format", string(o.format), formatJSON, formatCSV); err != nil {
		return nil, err
	}
	if o.format != formatCSV {
		if err := o.csv.misuse("the fitted model (JSON); add --format csv"); err != nil {
			return nil, err
		}
	}
	if o.oldTol != 0 {
		return nil, usagef("fit --tol was renamed --gradient-tol (a stopping rule on the gradient); elsewhere --tol is a truncation error: write --gradient-tol %v", o.oldTol)
	}
	if err := checkBudgetFlag(o.budget); err != nil {
		return nil, err
	}
	if err := checkWorkersFlag(o.workers); err != nil {
		return nil, err
	}
	if o.covDist < 0 {
		return nil, usagef("--cov-distance %d: want a graph distance >= 0 (0 keeps variances only)", o.covDist)
	}
	if !(o.tol > 0) || o.maxIter < 1 || !(o.fdr > 0 && o.fdr < 1) {
		return nil, usagef("--gradient-tol and --fdr must be in range (tol > 0, 0 < fdr < 1) and --max-iter at least 1")
	}
	if _, err := parseChoice("--start", string(o.start), startFirstOrder, startTemplate); err != nil {
		return nil, err
	}
	if o.scale == "" {
		return nil, nil
	}
	c, err := parseScaleFrom(o.scale)
	if err != nil {
		return nil, err
	}
	return &c, nil
}

// fitBeta is the inverse temperature of the fit and where it comes from:
// --beta, else the template's (0, unknown, for a template that is itself
// a fit at unknown temperature).
func fitBeta(env *runEnv, o *fitFlags, tmpl *model.Model) (beta float64, betaSource string) {
	beta = tmpl.Beta
	betaSource = "from " + o.model
	if fittedWithoutScale(tmpl) && !o.beta.set {
		// Its beta = 1 is a convention: the temperature is still unknown.
		beta = 0
		fmt.Fprintf(env.Stderr, "fit: %s holds a fit at unknown temperature (beta*lambda); its beta = 1 is not used\n", o.model)
	}
	if o.beta.set {
		beta, betaSource = o.beta.value, "from --beta"
	}
	return beta, betaSource
}

// checkFitScale resolves the calibrated term of --scale-from against the
// template and refuses --scale-from and --calibrate where they do not
// apply.
func checkFitScale(o *fitFlags, tmpl *model.Model, calibration *fit.Calibration, beta float64, betaSource string) (*fit.Calibration, error) {
	if calibration != nil {
		c, err := resolveScaleGroup(*calibration, tmpl.Terms, o.scale)
		if err != nil {
			return nil, err
		}
		calibration = &c
	}
	switch mo := fitMethodOptions; {
	case calibration != nil && mo.method == fitMethodStationary:
		return nil, usagef("--scale-from fixes the scale of the expansion fit at unknown temperature; --method stationary takes its known coefficients from --calibrate NAME=VALUE")
	case o.order.L > 0 && mo.method == fitMethodStationary:
		return nil, usagef("--order sets the order of the expansion fit; --method stationary fits no expansion (its thermal match chooses its own order): drop --order, or use --method combined to combine an order-%d expansion fit with the stationarity constraints", o.order.L)
	case mo.calibrate != "" && mo.method == fitMethodExpansion:
		return nil, usagef("--calibrate is for --method stationary (or auto, combined); the expansion fit at unknown temperature fixes its energy scale with --scale-from TERM=VALUE (one calibrated coefficient) or --scale-from beta=B")
	}
	if calibration != nil && beta > 0 {
		return nil, usagef("--scale-from fixes the energy scale of a fit without beta, but beta is %s (%s): drop --scale-from, or fit at unknown temperature (no --beta, no beta in the template)", fmtFloat(beta), betaSource)
	}
	return calibration, nil
}

// readFitTruth reads --truth (nil without it) and refuses a model on
// another lattice than the template's.
func readFitTruth(o *fitFlags, tmpl *model.Model) (*model.Model, error) {
	if o.truth == "" {
		return nil, nil
	}
	truth, err := readModelFlag("--truth", o.truth, "the true model")
	if err != nil {
		return nil, err
	}
	if !truth.Lattice.SameGraph(tmpl.Lattice) {
		return nil, usagef("--truth %s is a model on %s (%d sites), but the template %s is on %s (%d sites): their terms cannot be compared; give the true model of this lattice",
			o.truth, truth.Lattice.Spec, truth.Lattice.NumSites(), o.model, tmpl.Lattice.Spec, tmpl.Lattice.NumSites())
	}
	return truth, nil
}

// admitFit prints the estimate of the expansion's time and memory and
// refuses a fit past the machine or --budget (order 0: --order auto).
func admitFit(env *runEnv, o *fitFlags, tmpl *model.Model, order int) error {
	exp, err := cluster.NewExpansion(tmpl.Lattice, tmpl.Terms)
	if err != nil {
		return nil // the fit reports it
	}
	policy := cluster.NewOrderPolicy(tmpl.Lattice, tmpl.Terms)
	if order > 0 {
		e := expansionEstimate(exp, tmpl.Lattice.NumSites(), order, true, "--order")
		e.What = "one evaluation of the " + e.What + " (a fit makes several)"
		return admit(env.Stderr, "fit", e, o.budget)
	}
	return admitExpansion(env, "fit", exp, tmpl.Lattice.NumSites(), 0, true, policy, o.budget)
}

// fitRunOptions are the fitter's options from the flags, with the log
// and the progress bar on stderr.
func fitRunOptions(env *runEnv, o *fitFlags, tmpl *model.Model, order int) (fit.Options, *progressBar) {
	opt := fit.Options{
		Order: order, MaxOrder: o.maxOrder, Budget: o.budget, Tol: o.tol, MaxIter: o.maxIter,
		FDR: o.fdr, Workers: o.workers,
	}
	if o.start == startTemplate {
		opt.Start = make([]float64, len(tmpl.Terms))
		for k, t := range tmpl.Terms {
			opt.Start[k] = t.Coeff
		}
	}
	verbose := o.verbose
	opt.Log = func(format string, args ...any) {
		line := fmt.Sprintf(format, args...)
		if verbose || !strings.Contains(line, "iteration") {
			fmt.Fprintln(env.Stderr, "fit: "+line)
		}
	}
	bar := newProgressBar(env, "expanding")
	opt.Progress = bar.Update
	return opt, bar
}

// announceFit says on stderr what is fitted to what, and at which beta.
func announceFit(env *runEnv, o *fitFlags, tmpl *model.Model, kind fit.DataKind, beta float64, betaSource string, calibration *fit.Calibration) {
	n := tmpl.Lattice.NumSites()
	fmt.Fprintf(env.Stderr, "fit: %s, %d sites, %d terms; data: %s %s\n", tmpl.Lattice.Spec.Kind, n, len(tmpl.Terms), kind, o.data)
	if beta > 0 {
		fmt.Fprintf(env.Stderr, "fit: beta %s (%s)\n", fmtFloat(beta), betaSource)
	} else {
		fmt.Fprintln(env.Stderr, "fit: beta unknown (neither --beta nor the template gives one): fitting the products beta*lambda, written with beta = 1")
		if calibration == nil {
			fmt.Fprintln(env.Stderr, "fit: every coefficient below is beta*lambda; --scale-from TERM=VALUE (one calibrated coefficient) or --scale-from beta=B turns them into lambda")
		}
	}
}

// fitReport is the report of the fit and, with a truth (non-nil), the
// comparison against it.
func fitReport(env *runEnv, o *fitFlags, res *fit.Result, order int, kind fit.DataKind, truth *model.Model) (*fit.Report, *fit.TruthComparison, error) {
	mode := fit.OrderAuto
	if order > 0 {
		mode = fit.OrderFixed
	}
	rep := fit.NewReport(res, mode, kind, o.data, o.tol)
	if truth == nil {
		return rep, nil, nil
	}
	scale, why := truthScale(res, truth, o.truth)
	if why != "" {
		fmt.Fprintf(env.Stderr, "fit: %s\n", why)
		rep.Notes = append(rep.Notes, why)
	}
	cmp, err := fit.CompareTruth(res, truth.Terms, scale)
	if err != nil {
		return nil, nil, err
	}
	rep.SetTruth(cmp, res, o.truth)
	betaAgainstTruth(env.Stderr, rep, res, truth)
	return rep, cmp, nil
}

// writeFitResult writes a converged fit to -o as JSON or CSV; an
// unconverged one leaves -o untouched, goes to OUT.unconverged.json and
// is an error.
func writeFitResult(env *runEnv, o *fitFlags, tmpl *model.Model, res *fit.Result, rep *fit.Report, cmp *fit.TruthComparison) error {
	if !res.Converged {
		path := fitUnconvergedPath(o.out)
		werr := writeFileAtomic(path, func(w io.Writer) error { return fitWriteModel(w, tmpl, res, rep) })
		if werr != nil {
			return fmt.Errorf("the fit did not converge (%s); writing the last iterate also failed: %v", res.Reason, werr)
		}
		return fmt.Errorf("the fit did not converge: %s; the last iterate is in %s (not an estimate)", res.Reason, path)
	}
	if o.format == formatCSV {
		meta, err := fitCSVMeta(res, rep, o.model, o.data)
		if err != nil {
			return err
		}
		return writeCSVResult(env, o.out, o.csv, meta, func(w io.Writer) error { return fitWriteCSV(w, res, cmp) })
	}
	return writeOutput(env, o.out, func(w io.Writer) error { return fitWriteModel(w, tmpl, res, rep) })
}

// fitUnconvergedPath names the file for the last iterate of a fit that
// did not converge: beside -o (or in the current directory when the
// output is stdout or a device), never over -o and never over an existing
// file: a numbered name is taken when the plain one exists.
func fitUnconvergedPath(out string) string {
	dir, base := "", "warmfit-fit"
	if out != "" && out != "-" {
		if fi, err := os.Stat(out); err != nil || fi.Mode().IsRegular() {
			dir, base = filepath.Split(out)
			base = strings.TrimSuffix(base, filepath.Ext(base))
		}
	}
	path := filepath.Join(dir, base+".unconverged.json")
	for i := 2; ; i++ {
		if _, err := os.Lstat(path); os.IsNotExist(err) {
			return path
		}
		path = filepath.Join(dir, fmt.Sprintf("%s.unconverged-%d.json", base, i))
	}
}

// fitWriteModel writes the fitted model with per-term stderr and the fit
// report; terms get "significant" when it was computed.
func fitWriteModel(w io.Writer, tmpl *model.Model, res *fit.Result, rep *fit.Report) error {
	raw, err := rep.JSON()
	if err != nil {
		return fmt.Errorf("fit report: %v", err)
	}
	terms := append([]lattice.Term(nil), res.Terms...)
	if res.Significance != nil {
		for k := range terms {
			flag := res.Significance.Significant[res.Params.Of[k]]
			terms[k].Significant = &flag
		}
	}
	m := &model.Model{Lattice: tmpl.Lattice, Beta: res.Beta, Terms: terms, Units: tmpl.Units, Fit: raw}
	if !res.CoefficientsAreLambda() {
		m.Units = unscaledUnits
	}
	return model.Write(w, m)
}

// fitCSVMeta is the metadata of the fit CSV: the report's headline and
// warnings as lines, the whole report as the field "fit".
func fitCSVMeta(res *fit.Result, rep *fit.Report, template, data string) (*csvMeta, error) {
	raw, err := rep.JSON()
	if err != nil {
		return nil, fmt.Errorf("fit report: %v", err)
	}
	meta := &csvMeta{Command: "fit", Contents: "one row per template term: its fitted coefficient"}
	meta.line("warmfit fit: converged %t, order %d, %s", res.Converged, res.Order, map[bool]string{true: "coefficients are lambda", false: "beta unknown: coefficients are beta*lambda"}[res.CoefficientsAreLambda()])
	if es := res.EnergyScale; es != nil {
		meta.line("energy scale from %s: beta = %s (stderr %s)", es.Calibration, fmtFloat(es.Beta), fmtFloat(es.BetaStderr))
	}
	for _, warn := range rep.Warnings {
		meta.line("WARNING: %s", warn)
	}
	meta.set("template", template)
	meta.set("data", data)
	meta.set("converged", res.Converged)
	meta.set("order", res.Order)
	meta.set("beta", res.Beta)
	meta.set("beta_known", res.BetaKnown)
	meta.set("beta_source", rep.BetaSource)
	meta.set("coefficients", rep.CoeffMeaning)
	meta.set("fit", raw)
	return meta, nil
}

// fitWriteCSV writes pauli,sites,coeff,stderr,significant, and with a
// comparison against the truth (cmp non-nil) the true coefficient and the
// pull z = (coeff - true)/stderr of every term (z blank without a stderr).
func fitWriteCSV(w io.Writer, res *fit.Result, cmp *fit.TruthComparison) error {
	cw := csv.NewWriter(w)
	header := []string{"pauli", "sites", "coeff", "stderr", "significant", "true", "z"}
	if !res.CoefficientsAreLambda() {
		// Say it in the column names: these are not lambda.
		header = []string{"pauli", "sites", "beta_coeff", "beta_coeff_stderr", "significant", "true_beta_coeff", "z"}
	}
	if cmp == nil {
		header = header[:5]
	}
	if err := cw.Write(header); err != nil {
		return err
	}
	for k, t := range res.Terms {
		if math.IsNaN(t.Coeff) || math.IsInf(t.Coeff, 0) {
			return fmt.Errorf("term %s: coefficient %v is not finite", t.Key(), t.Coeff)
		}
		se, sig := "", ""
		if t.HasStderr {
			se = fmtExact(t.Stderr)
		}
		if res.Significance != nil {
			sig = strconv.FormatBool(res.Significance.Significant[res.Params.Of[k]])
		}
		rec := []string{t.Pauli, lattice.SitesString(t.Sites), fmtExact(t.Coeff), se, sig}
		if cmp != nil {
			z := ""
			if v := cmp.Z[k]; !math.IsNaN(v) && !math.IsInf(v, 0) {
				z = fmtExact(v)
			}
			rec = append(rec, fmtExact(cmp.True[k]), z)
		}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// newtonIterations says how many Newton iterations a fit took, in all
// and at its final order: the one wording of stderr, report.md and the
// demo, so that no two of them count differently.
func newtonIterations(total, atOrder, order int) string {
	if total == atOrder {
		return plural(total, "Newton iteration")
	}
	return fmt.Sprintf("%s (%d at order %d)", plural(total, "Newton iteration"), atOrder, order)
}

// fitSummary writes the plain-language summary to stderr.
func fitSummary(w io.Writer, res *fit.Result, rep *fit.Report, cmp *fit.TruthComparison) {
	p := func(format string, args ...any) { fmt.Fprintf(w, "fit: "+format+"\n", args...) }
	status := "converged"
	if !res.Converged {
		status = "did NOT converge"
	}
	grad := "gradient " + fmtG3(res.GradientSigma) + " x data noise"
	if res.Exact {
		grad = "mean residual " + fmtG3(res.GradientAbs) + " (exact data)"
	}
	how := "order given by --order"
	if rep.OrderMode == "auto" {
		word := "orders"
		if len(rep.Truncation.Orders) == 1 {
			word = "order"
		}
		how = "order chosen automatically; fitted at " + word + " " + joinInts(rep.Truncation.Orders, ", ")
	}
	p("%s at order %d (%s) after %s, %s, %.1fs",
		status, res.Order, how, newtonIterations(res.TotalIterations, res.Iterations, res.Order), grad, res.Elapsed.Seconds())
	p("%d terms, %d fitted parameters", len(res.Terms), res.Params.NumParams())
	if n := len(res.Unmeasured); n > 0 {
		p("%d terms had no data and were fitted through their group (moment matching on measured members)", n)
	}
	if res.ThetaStderr != nil && !res.Exact {
		p("error bars by the delta method (%s): median stderr %s", res.ErrorMethod, fmtG3(rep.Truncation.StatError))
	}
	tr := res.Truncation
	switch {
	case tr.Exact:
		p("truncation: none, the order covers the whole lattice")
	case tr.Known:
		p("truncation error %s (largest of a coefficient, extrapolated from the changes over the last orders) vs target %s (from the final error bars; each order line above compared with the target of its own fit); %d parameters with truncation error above their stderr", fmtG3(tr.Error), fmtG3(tr.Target), tr.OverStderr)
	case res.Converged:
		p("truncation error unknown")
	}
	if rep.Chi2 != nil {
		p("chi2/dof = %s over %d degrees of freedom (p = %s; diagonal approximation)", fmtG3(rep.Chi2.PerDof), rep.Chi2.Dof, fmtG3(rep.Chi2.P))
	}
	if b := rep.Threshold.Beta; b != nil {
		betaText := fmtG3(res.Beta)
		if !res.CoefficientsAreLambda() {
			betaText = "1 by convention (the coefficients are beta*lambda)"
		}
		p("sufficient-temperature bound beta < %s (term-overlap degree %d); beta = %s; %d of %d expectations unconverged in the expansion",
			fmtG3(*b), rep.Threshold.Degree, betaText, rep.Series.Untrusted, rep.Series.Terms)
	}
	if s := rep.Significance; s != nil {
		p("significant (Benjamini-Hochberg, q = %g): %d of %d parameters", s.Q, s.Significant, s.Parameters)
	}
	if cmp != nil {
		line := fmt.Sprintf("against the truth: L2 error %s, largest error %s (%s)", fmtG3(cmp.L2), fmtG3(cmp.Linf), res.Terms[cmp.LargestErrorTerm].Key())
		if cmp.RMSZ > 0 {
			line += fmt.Sprintf(", pulls rms %s, largest pull |z| %s (%s)", fmtG3(cmp.RMSZ), fmtG3(cmp.MaxAbsZ), res.Terms[cmp.LargestPullTerm].Key())
		}
		if cmp.Missing > 0 {
			line += fmt.Sprintf(", %d true terms missing from the template", cmp.Missing)
		}
		p("%s", line)
	}
	for _, n := range res.Notes {
		p("note: %s", n)
	}
	for _, warn := range res.Warnings {
		fmt.Fprintf(w, "WARNING: %s\n", warn)
	}
}
