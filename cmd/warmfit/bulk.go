package main

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"sync"

	"github.com/spf13/pflag"

	"warmfit/fit/bulk"
)

// bulkFlags are the flags of "warmfit bulk".
type bulkFlags struct {
	models      []string
	start       []string
	fix         []string
	phonon      bulkPhonon
	perFormula  float64
	unknownErr  []string
	cwAbove     float64
	cwChi0      bool
	rejectBelow float64
	sizeTol     float64
	engine      bulkEngine
	order       int
	out         string
	curves      string
	figures     string
	demo        string
	csv         csvFlags
	// orders overrides defaultBulkOrder per lattice (set by the demo).
	orders map[string]int
}

// bulkOptions holds the flags of the current invocation; Flags resets
// them.
var bulkOptions bulkFlags

// bulkEngine is the value of bulk --engine: the forward model.
type bulkEngine string

const (
	engineExpansion bulkEngine = "expansion" // linked-cluster expansion of the infinite lattice
	engineClusters  bulkEngine = "clusters"  // exact diagonalisation of periodic clusters
)

// bulkPhonon is the value of bulk --phonon: the lattice heat capacity.
type bulkPhonon string

const (
	phononT3   bulkPhonon = "T3"    // a T^3
	phononT3T5 bulkPhonon = "T3+T5" // a T^3 + b T^5
	phononNone bulkPhonon = "none"  // no lattice term
)

func init() {
	register(&command{
		Name:    "bulk",
		Short:   "fit uniform couplings of a spin model to measured chi(T), C(T), M(H) curves",
		Usage:   "warmfit bulk [--model LATTICE[+J2][+Delta]]... [--start NAME=VALUE]... [--fix NAME=VALUE]... [-o FIT.json] [--curves C.csv] [--figures DIR] FILE.csv...\n       warmfit bulk --demo DIR",
		Long:    bulkLong,
		Example: bulkExample,
		Flags: func(fs *pflag.FlagSet) {
			o := &bulkOptions
			*o = bulkFlags{}
			fs.StringArrayVar(&o.models, "model", nil, "candidate `LATTICE[+J2][+Delta]` (chain, square, triangular, honeycomb); repeat to compare (default chain)")
			fs.StringArrayVar(&o.start, "start", nil, "start value `NAME=VALUE` (J=7.5meV, J=87K, g=2.1, chi0=-1e-4, rho=0.01, a=2e-4, Delta=1, J2=0); repeatable")
			fs.StringArrayVar(&o.fix, "fix", nil, "hold a parameter at `NAME=VALUE` instead of fitting it; repeatable")
			fs.StringVar((*string)(&o.phonon), "phonon", string(phononT3), "lattice heat capacity: T3 (a T^3), T3+T5 (a T^3 + b T^5) or none")
			fs.Float64Var(&o.perFormula, "sites-per-formula", 1, "magnetic spin-1/2 sites per formula unit (molar curves are per mole of formula units)")
			fs.StringSliceVar(&o.unknownErr, "unknown-stderr", nil, "`QUANTITIES` (chi,C,M) whose errors are unknown: estimated from the residual scatter")
			fs.Float64Var(&o.cwAbove, "cw-above", 0, "lowest temperature (K) of the Curie–Weiss first look (default: a quarter of the hottest chi temperature)")
			fs.BoolVar(&o.cwChi0, "cw-chi0", true, "fit a temperature-independent chi0 in the Curie–Weiss first look")
			fs.Float64Var(&o.rejectBelow, "reject-below", bulk.DefaultRejectBelow, "p-value below which a candidate is rejected")
			fs.StringVar((*string)(&o.engine), "engine", string(engineExpansion), "forward model: expansion (linked-cluster expansion of the infinite lattice) or clusters (exact diagonalisation of 12-site periodic clusters; faster, trusted only higher)")
			fs.IntVar(&o.order, "order", 0, "expansion order, the largest cluster (default: chain 13, honeycomb 11, square 10, triangular 9; with +Delta chain 10, others 8)")
			fs.Float64Var(&o.sizeTol, "finite-size-tol", bulk.DefaultFiniteSizeTolerance, "relative agreement of the two periodic clusters that marks a curve trusted")
			addOutputFlag(fs, &o.out, "the fit (JSON)")
			fs.StringVar(&o.curves, "curves", "", "write data against model curves (CSV) to `FILE`")
			fs.StringVar(&o.figures, "figures", "", "write one SVG figure per quantity into `DIR`")
			fs.StringVar(&o.demo, "demo", "", "write the invented demo compound's curves into `DIR` and fit them (results go there too)")
			addCSVFlags(fs, &o.csv)
		},
		Run: runBulk,
	})
}

const bulkLong = `Materials mode: the few uniform couplings of a spin-1/2 model are fitted to bulk
thermodynamic curves of a magnetic material: the molar susceptibility chi(T), the
specific heat C(T) and the magnetisation M(H) at fixed T. The model, in the materials
convention (S = sigma/2, energies in kelvin, J > 0 antiferromagnetic), is

    H = J sum_<ij> (S^x S^x + S^y S^y + Delta S^z S^z) + J2 sum_<<ij>> S_i.S_j - g mu_B B sum_i S^z_i

on a lattice (--model chain, square, triangular, honeycomb; +J2 and +Delta add those
couplings), with the terms a practitioner adds: chi0 (temperature independent), a
fraction rho of free spin-1/2 impurities (Curie tail, Brillouin M(H)), and a lattice
heat capacity a T^3 (+ b T^5). Constants are CODATA 2018.

Input files are CSV with a header of NAME [UNIT] columns: T [K]; chi [emu/mol],
[emu/(mol Oe)], [cm^3/mol] or [m^3/mol]; C [J/(mol K)] or [mJ/(mol K)]; M [mu_B/f.u.]
with H [T]; each quantity with its standard error NAME_err in the same kind of unit.
Errors that are not known must be said so: a column "chi_err [unknown]" or
--unknown-stderr chi; they are then estimated from the residual scatter, and the
goodness of fit is not tested. One file may hold several quantities; chi and C rows
must be in monotone T without repeats, M rows in one block per temperature.

The curves of each candidate come from a forward model that states the temperature
range it trusts; only points inside that range are fitted, the range is recomputed
from the fitted couplings and the fit repeated until it settles, and every point left
out is reported (nothing is extrapolated). Data entirely below the range are refused
with the lowest usable temperature. The forward model (--engine) is the
linked-cluster expansion of the infinite lattice, resummed and trusted where its last
orders agree, or exact diagonalisation of 12-site periodic clusters, trusted where they
agree with smaller ones to --finite-size-tol (faster, but trusted only at higher T).

The first look is a Curie–Weiss fit chi = C/(T + theta) of the high-T tail (theta > 0
antiferromagnetic; theta = z J/4 for spin-1/2), which also gives the start values of J
and g. Then each candidate is fitted by Levenberg–Marquardt with analytic derivatives;
the JSON output has the parameters with standard errors, their covariance and
correlation matrices, chi^2/dof and its p-value for each candidate over its own trusted
range, and a ranking: candidates with p < --reject-below are rejected, the rest are
ordered by AIC on the points every candidate trusts. Warnings go to stderr and into the
JSON.

--curves FILE writes the data against each candidate's curve as CSV, one row per data
point and candidate.
` + csvOutputHelp

const bulkExample = `# the invented demo compound: curves, fit, figures in ./orvanite
warmfit bulk --demo orvanite

# two candidate lattices on measured chi(T) and C(T)
warmfit bulk --model chain --model square --start J=4meV --fix chi0=-1.1e-4 \
    --curves curves.csv --figures figs -o fit.json chi.csv heat.csv`

func runBulk(env *runEnv, args []string) error {
	o := &bulkOptions
	if o.demo != "" {
		if len(args) > 0 {
			return usagef("--demo writes its own data; give no input files (got %q)", args[0])
		}
		return runBulkDemo(env, o.demo)
	}
	if len(args) == 0 {
		return usagef("no input files (or --demo DIR)")
	}
	if err := checkOutputs(withCSV("--curves", o.curves, o.csv, outputFile{"-o", o.out}), args...); err != nil {
		return err
	}
	job, err := newBulkJob(args)
	if err != nil {
		return err
	}
	return job.run(env)
}

// bulkJob is one invocation: inputs, candidates and where results go.
type bulkJob struct {
	files      []string
	data       []*bulk.Series
	specs      []string
	extras     [][]string
	start      map[string]float64
	fixed      map[string]bool
	phononT5   bool
	perFormula float64
	out        string
	curves     string
	figures    string
}

// newBulkJob checks the flags (usage errors) and reads the data.
func newBulkJob(files []string) (*bulkJob, error) {
	o := &bulkOptions
	j := &bulkJob{files: files, out: o.out, curves: o.curves, figures: o.figures, perFormula: o.perFormula,
		start: map[string]float64{}, fixed: map[string]bool{}}
	if !(o.perFormula > 0) {
		return nil, usagef("--sites-per-formula %v: must be positive", o.perFormula)
	}
	if o.curves == "" && o.demo == "" {
		if err := o.csv.misuse("the fit (JSON); they go with --curves"); err != nil {
			return nil, err
		}
	}
	if !(o.rejectBelow > 0 && o.rejectBelow < 1) {
		return nil, usagef("--reject-below %v: must be in (0, 1)", o.rejectBelow)
	}
	if !(o.sizeTol > 0 && o.sizeTol < 1) {
		return nil, usagef("--finite-size-tol %v: must be in (0, 1)", o.sizeTol)
	}
	if _, err := parseChoice("--engine", string(o.engine), engineExpansion, engineClusters); err != nil {
		return nil, err
	}
	if o.order < 0 || o.order > 16 {
		return nil, usagef("--order %d: want 1-16", o.order)
	}
	if _, err := parseChoice("--phonon", string(o.phonon), phononT3, phononT3T5, phononNone); err != nil {
		return nil, err
	}
	j.phononT5 = o.phonon == phononT3T5
	if o.phonon == phononNone {
		j.fixed[bulk.ParamPhononA] = true
		j.start[bulk.ParamPhononA] = 0
	}
	if err := parseParamFlags(o.start, "start", j.start, nil); err != nil {
		return nil, err
	}
	if err := parseParamFlags(o.fix, "fix", j.start, j.fixed); err != nil {
		return nil, err
	}
	specs := o.models
	if len(specs) == 0 {
		specs = []string{"chain"}
	}
	for _, s := range specs {
		lat, extra, err := parseModelSpec(s)
		if err != nil {
			return nil, err
		}
		if slices.Contains(j.specs, s) {
			return nil, usagef("--model %s given twice", s)
		}
		j.specs = append(j.specs, s)
		j.extras = append(j.extras, append([]string{lat}, extra...))
	}
	unknown := map[bulk.Quantity]bool{}
	for _, q := range o.unknownErr {
		switch q {
		case "chi":
			unknown[bulk.Susceptibility] = true
		case "C":
			unknown[bulk.HeatCapacity] = true
		case "M":
			unknown[bulk.Magnetization] = true
		default:
			return nil, usagef("--unknown-stderr %q: want chi, C or M", q)
		}
	}
	for _, f := range files {
		if f == j.out || f == j.curves {
			return nil, usagef("output file %s is also an input", f)
		}
		ss, err := bulk.ReadFile(f, bulk.ReadOptions{UnknownStderr: unknown})
		if err != nil {
			return nil, err
		}
		j.data = append(j.data, ss...)
	}
	return j, nil
}

// parseParamFlags reads NAME=VALUE flags into values (and marks them in
// fixed when not nil).
func parseParamFlags(list []string, flag string, values map[string]float64, fixed map[string]bool) error {
	for _, kv := range list {
		name, text, ok := strings.Cut(kv, "=")
		if !ok {
			return usagef("--%s %q: want NAME=VALUE", flag, kv)
		}
		name = strings.TrimSpace(name)
		v, err := bulk.ParseParamValue(name, text)
		if err != nil {
			return usagef("--%s: %v", flag, err)
		}
		values[name] = v
		if fixed != nil {
			fixed[name] = true
		}
	}
	return nil
}

// parseModelSpec splits "square+J2+Delta" into the lattice and its extra
// couplings.
func parseModelSpec(s string) (string, []string, error) {
	parts := strings.Split(strings.TrimSpace(s), "+")
	lat := parts[0]
	if !slices.Contains(bulk.PeriodicLattices(), lat) {
		return "", nil, usagef("--model %s: unknown lattice %q (known: %s)", s, lat, strings.Join(bulk.PeriodicLattices(), ", "))
	}
	var extra []string
	for _, p := range parts[1:] {
		if p != bulk.ParamJ2 && p != bulk.ParamDelta {
			return "", nil, usagef("--model %s: unknown term %q (want +J2 or +Delta)", s, p)
		}
		if slices.Contains(extra, p) {
			return "", nil, usagef("--model %s: %s given twice", s, p)
		}
		extra = append(extra, p)
	}
	return lat, extra, nil
}

// run fits and writes every output.
func (j *bulkJob) run(env *runEnv) error {
	res, err := j.fit(env)
	if err != nil {
		return err
	}
	printBulkSummary(env.Stderr, res)
	if j.curves != "" {
		meta := &csvMeta{Command: "bulk", Contents: "one row per data point and candidate model: data, model curve, pull"}
		meta.set("data_files", j.files)
		var names []string
		for _, c := range res.cmp.Candidates {
			names = append(names, c.Name)
		}
		meta.set("candidates", names)
		meta.set("best", res.cmp.Candidates[res.cmp.Ranking[0]].Name)
		for _, w := range res.warnings {
			meta.line("WARNING: %s", w)
		}
		if err := writeCSVResult(env, j.curves, bulkOptions.csv, meta, func(w io.Writer) error { return writeBulkCurves(w, res) }); err != nil {
			return err
		}
	}
	if j.figures != "" {
		if err := writeBulkFigures(j.figures, res); err != nil {
			return err
		}
	}
	return writeOutput(env, j.out, func(w io.Writer) error { return writeBulkJSON(w, res) })
}

// bulkRun is everything the outputs report.
type bulkRun struct {
	job        *bulkJob
	curieWeiss *bulk.CurieWeiss
	cmp        *bulk.Comparison
	warnings   []string
}

// fit runs the first look and the candidates.
func (j *bulkJob) fit(env *runEnv) (*bulkRun, error) {
	o := &bulkOptions
	r := &bulkRun{job: j}
	var chi *bulk.Series
	for _, s := range j.data {
		if s.Quantity == bulk.Susceptibility && chi == nil {
			chi = s
		}
	}
	if chi != nil {
		cw, err := bulk.FitCurieWeiss(chi, bulk.CurieWeissOptions{Above: o.cwAbove, Chi0: o.cwChi0})
		if err != nil {
			r.warnings = append(r.warnings, "Curie–Weiss first look failed: "+err.Error())
		}
		r.curieWeiss = cw
	}
	var cands []*bulk.Candidate
	for i, spec := range j.specs {
		c, err := j.candidate(spec, j.extras[i], r.curieWeiss)
		if err != nil {
			return nil, err
		}
		cands = append(cands, c)
	}
	fmt.Fprintf(env.Stderr, "fitting %d candidate(s) to %d curve(s)...\n", len(cands), len(j.data))
	var progressMu sync.Mutex
	progress := func(name string, round, used int, trustedFromK float64) {
		progressMu.Lock()
		defer progressMu.Unlock()
		fmt.Fprintf(env.Stderr, "  %s: round %d fitted %d points (model trusted from %s K)\n", name, round, used, fmtG3(trustedFromK))
	}
	cmp, err := bulk.Compare(cands, j.data, bulk.FitOptions{Progress: progress}, o.rejectBelow)
	if err != nil {
		return nil, err
	}
	r.cmp = cmp
	r.collectWarnings()
	for _, w := range r.warnings {
		fmt.Fprintf(env.Stderr, "WARNING: %s\n", w)
	}
	return r, nil
}

// candidate builds one candidate; J and g start from the Curie–Weiss
// first look unless given.
func (j *bulkJob) candidate(spec string, latExtra []string, cw *bulk.CurieWeiss) (*bulk.Candidate, error) {
	fwd, err := newForwardModel(latExtra[0], slices.Contains(latExtra[1:], bulk.ParamJ2), slices.Contains(latExtra[1:], bulk.ParamDelta))
	if err != nil {
		return nil, err
	}
	start := map[string]float64{}
	for k, v := range j.start {
		start[k] = v
	}
	if cw != nil {
		if _, ok := start[bulk.ParamJ]; !ok {
			if jj, _ := cw.SpinHalfExchange(fwd.Coordination()); jj != 0 {
				start[bulk.ParamJ] = jj
			}
		}
		if _, ok := start[bulk.ParamG]; !ok {
			if g, _ := cw.SpinHalfG(j.perFormula); g > 1 && g < 3 {
				start[bulk.ParamG] = g
			}
		}
	}
	c, err := bulk.NewCandidate(spec, fwd, j.data, latExtra[1:], j.phononT5, start, j.fixed)
	if err != nil {
		return nil, usagef("%v", err)
	}
	c.SitesPerFormula = j.perFormula
	return c, nil
}

// newForwardModel builds the forward model chosen by --engine.
func newForwardModel(lattice string, withJ2, withDelta bool) (bulk.ForwardModel, error) {
	o := &bulkOptions
	if o.engine == engineClusters {
		return bulk.NewPeriodicClusterModel(lattice, bulk.PeriodicClusterOptions{Tolerance: o.sizeTol})
	}
	order := o.order
	if order == 0 {
		order = defaultBulkOrder(lattice, withDelta)
		if k, ok := o.orders[lattice]; ok {
			order = k
		}
	}
	return bulk.NewExpansionModel(lattice, order, bulk.ExpansionOptions{J2: withJ2, Anisotropic: withDelta})
}

// defaultBulkOrder is the expansion order used without --order: an
// evaluation with derivatives takes about a second of one core for the
// isotropic models (total-spin blocks); the anisotropic ones need S^z
// blocks and eigenvectors, so they stay lower.
func defaultBulkOrder(lattice string, anisotropic bool) int {
	if anisotropic {
		if lattice == "chain" {
			return 10
		}
		return 8
	}
	switch lattice {
	case "chain":
		return 13
	case "honeycomb":
		return 11
	case "square":
		return 10
	}
	return 9
}

// collectWarnings gathers the warnings of every fit and of the ranking.
func (r *bulkRun) collectWarnings() {
	cmp := r.cmp
	for i, c := range cmp.Candidates {
		if err := cmp.Errors[i]; err != nil {
			r.warnings = append(r.warnings, fmt.Sprintf("candidate %s was not fitted: %v", c.Name, err))
			continue
		}
		for _, w := range cmp.Own[i].Warnings {
			r.warnings = append(r.warnings, fmt.Sprintf("candidate %s: %s", c.Name, w))
		}
	}
	best := cmp.Ranking[0]
	for _, i := range cmp.Ranking[1:] {
		if f := cmp.Own[i]; !cmp.Rejected[i] && 2*f.Points < cmp.Own[best].Points {
			r.warnings = append(r.warnings, fmt.Sprintf("candidate %s is not rejected, but its model is trusted on only %d of the data points (the best, %s, on %d): it was tested only where the candidates differ least, which says little for it",
				cmp.Candidates[i].Name, f.Points, cmp.Candidates[best].Name, cmp.Own[best].Points))
		}
	}
	if cmp.Rejected[best] {
		r.warnings = append(r.warnings, fmt.Sprintf("every candidate is rejected (p < %g): none of these models describes the data within their errors", cmp.RejectBelow))
	}
	if cmp.Own[best].ErrorsEstimated {
		r.warnings = append(r.warnings, "errors were estimated from the residual scatter: chi^2/dof is 1 by construction and no goodness-of-fit test was made")
	}
}

// ensureDir makes a directory for outputs.
func ensureDir(dir string) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("cannot create %s: %w", dir, err)
	}
	return nil
}

// figurePath names the figure of one quantity.
func figurePath(dir string, q bulk.Quantity) string {
	return filepath.Join(dir, "bulk_"+q.String()+".svg")
}
