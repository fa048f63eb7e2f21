package main

import (
	"fmt"
	"strconv"
	"time"

	"warmfit/fit"
	"warmfit/lattice/model"
	"warmfit/validate"
)

// Step 4 of the demo: a patch of the device small enough for exact
// methods, cut from the model by package validate, measured in exact
// snapshots, fitted, and the expansion checked against dense exact
// diagonalisation order by order.

// Step 4: a patch small enough for exact methods.
func (d *demoRun) stepPatch() error {
	sc := &d.sc
	p, err := d.cutPatch()
	if err != nil {
		return err
	}
	d.patch = p
	truth := p.Truth.Model
	if p.Bases, _, err = fit.SchemeBases("covering", truth.Lattice.NumSites(), truth.Terms, sc.Seed); err != nil {
		return err
	}
	if err := d.sampleExact(truth, p.Bases, "patch-shots.csv"); err != nil {
		return err
	}
	d.record(4, "exact Gibbs-state snapshots of the patch (dense diagonalisation)",
		"sample", "--model", "patch-truth.json", "--shots", fmt.Sprint(sc.Shots), "--bases", "covering",
		"--generator", "exact", "--seed", fmt.Sprint(sc.Seed), "-o", "patch-shots.csv")
	if p.Fit, err = d.fitData(4, fitJob{
		template: p.Template.Model, templateFile: "patch-template.json", data: "patch-shots.csv",
		truth: truth, truthFile: "patch-truth.json", out: "patch-fitted.json",
	}); err != nil {
		return err
	}
	r := p.Fit.Recovery
	d.say("patch fit against the truth: Linf %s, pulls rms %.3f, %.1f%% within 2 sigma", fmtG3(r.Linf), r.RMSZ, 100*r.Within2)
	return d.crosscheckPatch()
}

// demoPatch is the patch of step 4: the truth and the design model cut
// to its sites, its exact snapshots' bases, their fit, and the expansion
// against exact diagonalisation.
type demoPatch struct {
	Sites           []int // in the array
	Truth, Template *validate.Patch
	Bases           []string
	Fit             *demoFit
	Check           *validate.CrosscheckResult
	CheckElapsed    time.Duration
}

// cutPatch cuts the truth and the design model to the patch's sites and
// writes both.
func (d *demoRun) cutPatch() (*demoPatch, error) {
	sites, err := d.sc.patchSites(d.device.Lattice)
	if err != nil {
		return nil, err
	}
	p := &demoPatch{Sites: sites}
	if p.Truth, err = validate.CutPatch(d.device, sites); err != nil {
		return nil, err
	}
	if p.Template, err = validate.CutPatch(d.template, sites); err != nil {
		return nil, err
	}
	if err := d.writeModel("patch-truth.json", p.Truth.Model); err != nil {
		return nil, err
	}
	if err := d.writeModel("patch-template.json", p.Template.Model); err != nil {
		return nil, err
	}
	list := siteList(sites)
	d.record(4, fmt.Sprintf("patch-truth.json and patch-template.json hold the terms of truth.json and template.json on sites %s, renumbered 0..%d (cut by the demo with validate.CutPatch)",
		list, len(sites)-1))
	d.say("patch: sites %s of the array, %d qubits, %d terms", list, len(sites), len(p.Truth.Model.Terms))
	return p, nil
}

// crosscheckPatch compares the expansion of the device on the patch with
// dense exact diagonalisation at every order.
func (d *demoRun) crosscheckPatch() error {
	sc, p := &d.sc, d.patch
	t0 := time.Now()
	bar := newProgressBar(d.env, "crosscheck")
	res, err := sc.crosscheck(d.device, p.Sites, bar.Update)
	bar.Done()
	if err != nil {
		return err
	}
	p.Check, p.CheckElapsed = res, time.Since(t0)
	d.record(4, "the expansion against exact diagonalisation on the same patch, order by order",
		append(sc.crosscheckArgs("truth.json", p.Sites), "-o", "patch-crosscheck.csv")...)
	o := min(d.array.Result.Order, len(res.Orders))
	d.say("expansion vs dense exact diagonalisation on the patch: max |difference| %s at order %d (the array's order), %s at order %d (all %d sites)",
		fmtG3(res.Orders[o-1].MaxDiff), o, fmtG3(res.Orders[len(res.Orders)-1].MaxDiff), len(res.Orders), len(p.Sites))
	for _, v := range res.Verdict {
		d.say("crosscheck: %s", v)
	}
	return nil
}

// crosscheck is the demo's exact check of the device on one patch, as
// "warmfit crosscheck" with crosscheckArgs computes it.
func (sc *demoScenario) crosscheck(device *model.Model, sites []int, progress func(done, total int)) (*validate.CrosscheckResult, error) {
	return validate.Crosscheck(device, sc.Beta, [][]int{sites}, validate.CrosscheckOptions{Tol: sc.dataTol(), Progress: progress})
}

// crosscheckArgs is the command line that repeats the demo's crosscheck
// on the device model written to truthFile; the tolerance is written in
// full so that the command compares at the very same tolerance.
func (sc *demoScenario) crosscheckArgs(truthFile string, sites []int) []string {
	return []string{"crosscheck", "--model", truthFile, "--sites", siteList(sites), "--tol", strconv.FormatFloat(sc.dataTol(), 'g', -1, 64)}
}

// siteList writes sites the way "warmfit crosscheck --sites" reads them.
func siteList(sites []int) string { return joinInts(sites, ",") }
