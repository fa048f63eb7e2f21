package main

import (
	"fmt"
	"math"
	"os"
	"strconv"
	"time"

	"github.com/spf13/pflag"
)

// demoFlags are the flags of "warmfit demo".
type demoFlags struct {
	out   string
	size  string
	shots int64
	seed  uint64
	beta  float64
	order string
	quick bool
}

// demoOptions holds the flags of "warmfit demo"; Flags resets them on
// every invocation.
var demoOptions demoFlags

func init() {
	register(&command{
		Name:    "demo",
		Short:   "the whole job end to end on a made-up quantum simulator: data, fit, checks, report",
		Usage:   "warmfit demo [--out DIR] [--size LxL] [--shots N] [--seed S] [--beta B] [--order L|auto] [--quick]",
		Long:    demoLong,
		Example: demoExample,
		Flags: func(fs *pflag.FlagSet) {
			o := &demoOptions
			d, q := defaultDemoScenario(), quickDemoScenario()
			fs.StringVar(&o.out, "out", "warmfit-demo", "output `DIR` (created if missing; files in it are replaced)")
			fs.StringVar(&o.size, "size", "", fmt.Sprintf("array size LxL, at least 3x3 (default %dx%d; %dx%d with --quick)", d.Width, d.Height, q.Width, q.Height))
			fs.Int64Var(&o.shots, "shots", d.Shots, "shots per measurement basis")
			fs.Uint64Var(&o.seed, "seed", d.Seed, "seed of the disorder and of the simulated shots")
			fs.Float64Var(&o.beta, "beta", 0, fmt.Sprintf("inverse temperature of the device (default %s; %s with --quick)", fmtFloat(d.Beta), fmtFloat(q.Beta)))
			fs.StringVar(&o.order, "order", "auto", "expansion order of the array fit, or auto (the fitter chooses by the one order policy)")
			fs.BoolVar(&o.quick, "quick", false, fmt.Sprintf("small and fast: a %dx%d array at beta %s (for a first look and for tests)", q.Width, q.Height, fmtFloat(q.Beta)))
		},
		Run: runDemo,
	})
}

const demoLong = `The whole job, run on a made-up calibration problem, with a report at the end: a
lab operates an analog quantum simulator, a square array of coupled qubits with XXZ
exchange on every bond and X and Z fields on every site, each coefficient off its
design value by a seeded random amount, held at an effective temperature 1/beta.
Only the demo knows the true coefficients; every number is computed in the run.

The steps (each printed to stderr with its timing) are calls of the warmfit
library, each the same computation as a warmfit command the report lists:
  1. the device model, written as truth.json, and the lab's design model
     (same terms, design values) as template.json;
  2. synthetic measurements of the whole array: a few product bases that cover
     every term, --shots shots each, drawn from the binomial law with the
     expansion's expectation values, at the order the order policy chooses for a
     truncation error of a tenth of the shot noise (correlations between terms
     are ignored);
  3. the fit of the whole array, compared with the truth: L2 and Linf errors,
     pulls (fit - truth)/stderr;
  4. a 3x3 patch of the same device where exact methods apply: exact Gibbs-state
     snapshots, a fit, and the expansion against dense exact diagonalisation at
     every order;
  5. the temperature verdict: the sufficient-condition bound, the measured
     convergence of the series, and a sweep of energy and heat capacity of the
     fitted model over beta showing where the expansion stops being trusted;
  6. the shots per basis needed for Linf errors 0.05, 0.02 and 0.01.

Written to --out: report.md (what was done, results, verdicts, and the warmfit
commands that reproduce every step), truth.json, template.json, data.csv,
fitted.json, the patch's files, sweep.csv and four figures (SVG). Stdout gets a
short summary. Exit status 1 when a step fails; the report then says where.

The default 6x6 run takes ` + demoCPUTime + ` (most of it in the order-6 fit
and the shot plan); --quick runs a 4x4 array in a few seconds.`

// demoCPUTime is what the default demo costs, as the demo help and the
// README quote it: measured as the user CPU time of "time warmfit demo"
// (16 s on the 2-core machine, under shared load, on 2 December 2026, after
// the lower-order curvature and the one-response plan ladder; 49 s before).
// CPU time rather than wall time: it depends far less on what else the
// machine runs.
const demoCPUTime = "about 16 s of CPU time"

const demoExample = `warmfit demo
warmfit demo --quick --out /tmp/first-look
warmfit demo --size 8x8 --shots 100000 --seed 7 --out run-8x8
warmfit demo --beta 0.55 --out too-cold    # what the verdicts say when it is too cold`

func runDemo(env *runEnv, args []string) error {
	if len(args) > 0 {
		return usagef("unexpected argument %q", args[0])
	}
	sc, err := demoOptions.scenario()
	if err != nil {
		return err
	}
	out := demoOptions.out
	if out == "" {
		return usagef("--out: want a directory")
	}
	if err := os.MkdirAll(out, 0o755); err != nil {
		return fmt.Errorf("cannot create the output directory: %v", err)
	}
	_, err = runDemoScenario(env, sc, out)
	return err
}

// scenario is the scenario the flags ask for.
func (o *demoFlags) scenario() (demoScenario, error) {
	sc := defaultDemoScenario()
	if o.quick {
		sc = quickDemoScenario()
	}
	if o.size != "" {
		w, h, err := parseDemoSize(o.size)
		if err != nil {
			return sc, err
		}
		sc.Width, sc.Height = w, h
	}
	if o.shots < 2 {
		return sc, usagef("--shots %d: want at least 2 shots per basis", o.shots)
	}
	if o.beta < 0 || math.IsNaN(o.beta) || math.IsInf(o.beta, 0) {
		return sc, usagef("--beta %v: want a positive finite number", o.beta)
	}
	if o.beta > 0 {
		sc.Beta = o.beta
	}
	sc.Shots, sc.Seed = o.shots, o.seed
	if o.order != "auto" {
		n, err := strconv.Atoi(o.order)
		if err != nil || n < 2 || n > 12 {
			return sc, usagef("--order %q: want auto or an integer from 2 (the largest term) to 12", o.order)
		}
		sc.Order = n
	}
	return sc, nil
}

// runDemoScenario runs the pipeline, draws the figures and writes the
// report and the summary; the error is the step that failed.
func runDemoScenario(env *runEnv, sc demoScenario, out string) (*demoRun, error) {
	d := &demoRun{env: env, sc: sc, out: out, start: time.Now()}
	fmt.Fprintf(env.Stderr, "warmfit demo: calibrating a %dx%d qubit array from its thermal state; files go to %s\n", sc.Width, sc.Height, out)
	pipeErr := d.runPipeline()
	if pipeErr == nil {
		if err := d.writeFigures(); err != nil {
			pipeErr = fmt.Errorf("figures: %w", err)
			d.failure = pipeErr
		}
	}
	if err := d.writeReport(); err != nil {
		if pipeErr == nil {
			return d, fmt.Errorf("report: %w", err)
		}
		fmt.Fprintf(env.Stderr, "warmfit demo: the report could not be written either: %v\n", err)
	}
	d.printSummary(env.Stdout)
	fmt.Fprintf(env.Stderr, "\nwarmfit demo: %.1fs in all; report in %s\n", time.Since(d.start).Seconds(), d.path("report.md"))
	return d, pipeErr
}
