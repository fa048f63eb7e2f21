package main

import (
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"time"

	"github.com/spf13/pflag"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/lattice/model"
	"warmfit/validate"
)

// sampleGenerator is the value of sample --generator.
type sampleGenerator string

const (
	generatorExact    sampleGenerator = "exact"    // whole snapshots from the dense Gibbs state
	generatorBinomial sampleGenerator = "binomial" // each term's outcomes from its expansion expectation
	generatorAuto     sampleGenerator = "auto"     // exact up to denseExactQubits, else binomial
)

func init() {
	var (
		modelPath string
		beta      betaFlag
		shots     int64
		bases     string
		seed      uint64
		generator string
		order     orderFlag
		workers   int
		budget    time.Duration
		out       string
		csvOut    csvFlags
	)
	register(&command{
		Name:  "sample",
		Short: "synthetic measurement data from a model's Gibbs state",
		Usage: "warmfit sample --model M.json [--beta B] --shots N [--bases covering|random:K] [--generator exact|binomial|auto] [--order L|auto] [--seed S] [-o FILE]",
		Long: `The data are simulated measurements of the model's Gibbs state in product bases, N
shots per basis: made to test a fit or to plan an experiment.

--generator exact (the default up to ` + fmt.Sprint(denseExactQubits) + ` qubits; possible up to ` + fmt.Sprint(cluster.MaxDenseQubits) + `) draws whole snapshots
from the exact Gibbs state and writes a snapshot file (basis,outcome,count), just as a
device would.

--generator binomial (the default above ` + fmt.Sprint(denseExactQubits) + ` qubits) is for arrays too large for that:
each term's estimate is drawn from the binomial law with the expansion's expectation
value and as many shots as the bases give it, and the result is an expectation table.
It ignores the correlations between terms that real shots share, and says so in the
file and on stderr.

--bases covering picks a small set of product bases in which every term of the model
is measured at least once; random:K draws K bases with a random letter per qubit.
covering:3 also measures the 2- and 3-local correlators that fit --method stationary
needs; it needs whole snapshots, so it is refused with the binomial generator.

` + csvOutputHelp,
		Example: `warmfit model --lattice chain:8 --preset tfim --set J=1,hx=0.7 --beta 0.5 -o tfim.json
warmfit sample --model tfim.json --shots 20000 --seed 7 -o shots.csv
warmfit model --lattice square:20x20 --preset xxz --disorder 0.1 --seed 3 --beta 0.3 -o big.json
warmfit sample --model big.json --shots 100000 --generator binomial -o big-data.csv`,
		Flags: func(fs *pflag.FlagSet) {
			addModelFlag(fs, &modelPath, "")
			addBetaFlag(fs, &beta)
			fs.Int64Var(&shots, "shots", 0, "`N` shots per basis")
			fs.StringVar(&bases, "bases", "covering", "measurement `SCHEME`: covering, covering:3 (what fit --method stationary needs) or random:K")
			fs.Uint64Var(&seed, "seed", 1, "random seed")
			fs.StringVar(&generator, "generator", string(generatorAuto), "exact, binomial or auto")
			addOrderFlag(fs, &order, "expansion order of the binomial generator, or auto (chosen as in predict)")
			addBudgetFlag(fs, &budget)
			addWorkersFlag(fs, &workers)
			addOutputFlag(fs, &out, "the data")
			addCSVFlags(fs, &csvOut)
		},
		Run: func(env *runEnv, args []string) error {
			if len(args) > 0 {
				return usagef("unexpected argument %q", args[0])
			}
			if err := checkWorkersFlag(workers); err != nil {
				return err
			}
			if shots <= 0 {
				return usagef("--shots N is required and must be positive")
			}
			if err := checkBudgetFlag(budget); err != nil {
				return err
			}
			if err := checkOutputs(withCSV("-o", out, csvOut), modelPath); err != nil {
				return err
			}
			m, b, err := loadModelBeta(modelPath, beta)
			if err != nil {
				return err
			}
			n := m.Lattice.NumSites()
			basisList, _, err := fit.SchemeBases(bases, n, m.Terms, seed)
			if err != nil {
				return usagef("--%v", err)
			}
			gen, err := parseChoice("--generator", generator, generatorExact, generatorBinomial, generatorAuto)
			if err != nil {
				return err
			}
			if gen == generatorAuto {
				gen = generatorBinomial
				if n <= denseExactQubits {
					gen = generatorExact
				}
			}
			if gen == generatorBinomial && bases == "covering:3" {
				// The binomial generator writes one row per model term; the
				// stationarity constraints need the 2- and 3-local
				// correlators of whole snapshots, which it cannot produce.
				why := "--generator binomial"
				if generator == string(generatorAuto) {
					why = fmt.Sprintf("above %d qubits the default generator is binomial", denseExactQubits)
				}
				return usagef("--bases covering:3 is for fit --method stationary, which needs whole snapshots (2- and 3-local correlators), but %s: it writes only the model's own %d term expectations, never those correlators. Use --generator exact (at most %d qubits; this model has %d), or sample a patch of the model that small",
					why, len(m.Terms), cluster.MaxDenseQubits, n)
			}
			if gen == generatorExact && n > cluster.MaxDenseQubits {
				return usagef("--generator exact draws snapshots by dense diagonalisation, at most %d qubits; this model has %d: use --generator binomial", cluster.MaxDenseQubits, n)
			}
			if gen == generatorExact {
				if err := admit(env.Stderr, "sample", exactSampleEstimate(n, len(basisList), shots), budget); err != nil {
					return err
				}
			}
			fmt.Fprintf(env.Stderr, "sample: %d qubits, %d bases x %d shots, %s generator, seed %d\n", n, len(basisList), shots, gen, seed)
			meta := &csvMeta{Command: "sample"}
			meta.set("model", modelPath)
			meta.set("beta", b)
			meta.set("generator", gen)
			meta.set("bases", basisList)
			meta.set("shots_per_basis", shots)
			meta.set("seed", seed)
			if gen == generatorExact {
				return sampleExact(env, m, b, basisList, shots, seed, out, csvOut, meta)
			}
			return sampleBinomial(env, m, b, basisList, shots, seed, order.L, budget, workers, out, csvOut, meta)
		},
	})
}

func sampleExact(env *runEnv, m *model.Model, beta float64, bases []string, shots int64, seed uint64, out string, csvOut csvFlags, meta *csvMeta) error {
	start := time.Now()
	s, err := validate.NewSampler(m.Lattice.NumSites(), m.Terms, beta)
	if err != nil {
		return err
	}
	if shots > int64(^uint(0)>>1) {
		return usagef("--shots %d is too large", shots)
	}
	rng := rand.New(rand.NewPCG(seed, 0x5a3e))
	type block struct {
		basis  string
		counts []validate.Count
	}
	var blocks []block
	bar := newProgressBar(env, "sampling")
	for i, basis := range bases {
		c, err := s.Sample(basis, int(shots), rng)
		if err != nil {
			bar.Done()
			return err
		}
		blocks = append(blocks, block{basis, c})
		bar.Update(i+1, len(bases))
	}
	bar.Done()
	fmt.Fprintf(env.Stderr, "sample: exact Gibbs-state snapshots, %.2fs\n", time.Since(start).Seconds())
	n := m.Lattice.NumSites()
	meta.Contents = "snapshot file: one row per basis and outcome seen, with its count"
	meta.line("warmfit sample: exact Gibbs-state snapshots of %d qubits, beta %s, %d bases x %d shots, seed %d", n, fmtFloat(beta), len(bases), shots, seed)
	return writeCSVResult(env, out, csvOut, meta, func(w io.Writer) error {
		sw := fit.NewSnapshotWriter(w, n)
		for _, b := range blocks {
			for _, c := range b.counts {
				if err := sw.Write(b.basis, c.Outcome, int64(c.Count)); err != nil {
					return err
				}
			}
		}
		return sw.Flush()
	})
}

// exactSampleEstimate predicts exact snapshots: one dense
// diagonalisation; per basis, every eigenvector rotated into it (D^2 n
// operations) and its outcome distribution kept (2 D numbers); then a
// binary search over 2^n outcomes per shot, the counts kept being at most
// min(2^n, shots) per basis.
func exactSampleEstimate(n, bases int, shots int64) workEstimate {
	e := denseEstimate(n, "--shots or the number of bases (--bases)")
	d := math.Exp2(float64(n))
	nshots := float64(bases) * float64(shots)
	e.What = fmt.Sprintf("%d bases x %d exact shots on %d qubits", bases, shots, n)
	e.Duration += seconds(nshots*sampleSecondsPerShotQubit*float64(n+2) + float64(bases)*d*d*float64(n)*sampleSecondsPerRotation)
	distinct := min(d, float64(shots))
	e.Bytes += float64(bases) * (distinct*float64(48+n) + 16*d)
	return e
}

// sampleSecondsPerRotation is one amplitude of one eigenvector rotated
// on one qubit into a measurement basis (measured: 200 bases on 10
// qubits, 21 s at load 4 on 2 cores, so about half that when quiet).
const sampleSecondsPerRotation = 5e-9

func sampleBinomial(env *runEnv, m *model.Model, beta float64, bases []string, shots int64, seed uint64, order int, budget time.Duration, workers int, out string, csvOut csvFlags, meta *csvMeta) error {
	exp, err := cluster.NewExpansion(m.Lattice, m.Terms)
	if err != nil {
		return err
	}
	policy := cluster.NewOrderPolicy(m.Lattice, m.Terms)
	policy.Budget = budget
	if err := admitExpansion(env, "sample", exp, m.Lattice.NumSites(), order, false, policy, budget); err != nil {
		return err
	}
	bar := newProgressBar(env, "expanding")
	opt := cluster.Options{Order: order, Progress: bar.Update, Workers: workers}
	var res *cluster.Result
	if order > 0 {
		res, err = exp.Evaluate(modelCoeffs(m), beta, opt)
	} else {
		var choice cluster.OrderChoice
		res, choice, err = exp.ChooseOrder(modelCoeffs(m), beta, 1e-3, policy, opt)
		if err == nil {
			order = choice.Order
			fmt.Fprintf(env.Stderr, "sample: expansion order %d chosen automatically: %s\n", order, choice.Reason)
		}
	}
	bar.Done()
	if err != nil {
		return err
	}
	expect := res.Expect[order-1]
	conv := res.TermConvergence(m.Terms, 1e-3)
	untrusted := 0
	for k := range conv {
		if !conv[k].Trusted {
			untrusted++
		}
		// Truncation can push an expectation past +-1 by about its error;
		// only that much is clipped, anything more is a broken expansion.
		slack := 1e-9
		if e := conv[k].Error; !math.IsInf(e, 0) && !math.IsNaN(e) {
			slack += 5 * e
		}
		if math.Abs(expect[k]) > 1+slack {
			return fmt.Errorf("the expansion has broken down at beta = %s, order %d: <%s> = %.4g lies outside [-1, 1]; no data generated. Use a higher temperature or --order",
				fmtFloat(beta), order, m.Terms[k].Key(), expect[k])
		}
		expect[k] = max(-1, min(1, expect[k]))
	}
	t, err := fit.SyntheticTable(m.Terms, expect, bases, shots, seed)
	if err != nil {
		return err
	}
	t.Comments = append(t.Comments, fmt.Sprintf("expectations from the linked-cluster expansion at order %d, beta %s", order, fmtFloat(beta)))
	fmt.Fprintln(env.Stderr, "sample: binomial generator: each term drawn independently; cross-term correlations are ignored")
	if untrusted > 0 {
		msg := fmt.Sprintf("WARNING: the expansion has not converged for %d of %d terms at order %d: the synthetic data follow the truncated expansion, not the true Gibbs state", untrusted, len(m.Terms), order)
		fmt.Fprintln(env.Stderr, msg)
		t.Comments = append(t.Comments, msg)
	}
	meta.Contents = "expectation table: one row per model term, with the shots it got"
	meta.Lines = append(meta.Lines, t.Comments...)
	t.Comments = nil
	meta.set("order", order)
	meta.set("terms_unconverged", untrusted)
	meta.set("correlations", "ignored: each term drawn independently")
	return writeCSVResult(env, out, csvOut, meta, func(w io.Writer) error { return fit.WriteTable(w, t) })
}
