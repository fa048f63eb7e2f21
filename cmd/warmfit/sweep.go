package main

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"

	"github.com/spf13/pflag"

	"warmfit/cluster"
	"warmfit/lattice"
	"warmfit/lattice/model"
)

func init() {
	var (
		modelPath string
		betaGrid  string
		oldRange  string // the retired --beta-range, answered with a pointer
		orderOpt  orderFlag
		workers   int
		tol       float64
		budget    time.Duration
		out       string
		csvOut    csvFlags
	)
	register(&command{
		Name:  "sweep",
		Short: "per-site thermodynamics over a temperature grid",
		Usage: "warmfit sweep --model M.json --beta-grid from=A,to=B,points=N [--order L|auto] [-o FILE]",
		Long: `The linked-cluster expansion of the model is summed at N inverse temperatures evenly
spaced from A to B. Both ends are exactly the numbers given; the points between are
rounded to 12 significant digits, so from=0.05,to=1,points=20 steps by exactly 0.05
and T = 1/beta is 2 at beta 0.5. Per site the table gives log Z, energy, entropy
(nats) and heat capacity, the estimated truncation error of energy and heat capacity,
and whether both are within --tol. Each cluster is diagonalised once for the whole
grid. The model's own beta is ignored.

Rows with trusted=false lie at temperatures too low for the order: the stderr summary
gives the trusted range.

` + csvOutputHelp,
		Example: `warmfit model --lattice square:12x12:periodic --preset heisenberg --set J=1 -o h.json
warmfit sweep --model h.json --beta-grid from=0.05,to=1,points=20 --order 6`,
		Flags: func(fs *pflag.FlagSet) {
			addModelFlag(fs, &modelPath, "")
			fs.StringVar(&betaGrid, "beta-grid", "", "inverse temperatures: from=A,to=B,points=N (evenly spaced, both ends included exactly, the points between rounded to 12 significant digits)")
			fs.StringVar(&oldRange, "beta-range", "", "replaced by --beta-grid")
			_ = fs.MarkHidden("beta-range")
			addOrderFlag(fs, &orderOpt, "largest cluster size, or auto (the highest the automatic work limit and --budget afford)")
			addWorkersFlag(fs, &workers)
			fs.Float64Var(&tol, "tol", 1e-3, "truncation error per site at which a row counts as trusted")
			addBudgetFlag(fs, &budget)
			addOutputFlag(fs, &out, "the table")
			addCSVFlags(fs, &csvOut)
		},
		Run: func(env *runEnv, args []string) error {
			if len(args) > 0 {
				return usagef("unexpected argument %q", args[0])
			}
			if modelPath == "" {
				return usagef("--model is required")
			}
			if err := checkWorkersFlag(workers); err != nil {
				return err
			}
			if !(tol > 0) || math.IsInf(tol, 0) {
				return usagef("--tol %v: must be a positive number", tol)
			}
			if err := checkBudgetFlag(budget); err != nil {
				return err
			}
			if oldRange != "" {
				return retiredBetaRange(oldRange)
			}
			betas, err := parseBetaGrid(betaGrid)
			if err != nil {
				return err
			}
			if err := checkOutputs(withCSV("-o", out, csvOut), modelPath); err != nil {
				return err
			}
			m, err := model.ReadFile(modelPath)
			if err != nil {
				return err
			}
			var unscaled string
			if fittedWithoutScale(m) {
				unscaled = unscaledModelWarning(modelPath, "the grid's beta multiplies beta*lambda, so beta = 1 is the temperature of the data and the energies are in units of k_B T there")
				fmt.Fprintln(env.Stderr, unscaled)
			}
			exp, err := cluster.NewExpansion(m.Lattice, m.Terms)
			if err != nil {
				return err
			}
			order := orderOpt.L
			if order == 0 {
				// One diagonalisation per cluster serves every temperature,
				// so the automatic order is the highest the policy affords.
				order = cluster.NewOrderPolicy(m.Lattice, m.Terms).Highest(exp)
				for order > 2 && sweepEstimate(exp, m.Lattice, order, len(betas)).Duration > budget {
					order--
				}
				fmt.Fprintf(env.Stderr, "sweep: expansion order %d chosen automatically (the highest within the automatic work limit and --budget)\n", order)
			}
			if err := admit(env.Stderr, "sweep", sweepEstimate(exp, m.Lattice, order, len(betas)), budget); err != nil {
				return err
			}
			bar := newProgressBar(env, "expanding")
			start := time.Now()
			res, err := exp.Thermodynamics(modelCoeffs(m), betas, cluster.Options{Order: order, Progress: bar.Update, Workers: workers})
			bar.Done()
			if err != nil {
				return err
			}
			fmt.Fprintf(env.Stderr, "sweep: %s, %d sites, order %d, %d temperatures, %.2fs\n",
				m.Lattice.Spec, m.Lattice.NumSites(), order, len(betas), time.Since(start).Seconds())
			meta := &csvMeta{Command: "sweep", Contents: "one row per inverse temperature of the grid; values per site"}
			meta.set("model", modelPath)
			if unscaled != "" {
				meta.line("%s", unscaled)
			}
			return writeCSVResult(env, out, csvOut, meta, func(w io.Writer) error {
				return writeSweep(w, env, res, tol, meta)
			})
		},
	})
}

// parseBetaGrid reads "from=A,to=B,points=N" (keys in any order). The
// colon form A:B:N of earlier versions is refused with a pointer to this one:
// in a common numerical language a:b:c means start:step:end, so it misleads.
func parseBetaGrid(s string) ([]float64, error) {
	const example = "from=0.05,to=1,points=20"
	if s == "" {
		return nil, usagef("--beta-grid is required, for example --beta-grid %s", example)
	}
	if strings.Contains(s, ":") {
		return nil, usagef("--beta-grid %q: the colon form is not accepted (A:B:C reads as start:step:end in some languages); write the keys, for example --beta-grid %s", s, example)
	}
	var a, b float64
	n := -1
	seen := map[string]bool{}
	for _, part := range strings.Split(s, ",") {
		key, val, ok := strings.Cut(strings.TrimSpace(part), "=")
		if !ok {
			return nil, usagef("--beta-grid %q: %q is not key=value; want %s", s, part, example)
		}
		key = strings.TrimSpace(key)
		val = strings.TrimSpace(val)
		if seen[key] {
			return nil, usagef("--beta-grid %q: %s given twice", s, key)
		}
		seen[key] = true
		switch key {
		case "from", "to":
			x, err := strconv.ParseFloat(val, 64)
			if err != nil || math.IsNaN(x) || math.IsInf(x, 0) || x <= 0 {
				return nil, usagef("--beta-grid %q: %s=%s must be a positive number", s, key, val)
			}
			if key == "from" {
				a = x
			} else {
				b = x
			}
		case "points":
			k, err := strconv.Atoi(val)
			if err != nil || k < 1 || k > maxGridPoints {
				return nil, usagef("--beta-grid %q: points=%s must be an integer from 1 to %d", s, val, maxGridPoints)
			}
			n = k
		default:
			return nil, usagef("--beta-grid %q: unknown key %q (keys: from, to, points)", s, key)
		}
	}
	for _, key := range []string{"from", "to", "points"} {
		if !seen[key] {
			return nil, usagef("--beta-grid %q: %s is missing; want %s", s, key, example)
		}
	}
	switch {
	case b < a:
		return nil, usagef("--beta-grid %q: to=%s is below from=%s", s, fmtFloat(b), fmtFloat(a))
	case n == 1 && a != b:
		return nil, usagef("--beta-grid %q: one point needs from = to", s)
	}
	return betaGrid(a, b, n), nil
}

// gridDigits is the significant digits an interior grid point is rounded
// to: a + (b-a)*i/(n-1) in binary floating point lands a few ulps off the
// decimal the user means (0.39999999999999997 for 0.4), and 12 digits
// keep every distinct point of a grid of up to maxGridPoints points apart
// while dropping that noise.
const gridDigits = 12

// betaGrid is n inverse temperatures evenly spaced from a to b: the ends
// exactly a and b, the points between rounded to gridDigits significant
// digits. sweep and the demo's sweep use it, so they sweep one grid.
func betaGrid(a, b float64, n int) []float64 {
	betas := make([]float64, n)
	for i := range betas {
		switch {
		case i == 0:
			betas[i] = a
		case i == n-1:
			betas[i] = b
		default:
			x := a + (b-a)*float64(i)/float64(n-1)
			r, _ := strconv.ParseFloat(strconv.FormatFloat(x, 'g', gridDigits, 64), 64)
			if r < a || r > b {
				r = x // an end of more digits: rounding would step past it
			}
			betas[i] = r
		}
	}
	return betas
}

// retiredBetaRange answers the old --beta-range A:B:N with the equivalent
// --beta-grid, spelled out, so the user sees which number meant what.
func retiredBetaRange(old string) error {
	parts := strings.Split(old, ":")
	if len(parts) == 3 {
		return usagef("--beta-range was replaced by --beta-grid, which names its numbers; if %q meant start:end:count, write --beta-grid from=%s,to=%s,points=%s", old, parts[0], parts[1], parts[2])
	}
	return usagef("--beta-range was replaced by --beta-grid; write for example --beta-grid from=0.05,to=1,points=20")
}

// sweepEstimate predicts a sweep: the diagonalisations of the expansion
// (the one cost model), then per cluster and temperature a pass over its
// 2^|c| levels, and per anchor block an accumulator of 3 x points x order
// numbers.
func sweepEstimate(exp *cluster.Expansion, lat *lattice.Lattice, order, points int) workEstimate {
	// A sweep needs eigenvalues only: the diagonalisations' D^3 work, not
	// the expectations the calibrated evaluation includes.
	nc, work := exp.EstimateWork(order)
	e := workEstimate{What: expansionWhat(order, lat.NumSites(), float64(nc)), Duration: cluster.PredictDuration(work), Flag: "--order or --beta-grid points"}
	var levels, clusters float64
	for s, c := range lat.EstimateClusterSizes(order) {
		levels += c * math.Exp2(float64(s+1))
		clusters += c
	}
	p := float64(points)
	e.What = fmt.Sprintf("%s at %d temperatures", e.What, points)
	e.Duration += seconds(p * (levels*sweepSecondsPerLevel + clusters*sweepSecondsPerCluster))
	e.Bytes = float64(len(lat.AnchorBlocks())) * 3 * p * float64(order) * 8
	return e
}

// Costs of one temperature in a sweep, measured: square:10x10 order 6
// (9.7e5 levels over 1.9e4 clusters) took over 600 s for 20000 points at
// load 28 on 2 cores; these constants predict about 200 s quiet.
const (
	sweepSecondsPerLevel   = 1e-8
	sweepSecondsPerCluster = 1e-7
)

// maxGridPoints bounds --beta-grid: every point costs a pass over all
// cluster spectra and a row of output.
const maxGridPoints = 100000

// sweepTrust is the trust verdict of a sweep, per temperature and for the
// grid; "warmfit sweep" and the demo state it in the same words
// (sweepVerdict).
type sweepTrust struct {
	Energy, HeatCapacity []cluster.Convergence // per site, per temperature
	Trusted              []bool                // both within tol
	// LastGood is the last trusted beta before the first untrusted one
	// (0 when the first is untrusted), Edge that first untrusted beta (0
	// when every point is trusted).
	LastGood, Edge float64
	Tol            float64
}

// judgeSweep judges energy and heat capacity per site at every
// temperature of r against tol.
func judgeSweep(r *cluster.ThermoResult, tol float64) *sweepTrust {
	n := float64(r.NumSites)
	perSite := func(series []float64) []float64 {
		out := make([]float64, len(series))
		for o, v := range series {
			out[o] = v / n
		}
		return out
	}
	t := &sweepTrust{Tol: tol}
	for i, beta := range r.Betas {
		e := cluster.Converge(perSite(r.Energy[i]), 1, tol)
		c := cluster.Converge(perSite(r.HeatCapacity[i]), 1, tol)
		ok := e.Trusted && c.Trusted
		t.Energy, t.HeatCapacity, t.Trusted = append(t.Energy, e), append(t.HeatCapacity, c), append(t.Trusted, ok)
		if t.Edge == 0 {
			if ok {
				t.LastGood = beta
			} else {
				t.Edge = beta
			}
		}
	}
	return t
}

// sweepVerdict is the one sentence on the trusted range of a sweep; it
// starts with "WARNING: " when part of the grid is untrusted.
func (t *sweepTrust) sweepVerdict() string {
	switch {
	case t.Edge == 0:
		return fmt.Sprintf("converged at every temperature of the grid (tolerance %.2g per site)", t.Tol)
	case t.LastGood == 0:
		return fmt.Sprintf("WARNING: NOT converged at any temperature of the grid (tolerance %.2g per site): every row is untrusted; raise --order or go to higher temperature", t.Tol)
	}
	return fmt.Sprintf("WARNING: %s; rows from beta %s on are marked trusted=false and should not be used",
		t.rangeText(), fmtFloat(t.Edge))
}

// rangeText says how far the series converge, e.g. "converged (tolerance
// 0.001 per site) up to beta 0.6 (T = 1.67), the last trusted point of the
// grid"; only meaningful when LastGood > 0.
func (t *sweepTrust) rangeText() string {
	return fmt.Sprintf("converged (tolerance %.2g per site) %s", t.Tol, t.trustedLimit())
}

// trustedLimit is the one wording of where the trusted range ends, e.g.
// "up to beta 0.6 (T = 1.67), the last trusted point of the grid"; the
// sweep, the demo's report, summary and verdicts all use it. Only
// meaningful when LastGood > 0.
func (t *sweepTrust) trustedLimit() string {
	return fmt.Sprintf("up to beta %s (T = %s), the last trusted point of the grid", fmtFloat(t.LastGood), fmtFloat(1/t.LastGood))
}

// writeSweep writes the sweep table and records its facts and verdict in
// meta (the verdict also goes to stderr).
func writeSweep(w io.Writer, env *runEnv, r *cluster.ThermoResult, tol float64, meta *csvMeta) error {
	bw := bufio.NewWriter(w)
	n := float64(r.NumSites)
	L := r.Order
	trust := judgeSweep(r, tol)
	meta.line("warmfit sweep: linked-cluster expansion, order %d, %d sites; values per site, entropy in nats", L, r.NumSites)
	meta.set("order", L)
	meta.set("sites", r.NumSites)
	meta.set("per_site", true)
	meta.set("entropy_unit", "nats")
	meta.set("tolerance", tol)
	fmt.Fprintln(bw, "beta,T,log_z,energy,entropy,heat_capacity,energy_error,heat_capacity_error,trusted")
	for i, beta := range r.Betas {
		e, c := trust.Energy[i], trust.HeatCapacity[i]
		logZ := r.LogZ[i][L-1]/n + math.Ln2
		vals := []float64{beta, 1 / beta, logZ, e.Value, r.Entropy(i, L) / n, c.Value}
		for _, v := range vals {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("beta %g: non-finite thermodynamic value; the expansion broke down", beta)
			}
			bw.WriteString(fmtExact(v))
			bw.WriteByte(',')
		}
		fmt.Fprintf(bw, "%s,%s,%t\n", fmtExact(e.Error), fmtExact(c.Error), trust.Trusted[i])
	}
	if trust.Edge > 0 {
		meta.set("untrusted_from_beta", trust.Edge)
		if trust.LastGood > 0 {
			meta.set("trusted_up_to_beta", trust.LastGood)
		}
	}
	meta.set("converged_everywhere", trust.Edge == 0)
	verdict := trust.sweepVerdict()
	meta.line("%s", verdict)
	fmt.Fprintln(env.Stderr, verdict)
	return bw.Flush()
}
