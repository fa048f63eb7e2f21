package main

import (
	"fmt"
	"reflect"
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

func (o *orderFlag) reset() { *o = orderFlag{} }

// addOrderFlag registers --order on fs, fresh (see addFreshVar).
func addOrderFlag(fs *pflag.FlagSet, o *orderFlag, usage string) {
	addFreshVar(fs, o, "order", usage)
}

// Fresh flag state. Commands run many times in one process (tests, the
// demo), and every run registers its flags anew on a new FlagSet. pflag's
// own kinds (StringVar, IntVar, ...) write their default into the
// variable when registered, so they start fresh by themselves; a custom
// Value does not, and its DefValue is taken from whatever it holds at
// registration. So every custom value implements reset and is registered
// through addFreshVar, and the runner refuses (panics: programmer misuse)
// a flag set holding a custom value that is not a freshValue.

// freshValue is a custom flag value that can return to its zero state.
type freshValue interface {
	pflag.Value
	reset()
}

// addFreshVar resets v and registers it as flag name.
func addFreshVar(fs *pflag.FlagSet, v freshValue, name, usage string) {
	v.reset()
	fs.Var(v, name, usage)
}

// checkFreshFlags panics when fs holds a custom flag value that cannot be
// reset, so a new one cannot silently keep state between runs.
func checkFreshFlags(fs *pflag.FlagSet) {
	fs.VisitAll(func(f *pflag.Flag) {
		if _, ok := f.Value.(freshValue); ok {
			return
		}
		if t := reflect.TypeOf(f.Value); t.Kind() == reflect.Pointer && t.Elem().PkgPath() == pflagPackage {
			return
		}
		panic(fmt.Sprintf("warmfit: flag --%s has a custom value type %T that is not reset between runs; register it with addFreshVar", f.Name, f.Value))
	})
}

// pflagPackage is the import path of pflag's own value types.
var pflagPackage = reflect.TypeOf(pflag.FlagSet{}).PkgPath()

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
