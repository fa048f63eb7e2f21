package main

import (
	"fmt"
	"math"
	"os"
	"strconv"
	"time"

	"github.com/spf13/pflag"
)

// demoOptions holds the flags of "warmfit demo"; Flags resets them on
// every invocation.
var demoOptions struct {
	out   string
	size  string
	shots int64
	seed  uint64
	beta  float64
	order string
	quick bool
}

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
			fs.StringVar(&o.order, "order", "auto", "expansion order of the array fit, or auto (the fitter chooses)")
			fs.BoolVar(&o.quick, "quick", false, fmt.Sprintf("small and fast: a %dx%d array at beta %s, fit orders up to %d (for a first look and for tests)", q.Width, q.Height, fmtFloat(q.Beta), q.MaxOrder))
		},
		Run: runDemo,
	})
}

const demoLong = `Demo runs the whole job on a made-up calibration problem and writes a report: a
lab operates an analog quantum simulator, a square array of coupled qubits with XXZ
exchange on every bond and X and Z fields on every site, each coefficient off its
design value by a seeded random amount, held at an effective temperature 1/beta.
Only the demo knows the true coefficients; every number is computed in the run.

The steps (each printed to stderr with its timing):
  1. the device model, written as truth.json, and a template (same terms, no
     coefficients);
  2. synthetic measurements of the whole array: a few product bases that cover
     every term, --shots shots each, drawn from the binomial law with the
     expansion's expectation values (correlations between terms are ignored);
  3. the fit of the whole array through 'warmfit fit', compared with the truth:
     L2 and Linf errors, pulls (fit - truth)/stderr;
  4. a 3x3 patch of the same device where exact methods apply: exact Gibbs-state
     snapshots, a fit, and the expansion against dense exact diagonalisation;
  5. the temperature verdict: the sufficient-condition bound, the measured
     convergence of the series, and a scan of energy and heat capacity of the
     fitted model over beta showing where the expansion stops being trusted;
  6. the shots per basis needed for Linf errors 0.05, 0.02 and 0.01.

Written to --out: report.md (what was done, results, verdicts, and the warmfit
commands that reproduce every step), truth.json, template.json, data.csv,
fitted.json, the patch's files, thermo.csv and four figures (SVG). Stdout gets a
short summary. Exit status 1 when a step fails; the report then says where.

The default 6x6 run takes about half a minute of CPU (most of it in the order-6
fit); --quick runs a 4x4 array in a few seconds.`

const demoExample = `warmfit demo
warmfit demo --quick --out /tmp/first-look
warmfit demo --size 8x8 --shots 100000 --seed 7 --out run-8x8
warmfit demo --beta 0.55 --out too-cold    # what the verdicts say when it is too cold`

func runDemo(env *runEnv, args []string) error {
	o := demoOptions
	if len(args) > 0 {
		return usagef("unexpected argument %q", args[0])
	}
	sc := defaultDemoScenario()
	if o.quick {
		sc = quickDemoScenario()
	}
	if o.size != "" {
		w, h, err := parseDemoSize(o.size)
		if err != nil {
			return err
		}
		sc.Width, sc.Height = w, h
	}
	if o.shots < 2 {
		return usagef("--shots %d: want at least 2 shots per basis", o.shots)
	}
	if o.beta < 0 || math.IsNaN(o.beta) || math.IsInf(o.beta, 0) {
		return usagef("--beta %v: want a positive finite number", o.beta)
	}
	if o.beta > 0 {
		sc.Beta = o.beta
	}
	sc.Shots, sc.Seed = o.shots, o.seed
	if o.order != "auto" {
		n, err := strconv.Atoi(o.order)
		if err != nil || n < 2 || n > 12 {
			return usagef("--order %q: want auto or an integer from 2 (the largest term) to 12", o.order)
		}
		sc.Order = n
		sc.DataOrder = max(sc.DataOrder, n)
	}
	sc.ThermoMax, sc.ThermoPoints = demoThermoGrid(sc.Beta, sc.ThermoPoints)
	if o.out == "" {
		return usagef("--out: want a directory")
	}
	if err := os.MkdirAll(o.out, 0o755); err != nil {
		return fmt.Errorf("cannot create the output directory: %v", err)
	}

	d := &demoRun{env: env, sc: sc, out: o.out, start: time.Now()}
	fmt.Fprintf(env.Stderr, "warmfit demo: calibrating a %dx%d qubit array from its thermal state; files go to %s\n", sc.Width, sc.Height, o.out)
	pipeErr := d.runPipeline()
	if pipeErr == nil {
		if err := d.writeFigures(); err != nil {
			pipeErr = fmt.Errorf("figures: %w", err)
			d.failure = pipeErr
		}
	}
	if err := d.writeReport(); err != nil {
		if pipeErr == nil {
			return fmt.Errorf("report: %w", err)
		}
		fmt.Fprintf(env.Stderr, "warmfit demo: the report could not be written either: %v\n", err)
	}
	d.printSummary(env.Stdout)
	fmt.Fprintf(env.Stderr, "\nwarmfit demo: %.1fs in all; report in %s\n", time.Since(d.start).Seconds(), d.path("report.md"))
	return pipeErr
}

// demoThermoGrid chooses the thermodynamic scan: up to four times the
// operating beta, rounded to two significant digits, so that the scan
// reaches well past the operating point towards where the series fail,
// in steps of a round number giving about the wanted number of points.
func demoThermoGrid(beta float64, points int) (top float64, n int) {
	v := 4 * beta
	mag := math.Pow(10, math.Floor(math.Log10(v))-1)
	top = math.Round(v/mag) * mag
	raw := top / float64(points)
	m := math.Pow(10, math.Floor(math.Log10(raw)))
	step := m
	for _, f := range []float64{5, 2.5, 2, 1} {
		if f*m <= raw*(1+1e-9) {
			step = f * m
			break
		}
	}
	n = int(math.Round(top / step))
	return float64(n) * step, n
}
