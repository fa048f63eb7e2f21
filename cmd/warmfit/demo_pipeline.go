package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/spf13/pflag"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/lattice"
	"warmfit/lattice/model"
	"warmfit/validate"
)

// demoRun carries one run of the demo: where files go, the log of steps
// and commands, and every result the report and figures need.
type demoRun struct {
	env   *runEnv
	sc    demoScenario
	out   string
	start time.Time

	steps    []demoStep
	commands []demoCommand
	files    []string // written, relative to out

	device, template   *model.Model
	bases              []string
	fitted             *model.Model
	fitReport          *fit.Report
	array              *demoComparison
	patchTruth         *model.Model
	patchFitted        *model.Model
	patchReport        *fit.Report
	patch              *demoComparison
	patchBases         []string
	edCheck            *demoEDCheck
	temp               *demoTemperature
	plans              []*demoPlan
	planPredictedAtRun float64 // planner's largest stderr at the shots used
	failure            error   // the step that stopped the run, if any
}

// demoStep records one step of the pipeline for the report.
type demoStep struct {
	Number  int
	Title   string
	Elapsed time.Duration
}

// demoCommand is a warmfit command line that reproduces part of a step,
// with file names relative to the output directory.
type demoCommand struct {
	Step    int
	Comment string
	Args    []string
}

const demoSteps = 6

// step runs fn as step number n, printing its title and timing to stderr.
func (d *demoRun) step(n int, title string, fn func() error) error {
	fmt.Fprintf(d.env.Stderr, "\n[%d/%d] %s\n", n, demoSteps, title)
	t0 := time.Now()
	err := fn()
	el := time.Since(t0)
	d.steps = append(d.steps, demoStep{Number: n, Title: title, Elapsed: el})
	if err != nil {
		fmt.Fprintf(d.env.Stderr, "      FAILED after %.1fs: %v\n", el.Seconds(), err)
		d.failure = fmt.Errorf("step %d (%s): %w", n, title, err)
		return d.failure
	}
	fmt.Fprintf(d.env.Stderr, "      done in %.1fs\n", el.Seconds())
	return nil
}

// say prints one indented line of a step to stderr.
func (d *demoRun) say(format string, args ...any) {
	fmt.Fprintf(d.env.Stderr, "      "+format+"\n", args...)
}

func (d *demoRun) path(name string) string { return filepath.Join(d.out, name) }

// write writes a file of the output directory atomically.
func (d *demoRun) write(name string, fn func(w io.Writer) error) error {
	if err := writeFileAtomic(d.path(name), fn); err != nil {
		return err
	}
	for _, f := range d.files {
		if f == name {
			return nil
		}
	}
	d.files = append(d.files, name)
	return nil
}

func (d *demoRun) writeModel(name string, m *model.Model) error {
	return d.write(name, func(w io.Writer) error { return model.Write(w, m) })
}

// invoke runs a warmfit subcommand in-process, exactly as the command
// line would, and records it for the report. Arguments starting with "@"
// name files of the output directory.
func (d *demoRun) invoke(step int, comment string, args ...string) error {
	display := make([]string, len(args))
	real := make([]string, len(args))
	for i, a := range args {
		if name, ok := strings.CutPrefix(a, "@"); ok {
			display[i], real[i] = name, d.path(name)
			continue
		}
		display[i], real[i] = a, a
	}
	d.commands = append(d.commands, demoCommand{Step: step, Comment: comment, Args: display})
	c, ok := commands[real[0]]
	if !ok {
		return fmt.Errorf("internal: no %q command", real[0])
	}
	fs := pflag.NewFlagSet(c.Name, pflag.ContinueOnError)
	fs.SetOutput(io.Discard)
	if c.Flags != nil {
		c.Flags(fs)
	}
	if err := fs.Parse(real[1:]); err != nil {
		return fmt.Errorf("internal: warmfit %s flags: %v", c.Name, err)
	}
	if err := c.Run(d.env, fs.Args()); err != nil {
		return err
	}
	for i, a := range args {
		if name, ok := strings.CutPrefix(a, "@"); ok && i > 0 && (args[i-1] == "-o" || args[i-1] == "--output") {
			d.files = append(d.files, name)
		}
	}
	return nil
}

// record notes a command the demo did in-process through the library, so
// that the report can show how to get the same numbers from the CLI.
func (d *demoRun) record(step int, comment string, args ...string) {
	d.commands = append(d.commands, demoCommand{Step: step, Comment: comment, Args: args})
}

// runDemoPipeline runs the six steps; it stops at the first failure,
// which is also kept in d.failure for the report.
func (d *demoRun) runPipeline() error {
	steps := []struct {
		title string
		fn    func() error
	}{
		{"device model: the truth, known only to the demo", d.stepDevice},
		{"synthetic measurement of the whole array", d.stepMeasure},
		{"fit of the whole array from the data", d.stepFitArray},
		{fmt.Sprintf("cross-check on a %dx%d patch against exact methods", d.sc.Patch, d.sc.Patch), d.stepPatch},
		{"temperature verdict and thermodynamic scan of the fitted model", d.stepTemperature},
		{"shot plan for target precisions", d.stepPlan},
	}
	for i, s := range steps {
		if err := d.step(i+1, s.title, s.fn); err != nil {
			return err
		}
	}
	return nil
}

// Step 1.
func (d *demoRun) stepDevice() error {
	sc := &d.sc
	m, err := sc.buildDevice()
	if err != nil {
		return err
	}
	d.device = m
	d.template = demoTemplate(m)
	d.record(1, "the device: design values plus seeded disorder (the same file as truth.json)",
		"model", "--lattice", sc.latticeSpec(), "--preset", "xxz", "--set", sc.setFlag(),
		"--disorder", fmtFloat(sc.Disorder), "--seed", strconv.FormatUint(sc.Seed, 10), "--beta", fmtFloat(sc.Beta), "-o", "truth.json")
	if err := d.writeModel("truth.json", m); err != nil {
		return err
	}
	if err := d.writeModel("template.json", d.template); err != nil {
		return err
	}
	maxC := 0.0
	for _, t := range m.Terms {
		maxC = math.Max(maxC, math.Abs(t.Coeff))
	}
	d.say("%s: %d qubits, %d bonds, %d terms (XX, YY, ZZ per bond; X, Z per site)", sc.latticeSpec(), m.Lattice.NumSites(), len(m.Lattice.NN), len(m.Terms))
	d.say("design %s, disorder +-%s (seed %d), beta %s, beta*max|coeff| = %.3f",
		sc.setFlag(), fmtFloat(sc.Disorder), sc.Seed, fmtFloat(sc.Beta), sc.Beta*maxC)
	d.say("wrote truth.json and template.json (the same terms, coefficients 0)")
	return nil
}

// Step 2.
func (d *demoRun) stepMeasure() error {
	sc := &d.sc
	bases, err := fit.CoveringBases(sc.numSites(), d.device.Terms)
	if err != nil {
		return err
	}
	d.bases = bases
	d.say("%d product bases cover every term (%s); %d shots each, %d in all",
		len(bases), describeBases(bases), sc.Shots, sc.Shots*int64(len(bases)))
	d.say("binomial generator: expectations from the order-%d expansion of the truth, each term drawn on its own (cross-term correlations are ignored)", sc.DataOrder)
	return d.invoke(2, "binomial synthetic data from the expansion's expectations (cross-term correlations ignored)",
		"sample", "--model", "@truth.json", "--shots", strconv.FormatInt(sc.Shots, 10), "--bases", "covering",
		"--generator", "binomial", "--order", strconv.Itoa(sc.DataOrder), "--seed", strconv.FormatUint(sc.Seed, 10), "-o", "@data.csv")
}

// describeBases names bases that measure every qubit in one letter.
func describeBases(bases []string) string {
	var names []string
	for _, b := range bases {
		if strings.Count(b, b[:1]) == len(b) {
			names = append(names, "all "+b[:1])
		} else {
			names = append(names, "mixed")
		}
	}
	return strings.Join(names, ", ")
}

// fitArgs is the "warmfit fit" command line of a fit.
func (d *demoRun) fitArgs(template, data, truth, out string, order int) []string {
	args := []string{"fit", "--model", "@" + template, "--data", "@" + data, "--truth", "@" + truth}
	if order > 0 {
		args = append(args, "--order", strconv.Itoa(order))
	} else {
		if d.sc.MaxOrder > 0 {
			args = append(args, "--max-order", strconv.Itoa(d.sc.MaxOrder))
		}
		args = append(args, "--budget", d.sc.Budget.String())
	}
	return append(args, "-o", "@"+out)
}

// readFitted reads a fitted model and its report back from disk.
func readFitted(path string) (*model.Model, *fit.Report, error) {
	m, err := model.ReadFile(path)
	if err != nil {
		return nil, nil, err
	}
	if len(m.Fit) == 0 {
		return nil, nil, fmt.Errorf("%s: no fit report", path)
	}
	var rep fit.Report
	if err := json.Unmarshal(m.Fit, &rep); err != nil {
		return nil, nil, fmt.Errorf("%s: fit report: %v", path, err)
	}
	return m, &rep, nil
}

// Step 3.
func (d *demoRun) stepFitArray() error {
	args := d.fitArgs("template.json", "data.csv", "truth.json", "fitted.json", d.sc.Order)
	if err := d.invoke(3, "the fit (same code path as here)", args...); err != nil {
		return err
	}
	m, rep, err := readFitted(d.path("fitted.json"))
	if err != nil {
		return err
	}
	d.fitted, d.fitReport = m, rep
	cmp, err := compareDemo(d.device.Terms, m.Terms)
	if err != nil {
		return err
	}
	d.array = cmp
	d.say("against the truth: L2 %s, Linf %s (%s); pulls mean %+.3f, rms %.3f, %.1f%% within 2 sigma (normal: 95.4%%)",
		fmtG3(cmp.L2), fmtG3(cmp.Linf), cmp.Worst, cmp.PullMean, cmp.PullRMS, 100*cmp.Within2)
	return nil
}

// Step 4.
func (d *demoRun) stepPatch() error {
	sc := &d.sc
	pm, err := sc.extractPatch(d.device)
	if err != nil {
		return err
	}
	d.patchTruth = pm
	n := pm.Lattice.NumSites()
	x0, y0 := sc.patchOrigin()
	d.say("patch: sites x = %d..%d, y = %d..%d of the array, %d qubits, %d terms", x0, x0+sc.Patch-1, y0, y0+sc.Patch-1, n, len(pm.Terms))
	if err := d.writeModel("patch-truth.json", pm); err != nil {
		return err
	}
	if err := d.writeModel("patch-template.json", demoTemplate(pm)); err != nil {
		return err
	}
	if d.patchBases, err = fit.CoveringBases(n, pm.Terms); err != nil {
		return err
	}
	x1, y1 := x0+sc.Patch-1, y0+sc.Patch-1
	d.record(4, fmt.Sprintf("patch-truth.json holds the terms of truth.json on sites x = %d..%d, y = %d..%d, renumbered onto square:%dx%d (written by the demo)",
		x0, x1, y0, y1, sc.Patch, sc.Patch))
	if err := d.invoke(4, "exact Gibbs-state snapshots of the patch (dense diagonalisation)",
		"sample", "--model", "@patch-truth.json", "--shots", strconv.FormatInt(sc.Shots, 10), "--bases", "covering",
		"--generator", "exact", "--seed", strconv.FormatUint(sc.Seed, 10), "-o", "@patch-shots.csv"); err != nil {
		return err
	}
	if err := d.invoke(4, "fit of the patch from its snapshots",
		"fit", "--model", "@patch-template.json", "--data", "@patch-shots.csv", "--truth", "@patch-truth.json", "-o", "@patch-fitted.json"); err != nil {
		return err
	}
	m, rep, err := readFitted(d.path("patch-fitted.json"))
	if err != nil {
		return err
	}
	d.patchFitted, d.patchReport = m, rep
	if d.patch, err = compareDemo(pm.Terms, m.Terms); err != nil {
		return err
	}
	d.say("patch fit against the truth: Linf %s, pulls rms %.3f, %.1f%% within 2 sigma",
		fmtG3(d.patch.Linf), d.patch.PullRMS, 100*d.patch.Within2)

	// The expansion against dense exact diagonalisation on the patch.
	order := d.arrayOrder()
	check, err := expansionVersusExact(d.env, pm, sc.Beta)
	if err != nil {
		return err
	}
	check.ArrayOrder = order
	d.edCheck = check
	d.record(4, "the expansion and exact diagonalisation on the patch (compare the value columns)",
		"expect", "--model", "patch-truth.json", "--method", "exact", "-o", "patch-exact.csv")
	d.record(4, "", "expect", "--model", "patch-truth.json", "--order", strconv.Itoa(order), "-o", "patch-expansion.csv")
	d.say("expansion vs dense exact diagonalisation on the patch: max |difference| %s at order %d (the array's order), %s at order %d (all %d sites)",
		fmtG3(check.MaxDev[min(order, len(check.MaxDev))-1]), order, fmtG3(check.MaxDev[len(check.MaxDev)-1]), len(check.MaxDev), n)
	return nil
}

// arrayOrder is the order of the array fit (or the scenario's, before it).
func (d *demoRun) arrayOrder() int {
	if d.fitReport != nil {
		return d.fitReport.Order
	}
	if d.sc.Order > 0 {
		return d.sc.Order
	}
	return d.sc.MaxOrder
}

// demoEDCheck compares the expansion's term expectations with dense exact
// diagonalisation of the same small system.
type demoEDCheck struct {
	Qubits int
	// MaxDev[o-1] is max_k |<E_k>_order o - <E_k>_exact|.
	MaxDev     []float64
	ArrayOrder int
	Elapsed    time.Duration
}

func expansionVersusExact(env *runEnv, m *model.Model, beta float64) (*demoEDCheck, error) {
	t0 := time.Now()
	n := m.Lattice.NumSites()
	th, err := validate.ExactThermal(n, m.Terms, beta)
	if err != nil {
		return nil, err
	}
	ops := make([]cluster.PauliString, len(m.Terms))
	for k, t := range m.Terms {
		if ops[k], err = cluster.ParsePauli(t.Pauli, t.Sites); err != nil {
			return nil, fmt.Errorf("term %s: %v", t.Key(), err)
		}
	}
	exact := make([]float64, len(ops))
	th.ExpectAll(ops, exact)
	exp, err := cluster.NewExpansion(m.Lattice, m.Terms)
	if err != nil {
		return nil, err
	}
	bar := newProgressBar(env, "patch expansion")
	res, err := exp.Evaluate(modelCoeffs(m), beta, cluster.Options{Order: n, Progress: bar.Update})
	bar.Done()
	if err != nil {
		return nil, err
	}
	c := &demoEDCheck{Qubits: n, MaxDev: make([]float64, n)}
	for o := range n {
		for k := range ops {
			c.MaxDev[o] = math.Max(c.MaxDev[o], math.Abs(res.Expect[o][k]-exact[k]))
		}
	}
	for _, v := range c.MaxDev {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, errors.New("the expansion of the patch gave a non-finite expectation")
		}
	}
	c.Elapsed = time.Since(t0)
	return c, nil
}

// demoTemperature is the verdict on the operating temperature.
type demoTemperature struct {
	Bound      cluster.ThresholdBound // at the truth
	Order      int
	Untrusted  int // term expectations not converged at the fit (from the fit report)
	Terms      int
	Criterion  string // the fitter's convergence criterion for them
	Truncation fit.ReportTruncation
	Scan       *cluster.ThermoResult
	// Trusted[i] for every grid point; Edge is the first untrusted beta
	// (0 when the whole grid is trusted).
	Trusted          []bool
	EnergyErr        []float64
	HeatErr          []float64
	Edge             float64
	LastGood         float64
	OperatingTrusted bool // the operating beta lies inside the trusted range
}

// Step 5.
func (d *demoRun) stepTemperature() error {
	sc := &d.sc
	series := d.fitReport.Series
	t := &demoTemperature{Order: d.fitReport.Order, Untrusted: series.Untrusted, Terms: series.Terms, Criterion: series.Criterion, Truncation: d.fitReport.Truncation}
	t.Bound = cluster.SufficientBeta(d.device.Terms, modelCoeffs(d.device))
	d.temp = t
	d.say("sufficient-condition bound (term-overlap degree %d, max|coeff| %.3g): beta < %.3g; operating beta %s is %.0fx beyond it",
		t.Bound.Degree, t.Bound.MaxCoeff, t.Bound.Beta, fmtFloat(sc.Beta), sc.Beta/t.Bound.Beta)
	d.say("measured convergence at the fit (order %d): %d of %d term expectations unconverged; truncation error %s vs target %s",
		t.Order, t.Untrusted, t.Terms, fmtMaybePtr(t.Truncation.Error), fmtG3(t.Truncation.Target))

	betas, err := parseBetaRange(sc.thermoRange())
	if err != nil {
		return err
	}
	exp, err := cluster.NewExpansion(d.fitted.Lattice, d.fitted.Terms)
	if err != nil {
		return err
	}
	bar := newProgressBar(d.env, "thermo scan")
	res, err := exp.Thermodynamics(modelCoeffs(d.fitted), betas, cluster.Options{Order: t.Order, Progress: bar.Update})
	bar.Done()
	if err != nil {
		return err
	}
	t.Scan = res
	n := float64(res.NumSites)
	t.Trusted = make([]bool, len(betas))
	t.EnergyErr = make([]float64, len(betas))
	t.HeatErr = make([]float64, len(betas))
	per := func(series []float64) []float64 {
		o := make([]float64, len(series))
		for i, v := range series {
			o[i] = v / n
		}
		return o
	}
	for i := range betas {
		e := cluster.Converge(per(res.Energy[i]), 1, sc.ThermoTol)
		c := cluster.Converge(per(res.HeatCapacity[i]), 1, sc.ThermoTol)
		t.Trusted[i] = e.Trusted && c.Trusted
		t.EnergyErr[i], t.HeatErr[i] = e.Error, c.Error
		if t.Trusted[i] && t.Edge == 0 {
			t.LastGood = betas[i]
		}
		if !t.Trusted[i] && t.Edge == 0 {
			t.Edge = betas[i]
		}
	}
	t.OperatingTrusted = t.Edge == 0 || sc.Beta < t.Edge
	d.record(5, "the thermodynamic scan of the fitted model",
		"thermo", "--model", "fitted.json", "--beta-range", sc.thermoRange(), "--order", strconv.Itoa(t.Order), "-o", "thermo.csv")
	if err := d.write("thermo.csv", func(w io.Writer) error {
		return writeThermo(w, &runEnv{Stderr: io.Discard}, res, sc.ThermoTol)
	}); err != nil {
		return err
	}
	switch {
	case t.Edge == 0:
		d.say("thermo scan (%d temperatures, order %d): converged on the whole grid up to beta %s", len(betas), t.Order, fmtFloat(betas[len(betas)-1]))
	case t.LastGood == 0:
		d.say("WARNING: thermo scan (order %d): not converged anywhere on the grid", t.Order)
	default:
		d.say("thermo scan (%d temperatures, order %d): energy and heat capacity per site converged (tolerance %g) up to beta %s; the operating beta %s is %.0f%% of that edge",
			len(betas), t.Order, sc.ThermoTol, fmtFloat(t.LastGood), fmtFloat(sc.Beta), 100*sc.Beta/t.LastGood)
	}
	return nil
}

// demoPlan is the planner's answer for one target.
type demoPlan struct {
	Target        float64
	ShotsPerBasis int64
	TotalShots    int64
	Bases         int
	MaxStderr     float64
	Order         int
	Z             float64
}

// Step 6.
func (d *demoRun) stepPlan() error {
	sc := &d.sc
	bar := newProgressBar(d.env, "planning")
	defer bar.Done()
	for i, eps := range sc.PlanTargets {
		p, err := fit.PlanShots(d.fitted.Lattice, d.fitted.Terms, sc.Beta, fit.PlanOptions{Target: eps, Norm: fit.NormLinf, Bases: d.bases})
		if err != nil {
			return err
		}
		bar.Update(i+1, len(sc.PlanTargets))
		dp := &demoPlan{Target: eps, ShotsPerBasis: p.ShotsPerBasis, TotalShots: p.TotalShots, Bases: len(p.Bases), MaxStderr: p.PredictedLinf(), Order: p.Order, Z: p.Z}
		d.plans = append(d.plans, dp)
		if i == 0 {
			worst := 0.0
			for _, v := range p.VarPerShot {
				worst = math.Max(worst, v)
			}
			d.planPredictedAtRun = math.Sqrt(worst / float64(sc.Shots))
		}
		d.say("Linf %-5s (every coefficient within it at 95%%, z = %.2f): %d shots per basis, %d in all",
			fmtFloat(eps), p.Z, p.ShotsPerBasis, p.TotalShots)
		d.record(6, "", "plan", "--model", "fitted.json", "--target", fmtFloat(eps))
	}
	d.say("the planner predicts a largest stderr of %s at the %d shots used; the fit reported %s",
		fmtG3(d.planPredictedAtRun), sc.Shots, fmtG3(d.array.MaxStderr))
	return nil
}

func fmtMaybePtr(v *float64) string {
	if v == nil {
		return "unknown"
	}
	return fmtG3(*v)
}

// demoComparison compares fitted coefficients with the truth.
type demoComparison struct {
	Terms      int
	L2, Linf   float64
	Worst      string // the term of Linf
	Pulls      []float64
	Errors     []float64 // fit - truth, aligned with the terms
	PullMean   float64
	PullRMS    float64
	Within2    float64 // fraction of |pull| <= 2
	MaxAbsPull float64
	MaxStderr  float64
	MedStderr  float64
	ByLetters  []demoLetterStats
}

// demoLetterStats summarises one kind of term (XX, YY, ZZ, X, Z).
type demoLetterStats struct {
	Pauli                        string
	Count                        int
	TrueMean, TrueMin, TrueMax   float64
	RMSError, MedStderr, PullRMS float64
}

// compareDemo matches fitted terms to true ones by key.
func compareDemo(truth, fitted []lattice.Term) (*demoComparison, error) {
	want := make(map[string]float64, len(truth))
	for _, t := range truth {
		want[t.Key()] = t.Coeff
	}
	c := &demoComparison{Terms: len(fitted), Pulls: make([]float64, len(fitted)), Errors: make([]float64, len(fitted))}
	var sum2, zsum, z2 float64
	var stderrs []float64
	type acc struct {
		n                 int
		sum, min, max, e2 float64
		z2                float64
		se                []float64
	}
	by := map[string]*acc{}
	var order []string
	within := 0
	for k, t := range fitted {
		tv, ok := want[t.Key()]
		if !ok {
			return nil, fmt.Errorf("fitted term %s is not in the truth", t.Key())
		}
		if !t.HasStderr || !(t.Stderr > 0) {
			return nil, fmt.Errorf("fitted term %s has no error bar", t.Key())
		}
		e := t.Coeff - tv
		z := e / t.Stderr
		c.Errors[k], c.Pulls[k] = e, z
		sum2 += e * e
		if math.Abs(e) >= c.Linf {
			c.Linf, c.Worst = math.Abs(e), t.Key()
		}
		zsum += z
		z2 += z * z
		if math.Abs(z) <= 2 {
			within++
		}
		c.MaxAbsPull = math.Max(c.MaxAbsPull, math.Abs(z))
		c.MaxStderr = math.Max(c.MaxStderr, t.Stderr)
		stderrs = append(stderrs, t.Stderr)
		a := by[t.Pauli]
		if a == nil {
			a = &acc{min: math.Inf(1), max: math.Inf(-1)}
			by[t.Pauli] = a
			order = append(order, t.Pauli)
		}
		a.n++
		a.sum += tv
		a.min, a.max = math.Min(a.min, tv), math.Max(a.max, tv)
		a.e2 += e * e
		a.z2 += z * z
		a.se = append(a.se, t.Stderr)
	}
	n := float64(len(fitted))
	if n == 0 {
		return nil, errors.New("no fitted terms")
	}
	c.L2 = math.Sqrt(sum2)
	c.PullMean = zsum / n
	c.PullRMS = math.Sqrt(z2 / n)
	c.Within2 = float64(within) / n
	c.MedStderr = medianOf(stderrs)
	for _, p := range order {
		a := by[p]
		m := float64(a.n)
		c.ByLetters = append(c.ByLetters, demoLetterStats{
			Pauli: p, Count: a.n, TrueMean: a.sum / m, TrueMin: a.min, TrueMax: a.max,
			RMSError: math.Sqrt(a.e2 / m), MedStderr: medianOf(a.se), PullRMS: math.Sqrt(a.z2 / m),
		})
	}
	return c, nil
}

func medianOf(v []float64) float64 {
	if len(v) == 0 {
		return math.NaN()
	}
	s := append([]float64(nil), v...)
	sort.Float64s(s)
	if len(s)%2 == 1 {
		return s[len(s)/2]
	}
	return (s[len(s)/2-1] + s[len(s)/2]) / 2
}
