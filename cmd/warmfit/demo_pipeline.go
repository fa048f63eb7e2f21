package main

import (
	"fmt"
	"io"
	"math"
	"path/filepath"
	"slices"
	"time"

	"warmfit/fit"
	"warmfit/lattice/model"
)

// The demo's pipeline: the six steps, in order, as calls of the library.
// Each step also records the warmfit command that does the same (see
// demo_commands.go); the run does not go through the command runner.

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

	device, template *model.Model
	bases            []string
	data             *demoData
	array            *demoFit
	patch            *demoPatch
	temp             *demoTemperature
	plans            []*fit.Plan
	planAtRun        float64 // the planner's largest stderr at the shots used
	failure          error   // the step that stopped the run, if any
}

// demoStep records one step of the pipeline for the report.
type demoStep struct {
	Number  int
	Title   string
	Elapsed time.Duration
}

const demoSteps = 6

// runPipeline runs the six steps; it stops at the first failure, which is
// also kept in d.failure for the report.
func (d *demoRun) runPipeline() error {
	steps := []struct {
		title string
		fn    func() error
	}{
		{"device model: the truth, known only to the demo", d.stepDevice},
		{"synthetic measurement of the whole array", d.stepMeasure},
		{"fit of the whole array from the data", d.stepFitArray},
		{fmt.Sprintf("cross-check on a %dx%d patch against exact methods", d.sc.Patch, d.sc.Patch), d.stepPatch},
		{"temperature verdict and thermodynamic sweep of the fitted model", d.stepTemperature},
		{"shot plan for target precisions", d.stepPlan},
	}
	for i, s := range steps {
		if err := d.step(i+1, s.title, s.fn); err != nil {
			return err
		}
	}
	return nil
}

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
	if !slices.Contains(d.files, name) {
		d.files = append(d.files, name)
	}
	return nil
}

// writeCSV writes a CSV through the commands' one CSV writer: a clean
// CSV and its metadata sidecar NAME.meta.json.
func (d *demoRun) writeCSV(name string, meta *csvMeta, body func(w io.Writer) error) error {
	if err := writeCSVResult(d.env, d.path(name), csvFlags{}, meta, body); err != nil {
		return err
	}
	for _, f := range []string{name, name + ".meta.json"} {
		if !slices.Contains(d.files, f) {
			d.files = append(d.files, f)
		}
	}
	return nil
}

func (d *demoRun) writeModel(name string, m *model.Model) error {
	return d.write(name, func(w io.Writer) error { return model.Write(w, m) })
}

// Step 1: the device and what the lab knows of it.
func (d *demoRun) stepDevice() error {
	sc := &d.sc
	var err error
	if d.device, err = sc.buildDevice(); err != nil {
		return err
	}
	if d.template, err = sc.designModel(); err != nil {
		return err
	}
	design := []string{"model", "--lattice", sc.latticeSpec(), "--preset", "xxz", "--set", sc.setFlag(), "--beta", fmtFloat(sc.Beta)}
	d.record(1, "the device: design values plus seeded disorder",
		append(slices.Clone(design), "--disorder", fmtFloat(sc.Disorder), "--seed", fmt.Sprint(sc.Seed), "-o", "truth.json")...)
	d.record(1, "what the lab knows: the terms at their design values (the fit uses only the terms and beta)",
		append(design, "-o", "template.json")...)
	if err := d.writeModel("truth.json", d.device); err != nil {
		return err
	}
	if err := d.writeModel("template.json", d.template); err != nil {
		return err
	}
	m := d.device
	d.say("%s: %d qubits, %d bonds, %d terms (XX, YY, ZZ per bond; X, Z per site)", sc.latticeSpec(), m.Lattice.NumSites(), len(m.Lattice.NN), len(m.Terms))
	d.say("design %s, disorder +-%s (seed %d), beta %s, beta*max|coeff| = %.3f",
		sc.setFlag(), fmtFloat(sc.Disorder), sc.Seed, fmtFloat(sc.Beta), sc.Beta*d.maxTrueCoeff())
	d.say("wrote truth.json and template.json (the same terms at their design values)")
	return nil
}

// Step 3: the fit of the whole array.
func (d *demoRun) stepFitArray() error {
	f, err := d.fitData(3, fitJob{
		template: d.template, templateFile: "template.json", data: "data.csv",
		truth: d.device, truthFile: "truth.json", out: "fitted.json", order: d.sc.Order,
	})
	if err != nil {
		return err
	}
	d.array = f
	r := f.Recovery
	d.say("against the truth: L2 %s, Linf %s (%s); pulls mean %+.3f, rms %.3f, %.1f%% within 2 sigma (normal: 95.4%%)",
		fmtG3(r.L2), fmtG3(r.Linf), r.LargestError, r.PullMean, r.RMSZ, 100*r.Within2)
	return nil
}

// Step 6: the shots a target precision costs, planned from the fitted
// model at the fit's order, as "warmfit plan" does by default.
func (d *demoRun) stepPlan() error {
	sc, f := &d.sc, d.array
	bar := newProgressBar(d.env, "planning")
	defer bar.Done()
	// One response serves every target: shots scale as 1/target^2.
	var first *fit.Plan
	for i, eps := range sc.PlanTargets {
		var p *fit.Plan
		var err error
		if first == nil {
			p, err = fit.PlanShots(f.Model.Lattice, f.Model.Terms, sc.Beta, fit.PlanOptions{Target: eps, Norm: fit.NormLinf, Bases: d.bases, Order: f.Result.Order})
			first = p
		} else {
			p, err = first.Retarget(eps)
		}
		if err != nil {
			return err
		}
		bar.Update(i+1, len(sc.PlanTargets))
		d.plans = append(d.plans, p)
		d.say("Linf %-5s (every coefficient within it at 95%%, z = %.2f): %d shots per basis, %d in all",
			fmtFloat(eps), p.Z, p.ShotsPerBasis, p.TotalShots)
		for _, w := range p.Warnings {
			d.say("WARNING: plan for Linf %s: %s", fmtFloat(eps), w)
		}
		d.record(6, "", "plan", "--model", "fitted.json", "--target", fmtFloat(eps))
	}
	d.planAtRun = math.Sqrt(slices.Max(d.plans[0].VarPerShot) / float64(sc.Shots))
	d.say("the planner predicts a largest stderr of %s at the %d shots used; the fit reported %s",
		fmtG3(d.planAtRun), sc.Shots, fmtG3(f.Recovery.MaxStderr))
	return nil
}
