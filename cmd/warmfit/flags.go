package main

import (
	"strconv"

	"github.com/spf13/pflag"

	"warmfit/cluster"
)

// orderFlag is the --order of every command that sums the expansion:
// "auto" (the default: the one order policy chooses) or an order from
// minExpansionOrder to cluster.MaxDenseQubits. L is 0 for auto.
type orderFlag struct {
	L int
}

func (o *orderFlag) String() string {
	if o.L == 0 {
		return "auto"
	}
	return strconv.Itoa(o.L)
}

func (o *orderFlag) Set(s string) error {
	if s == "auto" {
		o.L = 0
		return nil
	}
	n, err := strconv.Atoi(s)
	if err != nil {
		return usagef("want auto or an integer from %d to %d", minExpansionOrder, cluster.MaxDenseQubits)
	}
	if err := checkOrder(s, n); err != nil {
		return err
	}
	o.L = n
	return nil
}

func (o *orderFlag) Type() string { return "L|auto" }

// addOrderFlag registers --order on fs. It resets o first: the runner
// registers flags afresh for every run, and an order left from an
// earlier run in the same process must not leak into the next.
func addOrderFlag(fs *pflag.FlagSet, o *orderFlag, usage string) {
	*o = orderFlag{}
	fs.Var(o, "order", usage)
}

// addWorkersFlag registers --workers with one wording everywhere.
func addWorkersFlag(fs *pflag.FlagSet, w *int) {
	fs.IntVar(w, "workers", 0, "`N` parallel workers (default 0: all cores); results do not depend on it")
}

// checkWorkersFlag refuses a negative --workers.
func checkWorkersFlag(w int) error {
	if w < 0 {
		return usagef("--workers %d: want a number of workers >= 1, or 0 for all cores", w)
	}
	return nil
}

// addModelFlag registers --model with the placeholder FILE everywhere;
// usage "" means the plain "model FILE (JSON)".
func addModelFlag(fs *pflag.FlagSet, p *string, usage string) {
	if usage == "" {
		usage = "model `FILE` (JSON)"
	}
	fs.StringVar(p, "model", "", usage)
}

// addOutputFlag registers -o/--output with one wording everywhere; what
// names the result ("the table").
func addOutputFlag(fs *pflag.FlagSet, p *string, what string) {
	fs.StringVarP(p, "output", "o", "", "write "+what+" to `FILE` instead of stdout (- is stdout; a device or pipe is written in place)")
}

// latticeFlagUsage is the one help line of --lattice.
const latticeFlagUsage = "lattice `SPEC` (square:4x4, chain:12:periodic, ...) or the JSON file of a custom graph or model"
