package main

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"

	"github.com/spf13/pflag"

	"warmfit/cluster"
	"warmfit/lattice/model"
	"warmfit/validate"
)

// crosscheckFlags are the options of "warmfit crosscheck".
type crosscheckFlags struct {
	modelPath  string
	beta       betaFlag
	shape      string
	sites      []string
	maxPatches int
	tol        float64
	order      int
	dense      int
	vectors    int
	seed       uint64
	workers    int
	format     outputFormat
	out        string
	svg        string
	csv        csvFlags
	budget     time.Duration
	flags      *pflag.FlagSet
}

func init() {
	var o crosscheckFlags
	register(&command{
		Name:  "crosscheck",
		Short: "the expansion against exact results on patches cut from a model",
		Usage: "warmfit crosscheck --model M.json (--shape WxH | --sites LIST ...) [--tol T] [--format csv|json] [-o FILE] [--svg FILE]",
		Long: `Can the linked-cluster expansion be trusted for this model at its temperature? The
answer comes from comparing it with exact results where both can be computed. (It is
not "warmfit model --check", which only validates a model file.)

It cuts patches out of the model: every box of --shape unit cells (on a periodic lattice
every origin, boxes may wrap; on an open one the boxes that fit), or the site sets given
by --sites, one patch per flag (comma-separated sites, ranges a-b allowed). Without
either, a model of at most ` + fmt.Sprint(typicalityQubits) + ` sites is checked whole. A patch keeps the terms whose sites
all lie inside it, with open boundaries where it ends. On each patch every term's
expectation is computed by the expansion at orders 1, 2, ... and exactly: by dense
diagonalisation up to --dense-qubits sites (default 11), by thermal typicality with
random vectors up to ` + fmt.Sprint(typicalityQubits) + ` sites (--vectors, default 16; the values then carry statistical
errors). A value agrees when |expansion - exact| <= --tol + 2 x its own reference standard
error. An order where some value misses is "disagrees" when a miss exceeds what the
reference noise explains among that many values, otherwise "noisy": the references are too
noisy to judge at this tolerance, and the verdict says about how many vectors would bring 2
standard errors below --tol.

The output has one row per order: how many values were compared, the largest and the
root-mean-square |expansion - exact|, the largest statistical error of the references,
whether the order covers whole patches (the expansion is then exact by construction and
says nothing about convergence), whether every value agrees and the order's status, and how
often the expansion's own truncation estimate bounded the true difference within 2
standard errors of the reference (and the median of estimate / true difference: how tight
it is); only values whose reference noise (2 standard errors) is below their estimate are
judged, so noisy references cannot make the estimate look optimistic. Its metadata
(sidecar, see below) gives the lowest order from which the expansion agrees and a verdict on
the model's temperature; a WARNING (also on stderr) says when the expansion cannot be
trusted there, the patches are too small to show it, or the references cannot tell.
--format json adds every value of every patch. --svg draws the largest and rms difference
against the order.

Without --order the highest order is the patch size, lowered while the expansion of
all patches would cost more than about a minute of computing.

` + csvOutputHelp,
		Example: `warmfit model --lattice square:6x6 --preset xxz --set Jxy=0.2,Jz=0.15,hz=0.4,hx=0.2 \
    --disorder 0.05 --seed 4 --beta 0.35 -o device.json
warmfit crosscheck --model device.json --shape 3x3 --svg crosscheck.svg -o crosscheck.csv
warmfit crosscheck --model device.json --sites 14-16,20-22,26-28 --tol 1e-4 --format json
warmfit crosscheck --model device.json --shape 4x4 --max-patches 2 --beta 0.6 --vectors 64`,
		Flags: func(fs *pflag.FlagSet) {
			o = crosscheckFlags{flags: fs}
			addModelFlag(fs, &o.modelPath, "")
			addBetaFlag(fs, &o.beta)
			fs.StringVar(&o.shape, "shape", "", "check every patch of `WxH` unit cells (one size per lattice axis)")
			fs.StringArrayVar(&o.sites, "sites", nil, "check the patch on these `SITES` (like 0,1,2,6-8); repeat for more patches")
			fs.IntVar(&o.maxPatches, "max-patches", 0, "check at most `N` of the patches of --shape, evenly spread (default all)")
			fs.Float64Var(&o.tol, "tol", 1e-3, "largest |expansion - exact| at which a value agrees (plus 2 standard errors of a typicality reference)")
			fs.IntVar(&o.order, "order", 0, "highest expansion order (default: the patch size, within the work limit)")
			fs.IntVar(&o.dense, "dense-qubits", 11, "largest patch diagonalised densely; larger ones use thermal typicality")
			fs.IntVar(&o.vectors, "vectors", 0, "random vectors for thermal typicality (default 16)")
			fs.Uint64Var(&o.seed, "seed", 1, "seed of the random vectors")
			addWorkersFlag(fs, &o.workers)
			addBudgetFlag(fs, &o.budget)
			fs.StringVar((*string)(&o.format), "format", string(formatCSV), "csv (the per-order table) or json (with every value)")
			addOutputFlag(fs, &o.out, "the result")
			fs.StringVar(&o.svg, "svg", "", "draw the difference against the order into `FILE` (SVG)")
			addCSVFlags(fs, &o.csv)
		},
		Run: func(env *runEnv, args []string) error { return runCrosscheck(env, &o, args) },
	})
}

func runCrosscheck(env *runEnv, o *crosscheckFlags, args []string) error {
	if len(args) > 0 {
		return usagef("unexpected argument %q", args[0])
	}
	if err := checkOrderFlag(o.flags, o.order); err != nil {
		return err
	}
	if !(o.tol > 0) || math.IsInf(o.tol, 0) {
		return usagef("--tol %v: must be a positive number", o.tol)
	}
	if o.dense < 1 || o.dense > cluster.MaxDenseQubits {
		return usagef("--dense-qubits %d: must be from 1 to %d", o.dense, cluster.MaxDenseQubits)
	}
	if o.vectors != 0 && o.vectors < 2 {
		return usagef("--vectors %d: need at least 2 random vectors", o.vectors)
	}
	if o.maxPatches < 0 {
		return usagef("--max-patches %d: must be positive", o.maxPatches)
	}
	if _, err := parseChoice("--format", string(o.format), formatCSV, formatJSON); err != nil {
		return err
	}
	if o.format == formatJSON {
		if err := o.csv.misuse("--format json"); err != nil {
			return err
		}
	}
	if o.shape != "" && len(o.sites) > 0 {
		return usagef("give --shape or --sites, not both")
	}
	if err := checkWorkersFlag(o.workers); err != nil {
		return err
	}
	if err := checkOutputs(withCSV("-o", o.out, o.csv, outputFile{"--svg", o.svg}), o.modelPath); err != nil {
		return err
	}
	m, beta, err := loadModelBeta(o.modelPath, o.beta)
	if err != nil {
		return err
	}
	sets, how, err := crosscheckPatches(m, o)
	if err != nil {
		return err
	}
	for _, s := range sets {
		if len(s) > typicalityQubits {
			return usagef("patch %s has %d sites; exact references reach %d (use a smaller --shape)", siteList(s), len(s), typicalityQubits)
		}
	}
	if err := checkBudgetFlag(o.budget); err != nil {
		return err
	}
	if e, ok := crosscheckTypicalityEstimate(m, beta, sets, o); ok {
		if err := admit(env.Stderr, "crosscheck", e, o.budget); err != nil {
			return err
		}
	}
	opt := validate.CrosscheckOptions{
		Tol: o.tol, MaxOrder: o.order, DenseQubits: o.dense, Workers: o.workers,
		Typicality: validate.TypicalityOptions{Vectors: o.vectors, Seed: o.seed},
	}
	fmt.Fprintf(env.Stderr, "crosscheck: %s of %s at beta = %s, tolerance %s\n", how, o.modelPath, fmtFloat(beta), fmtG3(o.tol))
	start := time.Now()
	bar := newProgressBar(env, "crosscheck")
	opt.Progress = bar.Update
	res, err := validate.Crosscheck(m, beta, sets, opt)
	bar.Done()
	if err != nil {
		return err
	}
	fmt.Fprintf(env.Stderr, "crosscheck: %d patch%s, orders 1..%d, in %s\n", len(res.Patches), pluralES(len(res.Patches)), len(res.Orders), time.Since(start).Round(time.Millisecond))
	for _, v := range res.Verdict {
		fmt.Fprintln(env.Stderr, v)
	}
	if o.format == formatJSON {
		err = writeOutput(env, o.out, func(w io.Writer) error { return writeCrosscheckJSON(w, m, res, how) })
	} else {
		meta := crosscheckCSVMeta(res, how)
		meta.set("model", o.modelPath)
		err = writeCSVResult(env, o.out, o.csv, meta, func(w io.Writer) error { return writeCrosscheckCSV(w, res) })
	}
	if err != nil {
		return err
	}
	if o.svg != "" {
		doc := crosscheckFigure(res, how)
		if err := writeFileAtomic(o.svg, func(w io.Writer) error { _, err := doc.WriteTo(w); return err }); err != nil {
			return fmt.Errorf("%s: %w", o.svg, err)
		}
	}
	return nil
}

// crosscheckTypicalityEstimate predicts the thermal typicality of the
// patches past --dense-qubits (the references that can take long), by the
// one typicality cost model; ok is false when every patch is dense.
func crosscheckTypicalityEstimate(m *model.Model, beta float64, sets [][]int, o *crosscheckFlags) (e workEstimate, ok bool) {
	vectors := o.vectors
	if vectors == 0 {
		vectors = defaultTypicalityVectors
	}
	count, largest := 0, 0
	for _, s := range sets {
		if len(s) <= o.dense {
			continue
		}
		in := map[int]bool{}
		for _, q := range s {
			in[q] = true
		}
		terms, norm1 := 0, 0.0
		for _, t := range m.Terms {
			inside := true
			for _, q := range t.Sites {
				inside = inside && in[q]
			}
			if inside {
				terms++
				norm1 += math.Abs(t.Coeff)
			}
		}
		pe := typicalityEstimate(len(s), vectors, terms, norm1, beta)
		e.Duration += pe.Duration
		e.Bytes = max(e.Bytes, pe.Bytes)
		count++
		largest = max(largest, len(s))
	}
	if count == 0 {
		return e, false
	}
	e.What = fmt.Sprintf("thermal typicality of %d patch(es) of up to %d qubits with %d random vectors", count, largest, vectors)
	e.Flag = "--shape or --vectors"
	return e, true
}

// crosscheckPatches returns the site sets to check and a phrase saying
// where they came from.
func crosscheckPatches(m *model.Model, o *crosscheckFlags) ([][]int, string, error) {
	n := m.Lattice.NumSites()
	switch {
	case len(o.sites) > 0:
		if o.maxPatches > 0 {
			return nil, "", usagef("--max-patches goes with --shape; list fewer --sites instead")
		}
		sets := make([][]int, len(o.sites))
		for i, s := range o.sites {
			set, err := parseSiteSet(s, n)
			if err != nil {
				return nil, "", err
			}
			if _, err := validate.CutPatch(m, set); err != nil {
				return nil, "", usagef("--sites %q: %v", s, err)
			}
			sets[i] = set
		}
		return sets, fmt.Sprintf("%d listed patch%s", len(sets), pluralES(len(sets))), nil
	case o.shape != "":
		shape, err := parseShape(o.shape)
		if err != nil {
			return nil, "", err
		}
		sets, err := validate.PatchesOfShape(m.Lattice, shape)
		if err != nil {
			return nil, "", usagef("--shape: %v", err)
		}
		all := len(sets)
		sets = spreadPatches(sets, o.maxPatches)
		how := fmt.Sprintf("all %d patches of shape %s", all, o.shape)
		if len(sets) < all {
			how = fmt.Sprintf("%d of the %d patches of shape %s", len(sets), all, o.shape)
		}
		return sets, how, nil
	case n <= typicalityQubits:
		all := make([]int, n)
		for i := range all {
			all[i] = i
		}
		return [][]int{all}, fmt.Sprintf("the whole model (%d sites)", n), nil
	default:
		return nil, "", usagef("the model has %d sites, more than exact methods reach: give --shape WxH or --sites LIST", n)
	}
}

// spreadPatches keeps at most n of the sets (all when n <= 0), evenly
// spread over the list, so that the kept ones sample the whole lattice.
func spreadPatches(sets [][]int, n int) [][]int {
	if n <= 0 || n >= len(sets) {
		return sets
	}
	out := make([][]int, n)
	for i := range out {
		out[i] = sets[i*len(sets)/n]
	}
	return out
}

// parseShape reads "3x3" (or "4" for a chain) into sizes per axis.
func parseShape(s string) ([]int, error) {
	parts := strings.Split(strings.ToLower(strings.TrimSpace(s)), "x")
	shape := make([]int, len(parts))
	for i, p := range parts {
		v, err := strconv.Atoi(strings.TrimSpace(p))
		if err != nil || v < 1 {
			return nil, usagef("--shape %q: want sizes in unit cells like 3x3 (one per lattice axis)", s)
		}
		shape[i] = v
	}
	return shape, nil
}

// parseSiteSet reads "0,1,2,6-8" into sites of a model of n sites.
func parseSiteSet(s string, n int) ([]int, error) {
	var out []int
	for _, part := range strings.Split(s, ",") {
		part = strings.TrimSpace(part)
		lo, hi, isRange := strings.Cut(part, "-")
		a, errA := strconv.Atoi(strings.TrimSpace(lo))
		b, errB := a, error(nil)
		if isRange {
			b, errB = strconv.Atoi(strings.TrimSpace(hi))
		}
		if errA != nil || errB != nil || b < a {
			return nil, usagef("--sites %q: %q is not a site or a range a-b", s, part)
		}
		if b >= n {
			return nil, usagef("--sites %q: site %d is out of range (the model has sites 0..%d)", s, b, n-1)
		}
		for v := a; v <= b; v++ {
			out = append(out, v)
		}
	}
	return out, nil
}

func pluralES(n int) string {
	if n == 1 {
		return ""
	}
	return "es"
}
