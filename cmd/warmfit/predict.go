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
	"warmfit/fit"
	"warmfit/lattice/model"
	"warmfit/validate"
)

// predictMethod is the value of predict --method.
type predictMethod string

const (
	methodExpansion predictMethod = "expansion" // the linked-cluster expansion
	methodExact     predictMethod = "exact"     // the whole system, dense or by typicality
)

func init() {
	var (
		modelPath string
		beta      betaFlag
		method    string
		order     orderFlag
		workers   int
		tol       float64
		vectors   int
		seed      uint64
		budget    time.Duration
		out       string
		csvOut    csvFlags
	)
	register(&command{
		Name:  "predict",
		Short: "expectation of every term of a model in its Gibbs state",
		Usage: "warmfit predict --model M.json [--beta B] [--method expansion|exact] [--order L|auto] [-o FILE]",
		Long: `The result is the expectation table (pauli,sites,value,stderr): one row per term E_k
of the model, with its value <E_k> = tr(rho E_k) in rho = exp(-beta H)/Z.

--method expansion (the default) sums the numerical linked-cluster expansion over
connected clusters of up to --order sites; it works for any lattice size. Four extra
columns say how far each value can be trusted: step (change from the previous
order), trunc_error (estimated truncation error, extrapolated from the last
changes between orders), resummed (Wynn epsilon acceleration of the partial
sums) and trusted (trunc_error <= --tol). The stderr column says "exact": the value
is the expansion's own prediction at that order, which is the Gibbs value only where
trusted is true. Rows marked trusted=false are NOT exact Gibbs values (their distance
from one is trunc_error), and fit refuses them as exact data.
A summary on stderr says plainly when the temperature is too low for the order.
Without --order the order is chosen automatically, the same way on every machine:
it starts low (4 in two dimensions) and rises while some value is untrusted, up to
a ceiling by lattice dimension (12 on a chain, 8 in two dimensions) and while the
estimated work of the next order stays within about a minute of computing; on a
lattice of at most ` + fmt.Sprint(cluster.MaxDenseQubits) + ` sites it may pass the ceiling up to the number of sites, where
the expansion is exact, when that order costs a few seconds. stderr says which order
was used and why.

--method exact diagonalises the whole system: densely up to ` + fmt.Sprint(denseExactQubits) + ` qubits (stderr
"exact"), and by thermal typicality with random vectors up to ` + fmt.Sprint(typicalityQubits) + ` qubits, in which
case stderr holds the statistical error of each value.

` + csvOutputHelp,
		Example: `warmfit model --lattice square:4x4 --preset xxz --set Jxy=0.5,Jz=1,hz=0.3 --beta 0.4 -o m.json
warmfit predict --model m.json --order 6 -o e.csv
warmfit predict --model m.json --method exact`,
		Flags: func(fs *pflag.FlagSet) {
			addModelFlag(fs, &modelPath, "")
			addBetaFlag(fs, &beta)
			fs.StringVar(&method, "method", string(methodExpansion), "expansion or exact")
			addOrderFlag(fs, &order, "largest cluster size of the expansion, or auto (chosen automatically, see above)")
			fs.Float64Var(&tol, "tol", 1e-3, "truncation error at which an expansion value counts as trusted")
			fs.IntVar(&vectors, "vectors", 0, "random vectors for thermal typicality (exact method past dense size)")
			fs.Uint64Var(&seed, "seed", 1, "seed of the random vectors")
			addBudgetFlag(fs, &budget)
			addWorkersFlag(fs, &workers)
			addOutputFlag(fs, &out, "the table")
			addCSVFlags(fs, &csvOut)
		},
		Run: func(env *runEnv, args []string) error {
			if len(args) > 0 {
				return usagef("unexpected argument %q", args[0])
			}
			if err := checkWorkersFlag(workers); err != nil {
				return err
			}
			if !(tol > 0) || math.IsInf(tol, 0) {
				return usagef("--tol %v: must be a positive number", tol)
			}
			if vectors < 0 || vectors == 1 {
				return usagef("--vectors %d: want at least 2 random vectors (0: the default 16)", vectors)
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
			var table *fit.Table
			fields := map[string]any{}
			pm, err := parseChoice("--method", method, methodExpansion, methodExact)
			if err != nil {
				return err
			}
			switch pm {
			case methodExpansion:
				table, err = predictByExpansion(env, m, b, order.L, tol, budget, workers, fields)
			case methodExact:
				table, err = predictExact(env, m, b, vectors, seed, budget, fields)
			}
			if err != nil {
				return err
			}
			meta := tableMeta("predict", "expectation table: one row per model term (pauli,sites,value,stderr, then the method's columns)", table.Comments)
			table.Comments = nil
			meta.set("model", modelPath)
			meta.set("method", method)
			meta.set("beta", b)
			if fittedWithoutScale(m) {
				note := "the model's coefficients are beta*lambda (fitted without beta): beta = 1 is the temperature of its data, by convention"
				meta.line("%s", note)
				meta.set("beta_meaning", "1 by convention: the coefficients are beta*lambda")
				fmt.Fprintln(env.Stderr, "predict: "+note)
			}
			for k, v := range fields {
				meta.set(k, v)
			}
			return writeCSVResult(env, out, csvOut, meta, func(w io.Writer) error { return fit.WriteTable(w, table) })
		},
	})
}

// loadModelBeta reads a model and settles the inverse temperature: the
// flag wins over the file; one of them must give a positive value.
func loadModelBeta(path string, beta betaFlag) (*model.Model, float64, error) {
	if path == "" {
		return nil, 0, usagef("--model is required")
	}
	m, err := model.ReadFile(path)
	if err != nil {
		return nil, 0, err
	}
	b := m.Beta
	if beta.set {
		if fittedWithoutScale(m) {
			return nil, 0, usagef("%s was fitted without beta: its coefficients are beta*lambda (beta = 1 by convention), so --beta %s would count the temperature twice; drop --beta, or fix the energy scale with 'warmfit fit ... --scale-from TERM=VALUE'", path, beta.String())
		}
		b = beta.value
	}
	if b <= 0 {
		return nil, 0, usagef("%s gives no beta: add --beta B", path)
	}
	return m, b, nil
}

// checkOrderFlag refuses an explicit --order outside
// minExpansionOrder..MaxDenseQubits as a usage error.
func checkOrderFlag(fs *pflag.FlagSet, order int) error {
	if fs.Changed("order") {
		return checkOrder(strconv.Itoa(order), order)
	}
	return nil
}

// minExpansionOrder is the lowest --order any command takes: order 1
// holds single sites only, no two-site term and no convergence estimate.
const minExpansionOrder = 2

// checkOrder is the one range check of an --order value (given is the
// flag as written, for the message).
func checkOrder(given string, order int) error {
	if order < minExpansionOrder || order > cluster.MaxDenseQubits {
		return usagef("--order %s: must be from %d to %d (order 1 holds single sites only; clusters are diagonalised exactly, at most %d sites)",
			given, minExpansionOrder, cluster.MaxDenseQubits, cluster.MaxDenseQubits)
	}
	return nil
}

func modelCoeffs(m *model.Model) []float64 {
	c := make([]float64, len(m.Terms))
	for k, t := range m.Terms {
		c[k] = t.Coeff
	}
	return c
}

// predictByExpansion returns the table of expansion predictions and
// records the run's facts in meta.
func predictByExpansion(env *runEnv, m *model.Model, beta float64, order int, tol float64, budget time.Duration, workers int, meta map[string]any) (*fit.Table, error) {
	exp, err := cluster.NewExpansion(m.Lattice, m.Terms)
	if err != nil {
		return nil, err
	}
	policy := cluster.NewOrderPolicy(m.Lattice, m.Terms)
	policy.Budget = budget
	if err := admitExpansion(env, "predict", exp, m.Lattice.NumSites(), order, false, policy, budget); err != nil {
		return nil, err
	}
	coeffs := modelCoeffs(m)
	start := time.Now()
	bar := newProgressBar(env, "expanding")
	opt := cluster.Options{Progress: bar.Update, Workers: workers}
	var res *cluster.Result
	if order > 0 {
		opt.Order = order
		res, err = exp.Evaluate(coeffs, beta, opt)
	} else {
		var choice cluster.OrderChoice
		res, choice, err = exp.ChooseOrder(coeffs, beta, tol, policy, opt)
		if err == nil {
			order = choice.Order
			for _, st := range choice.Steps {
				fmt.Fprintf(env.Stderr, "expansion: %s\n", st)
			}
			fmt.Fprintf(env.Stderr, "expansion: order %d chosen automatically: %s\n", order, choice.Reason)
		}
	}
	bar.Done()
	if err != nil {
		return nil, err
	}
	conv := res.TermConvergence(m.Terms, tol)
	t := &fit.Table{ExtraHeader: []string{"step", "trunc_error", "resummed", "trusted"}}
	untrusted, unknown, worst := 0, 0, 0.0
	for k, term := range m.Terms {
		c := conv[k]
		if !c.Trusted {
			untrusted++
		}
		// The value is the expansion's exact prediction at this order: no
		// measurement noise, so stderr says "exact" and the table fits
		// back as exact data. How far it may be from the Gibbs state is
		// the truncation error, in its own column.
		if math.IsInf(c.Error, 0) || math.IsNaN(c.Error) {
			unknown++
		} else {
			worst = math.Max(worst, c.Error)
		}
		if math.Abs(c.Value) > 1+1e-9 {
			return nil, fmt.Errorf("the expansion has broken down at beta = %s, order %d: <%s> = %.4g lies outside [-1, 1]; raise --order or use a higher temperature",
				fmtFloat(beta), order, term.Key(), c.Value)
		}
		t.Rows = append(t.Rows, fit.Row{
			Pauli: term.Pauli, Sites: term.Sites, Value: c.Value,
			Extra: []string{fmtExact(c.LastStep), fmtExact(c.Error), fmtExact(c.Resummed), strconv.FormatBool(c.Trusted)},
		})
	}
	bound := cluster.SufficientBeta(m.Terms, coeffs)
	verdict := expansionVerdict(untrusted-unknown, unknown, len(m.Terms), worst, tol, beta, order)
	if n := m.Lattice.NumSites(); order >= n {
		verdict = fmt.Sprintf("converged, exactly: order %d covers all %d sites, so the expansion equals the lattice's Gibbs values (no truncation error)", order, n)
	}
	meta["order"] = order
	meta["clusters"] = sum64(res.Clusters)
	meta["tolerance"] = tol
	meta["values_unconverged"] = untrusted - unknown
	meta["values_unjudged"] = unknown
	meta["converged"] = untrusted == 0
	meta["max_truncation_error"] = worst
	meta["sufficient_beta_bound"] = bound.Beta
	meta["overlap_degree"] = bound.Degree
	t.Comments = []string{
		fmt.Sprintf("warmfit predict: linked-cluster expansion, order %d, beta %s, %d clusters", order, fmtFloat(beta), sum64(res.Clusters)),
		verdict, // WriteTable splits multi-line comments
		boundLine(bound, beta),
	}
	fmt.Fprintf(env.Stderr, "expansion: %s, %d sites, %d terms, order %d, %d clusters, %.2fs\n",
		m.Lattice.Spec, m.Lattice.NumSites(), len(m.Terms), order, sum64(res.Clusters), time.Since(start).Seconds())
	fmt.Fprintln(env.Stderr, verdict)
	fmt.Fprintln(env.Stderr, boundLine(bound, beta))
	return t, nil
}

// expansionVerdict is the plain-language trust statement for a table:
// unconverged values (the temperature is too low for the order) and
// values the order is too low to judge at all are told apart.
func expansionVerdict(unconverged, unknown, total int, worst, tol, beta float64, order int) string {
	var parts []string
	if unconverged > 0 {
		parts = append(parts, fmt.Sprintf("WARNING: %d of %d values have NOT converged (estimated truncation error up to %.2g > %.2g): the temperature is too low for order %d (beta = %s is too large); raise --order or do not trust the rows marked trusted=false",
			unconverged, total, worst, tol, order, fmtFloat(beta)))
	}
	if unknown > 0 {
		parts = append(parts, fmt.Sprintf("WARNING: %d of %d values cannot be judged: order %d leaves fewer than two orders past their smallest cluster (trunc_error n/a, trusted false); raise --order",
			unknown, total, order))
	}
	if len(parts) == 0 {
		return fmt.Sprintf("converged: estimated truncation error at most %.2g for every value (tolerance %.2g)", worst, tol)
	}
	return strings.Join(parts, "\n")
}

func boundLine(b cluster.ThresholdBound, beta float64) string {
	if math.IsInf(b.Beta, 1) {
		return "sufficient-temperature bound: no interacting terms"
	}
	rel := "inside"
	if beta >= b.Beta {
		rel = fmt.Sprintf("%.3gx above", beta/b.Beta)
	}
	return fmt.Sprintf("sufficient-temperature bound (cluster-expansion criterion, term-overlap degree %d): beta < %.3g; this beta is %s it, so trust rests on the measured convergence", b.Degree, b.Beta, rel)
}

func predictExact(env *runEnv, m *model.Model, beta float64, vectors int, seed uint64, budget time.Duration, meta map[string]any) (*fit.Table, error) {
	n := m.Lattice.NumSites()
	if n > typicalityQubits {
		return nil, usagef("--method exact handles at most %d qubits (dense up to %d, thermal typicality beyond); this model has %d: use --method expansion",
			typicalityQubits, denseExactQubits, n)
	}
	cost := denseEstimate(n, "the number of qubits (or use --method expansion)")
	if n > denseExactQubits {
		if vectors == 0 {
			vectors = defaultTypicalityVectors
		}
		norm1 := 0.0
		for _, t := range m.Terms {
			norm1 += math.Abs(t.Coeff)
		}
		cost = typicalityEstimate(n, vectors, len(m.Terms), norm1, beta)
	}
	if err := admit(env.Stderr, "predict", cost, budget); err != nil {
		return nil, err
	}
	ops := make([]cluster.PauliString, len(m.Terms))
	for k, t := range m.Terms {
		op, err := cluster.ParsePauli(t.Pauli, t.Sites)
		if err != nil {
			return nil, fmt.Errorf("term %s: %v", t.Key(), err)
		}
		ops[k] = op
	}
	t := &fit.Table{}
	start := time.Now()
	if n <= denseExactQubits {
		th, err := validate.ExactThermal(n, m.Terms, beta)
		if err != nil {
			return nil, err
		}
		vals := make([]float64, len(ops))
		th.ExpectAll(ops, vals)
		for k, term := range m.Terms {
			t.Rows = append(t.Rows, fit.Row{Pauli: term.Pauli, Sites: term.Sites, Value: vals[k]})
		}
		meta["exact_method"] = "dense diagonalisation"
		meta["qubits"] = n
		t.Comments = []string{fmt.Sprintf("warmfit predict: dense exact diagonalisation of %d qubits, beta %s", n, fmtFloat(beta))}
		fmt.Fprintf(env.Stderr, "exact: dense diagonalisation of %d qubits, %.2fs\n", n, time.Since(start).Seconds())
		return t, nil
	}
	opt := validate.TypicalityOptions{Vectors: vectors, Seed: seed}
	logZ, est, err := validate.Typical(n, m.Terms, beta, ops, opt)
	if err != nil {
		return nil, err
	}
	for k, term := range m.Terms {
		t.Rows = append(t.Rows, fit.Row{Pauli: term.Pauli, Sites: term.Sites, Value: est[k].Value, Stderr: est[k].Stderr, HasStderr: true})
	}
	meta["exact_method"] = "thermal typicality"
	meta["qubits"] = n
	meta["vectors"] = opt.Vectors
	if opt.Vectors == 0 {
		meta["vectors"] = 16 // validate.TypicalityOptions' default
	}
	meta["seed"] = seed
	meta["log_z"] = logZ.Value
	meta["log_z_stderr"] = logZ.Stderr
	t.Comments = []string{fmt.Sprintf("warmfit predict: thermal typicality on %d qubits, beta %s, log Z = %s +- %s; stderr is statistical",
		n, fmtFloat(beta), fmtFloat(logZ.Value), fmtFloat(logZ.Stderr))}
	fmt.Fprintf(env.Stderr, "exact: %d qubits are past dense size (%d); thermal typicality, %.2fs\n", n, denseExactQubits, time.Since(start).Seconds())
	return t, nil
}

// defaultTypicalityVectors is the number of random vectors of thermal
// typicality when --vectors is not given (validate's default).
const defaultTypicalityVectors = 16

// admitExpansion predicts an expansion run before it starts: an explicit
// order is estimated and refused past the memory or --budget; an
// automatic choice says where it starts, that further orders are chosen
// by work units and that the budget only guards.
func admitExpansion(env *runEnv, cmd string, exp *cluster.Expansion, sites, order int, response bool, policy cluster.OrderPolicy, budget time.Duration) error {
	if order > 0 {
		return admit(env.Stderr, cmd, expansionEstimate(exp, sites, order, response, "--order"), budget)
	}
	e := expansionEstimate(exp, sites, policy.Start, response, "--order")
	fmt.Fprintf(env.Stderr, "%s: estimate: %s, about %s to start --order auto; higher orders are chosen within a machine-independent work limit, and --budget %v only guards the wall time (a stop by it is reported as machine-dependent)\n",
		cmd, e.What, describeTime(e.Duration), describeBudgetFlag(budget))
	return nil
}

// denseExactQubits is the largest system `predict --method exact` and the
// exact sampler diagonalise densely by default: 11 qubits take seconds,
// 12 (cluster.MaxDenseQubits) minutes, where thermal typicality is faster.
const denseExactQubits = 11

func sum64(v []int64) int64 {
	var s int64
	for _, x := range v {
		s += x
	}
	return s
}
