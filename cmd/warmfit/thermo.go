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
	"warmfit/lattice/model"
)

func init() {
	var (
		modelPath string
		betaRange string
		order     int
		tol       float64
		out       string
		flags     *pflag.FlagSet
	)
	register(&command{
		Name:  "thermo",
		Short: "per-site thermodynamics over a temperature grid",
		Usage: "warmfit thermo --model M.json --beta-range A:B:N [--order L] [-o FILE]",
		Long: `Thermo sums the linked-cluster expansion of the model for N inverse temperatures
evenly spaced from A to B and writes, per site: log Z, energy, entropy (nats) and heat
capacity, with the estimated truncation error of energy and heat capacity and
whether both are within --tol. Each cluster is diagonalised
once for the whole grid. The model's own beta is ignored.

Rows with trusted=false lie at temperatures too low for the order: the stderr summary
gives the trusted range.`,
		Example: `warmfit model --lattice square:12x12:periodic --preset heisenberg --set J=1 -o h.json
warmfit thermo --model h.json --beta-range 0.05:1:20 --order 6`,
		Flags: func(fs *pflag.FlagSet) {
			flags = fs
			fs.StringVar(&modelPath, "model", "", "model file (JSON)")
			fs.StringVar(&betaRange, "beta-range", "", "grid A:B:N of inverse temperatures")
			fs.IntVar(&order, "order", 0, "largest cluster size (default: the highest the automatic work limit affords)")
			fs.Float64Var(&tol, "tol", 1e-3, "truncation error per site at which a row counts as trusted")
			fs.StringVarP(&out, "output", "o", "", "write the table to `FILE` instead of stdout")
		},
		Run: func(env *runEnv, args []string) error {
			if len(args) > 0 {
				return usagef("unexpected argument %q", args[0])
			}
			if modelPath == "" {
				return usagef("--model is required")
			}
			if err := checkOrderFlag(flags, order); err != nil {
				return err
			}
			if !(tol > 0) || math.IsInf(tol, 0) {
				return usagef("--tol %v: must be a positive number", tol)
			}
			betas, err := parseBetaRange(betaRange)
			if err != nil {
				return err
			}
			m, err := model.ReadFile(modelPath)
			if err != nil {
				return err
			}
			exp, err := cluster.NewExpansion(m.Lattice, m.Terms)
			if err != nil {
				return err
			}
			if order == 0 {
				// One diagonalisation per cluster serves every temperature,
				// so the automatic order is the highest the policy affords.
				order = cluster.NewOrderPolicy(m.Lattice, m.Terms).Highest(exp)
				fmt.Fprintf(env.Stderr, "thermo: expansion order %d chosen automatically (the highest within the automatic work limit)\n", order)
			}
			bar := newProgressBar(env, "expanding")
			start := time.Now()
			res, err := exp.Thermodynamics(modelCoeffs(m), betas, cluster.Options{Order: order, Progress: bar.Update})
			bar.Done()
			if err != nil {
				return err
			}
			fmt.Fprintf(env.Stderr, "thermo: %s, %d sites, order %d, %d temperatures, %.2fs\n",
				m.Lattice.Spec, m.Lattice.NumSites(), order, len(betas), time.Since(start).Seconds())
			return writeOutput(env, out, func(w io.Writer) error {
				return writeThermo(w, env, res, tol)
			})
		},
	})
}

func parseBetaRange(s string) ([]float64, error) {
	if s == "" {
		return nil, usagef("--beta-range A:B:N is required")
	}
	parts := strings.Split(s, ":")
	if len(parts) != 3 {
		return nil, usagef("--beta-range %q: want A:B:N, for example 0.1:1:10", s)
	}
	a, errA := strconv.ParseFloat(parts[0], 64)
	b, errB := strconv.ParseFloat(parts[1], 64)
	n, errN := strconv.Atoi(parts[2])
	switch {
	case errA != nil || math.IsNaN(a) || math.IsInf(a, 0) || a <= 0:
		return nil, usagef("--beta-range %q: start %q must be a positive number", s, parts[0])
	case errB != nil || math.IsNaN(b) || math.IsInf(b, 0) || b < a:
		return nil, usagef("--beta-range %q: end %q must be a number >= the start", s, parts[1])
	case errN != nil || n < 1 || n > 100000:
		return nil, usagef("--beta-range %q: count %q must be an integer from 1 to 100000", s, parts[2])
	case n == 1 && a != b:
		return nil, usagef("--beta-range %q: one point needs A = B", s)
	}
	betas := make([]float64, n)
	for i := range betas {
		betas[i] = a
		if n > 1 {
			betas[i] = a + (b-a)*float64(i)/float64(n-1)
		}
	}
	return betas, nil
}

func writeThermo(w io.Writer, env *runEnv, r *cluster.ThermoResult, tol float64) error {
	bw := bufio.NewWriter(w)
	n := float64(r.NumSites)
	L := r.Order
	fmt.Fprintf(bw, "# warmfit thermo: linked-cluster expansion, order %d, %d sites; values per site, entropy in nats\n", L, r.NumSites)
	fmt.Fprintln(bw, "beta,T,log_z,energy,entropy,heat_capacity,energy_error,heat_capacity_error,trusted")
	lastTrusted := -1
	firstUntrusted := -1
	for i, beta := range r.Betas {
		perSite := func(series []float64) []float64 {
			out := make([]float64, len(series))
			for o, v := range series {
				out[o] = v / n
			}
			return out
		}
		e := cluster.Converge(perSite(r.Energy[i]), 1, tol)
		c := cluster.Converge(perSite(r.HeatCapacity[i]), 1, tol)
		trusted := e.Trusted && c.Trusted
		if trusted {
			lastTrusted = i
		} else if firstUntrusted < 0 {
			firstUntrusted = i
		}
		logZ := r.LogZ[i][L-1]/n + math.Ln2
		vals := []float64{beta, 1 / beta, logZ, e.Value, r.Entropy(i, L) / n, c.Value}
		for _, v := range vals {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("beta %g: non-finite thermodynamic value; the expansion broke down", beta)
			}
			bw.WriteString(strconv.FormatFloat(v, 'g', 10, 64))
			bw.WriteByte(',')
		}
		fmt.Fprintf(bw, "%s,%s,%t\n", fmtFloat(e.Error), fmtFloat(c.Error), trusted)
	}
	switch {
	case firstUntrusted < 0:
		fmt.Fprintf(env.Stderr, "converged at every temperature of the grid (tolerance %.2g per site)\n", tol)
	case lastTrusted < 0:
		fmt.Fprintf(env.Stderr, "WARNING: NOT converged at any temperature of the grid (tolerance %.2g per site): every row is untrusted; raise --order or go to higher temperature\n", tol)
	default:
		fmt.Fprintf(env.Stderr, "WARNING: converged only for beta < %s (T > %s); rows beyond are marked trusted=false and should not be used\n",
			fmtFloat(r.Betas[firstUntrusted]), fmtFloat(1/r.Betas[firstUntrusted]))
	}
	return bw.Flush()
}
