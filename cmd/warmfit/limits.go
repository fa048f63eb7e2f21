package main

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"time"

	"github.com/spf13/pflag"

	"warmfit/cluster"
	"warmfit/validate"
)

// Limits before allocation. Every size a command takes from a flag or a
// file is turned into an estimate of time and memory before the work
// starts; the estimate goes to stderr, and a request over the machine's
// memory or over --budget is refused, naming the limit and the flag that
// changes it. A refusal is a usage error (exit 2; exitRule): nothing was
// attempted, and changing the flag named gets the run through. Go's own
// out-of-memory crash would exit 2 with a goroutine dump: it must never
// be reached, so memory is checked, not caught.
//
// Times come from the one cost model (cluster.PredictDuration and
// cluster.SecondsPerWorkUnit, calibrated in cluster/cost.go); the few
// constants below are for work outside the expansion, measured on the
// reference 2-core machine and quoted as "about".

// typicalityQubits is the largest system any command runs thermal
// typicality on (predict --method exact, crosscheck's references): the
// one limit, validate's own; --budget and the memory check guard the
// time and space of each request below it.
const typicalityQubits = validate.MaxTypicalityQubits

// autoCeilingText is the automatic order ceiling of cluster.NewOrderPolicy
// in words, for the help of fit (a test checks it against the policy).
const autoCeilingText = "12 on a chain, 9 on a ladder, 8 in 2D, 6 in 3D, at most the number of sites"

// defaultBudget is the --budget of every command that can run long.
const defaultBudget = 60 * time.Second

// budgetUsage is the one help line of --budget.
const budgetUsage = "longest predicted run time: a request predicted to take longer is refused before it starts, and --order auto, which chooses by a machine-independent work limit, stops early when this machine would run past it and says so"

// addBudgetFlag registers --budget with the same name, default and
// meaning on every command.
func addBudgetFlag(fs *pflag.FlagSet, d *time.Duration) {
	fs.DurationVar(d, "budget", defaultBudget, budgetUsage)
}

// checkBudgetFlag refuses a non-positive --budget.
func checkBudgetFlag(d time.Duration) error {
	if d <= 0 {
		return usagef("--budget %v: must be positive, for example --budget 10m", d)
	}
	return nil
}

// Measured costs outside the expansion (reference machine, 2 cores).
const (
	// typicalitySecondsPerOp is the time of one term applied to one
	// amplitude in the Chebyshev propagation of thermal typicality
	// (18-qubit chain, 4 vectors: 0.38 s).
	typicalitySecondsPerOp = 4e-10
	// sampleSecondsPerShotQubit: one exact shot is a binary search over
	// 2^n outcomes (10 qubits, 4e7 shots: 3.9 s, about 1e-7 s a shot).
	sampleSecondsPerShotQubit = 1e-8
	// countSecondsPerCluster: cluster counting runs at some 3e7 clusters
	// a second (20x20 square, up to 11 sites: 4.5e7 clusters in 1.3 s).
	countSecondsPerCluster = 5e-8
)

// memoryShare is the part of the machine's available memory one run may
// plan to use: the machine is shared, and estimates are estimates.
const memoryShare = 0.5

// availableMemory returns the memory the system can give without
// swapping (MemAvailable on Linux); elsewhere a cautious 4 GiB.
func availableMemory() int64 {
	f, err := os.Open("/proc/meminfo")
	if err != nil {
		return 4 << 30
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		fields := strings.Fields(sc.Text())
		if len(fields) >= 2 && fields[0] == "MemAvailable:" {
			if kb, err := strconv.ParseInt(fields[1], 10, 64); err == nil && kb > 0 {
				return kb << 10
			}
		}
	}
	return 4 << 30
}

// memoryLimit is what one run may plan to allocate.
func memoryLimit() int64 { return int64(memoryShare * float64(availableMemory())) }

// workEstimate is the predicted cost of one request.
type workEstimate struct {
	What     string        // "order-8 expansion of 400 sites (1.2e6 clusters)"
	Duration time.Duration // predicted wall time
	Bytes    float64       // predicted peak memory of the request's own data
	// Flag names the flag whose value decides the size ("--order"), so
	// a refusal can say what to lower.
	Flag string
}

// seconds turns a count of operations at a per-op cost into a duration,
// saturating instead of overflowing.
func seconds(s float64) time.Duration {
	if !(s < float64(math.MaxInt64)/1e9) {
		return time.Duration(math.MaxInt64)
	}
	return time.Duration(s * float64(time.Second))
}

// describeTime writes a predicted duration the way a person says it.
func describeTime(d time.Duration) string {
	switch s := d.Seconds(); {
	case d == time.Duration(math.MaxInt64):
		return "practically forever"
	case s < 0.01:
		return "0.01 s"
	case s < 90:
		return fmt.Sprintf("%.2g s", s)
	case s < 5400:
		return fmt.Sprintf("%.2g min", s/60)
	case s < 3*86400:
		return fmt.Sprintf("%.3g h", s/3600)
	default:
		return fmt.Sprintf("%.3g days", s/86400)
	}
}

// describeBytes writes a size in binary units.
func describeBytes(b float64) string {
	switch {
	case b < 1<<20:
		return fmt.Sprintf("%.0f KiB", math.Ceil(b/(1<<10)))
	case b < 1<<30:
		return fmt.Sprintf("%.3g MiB", b/(1<<20))
	default:
		return fmt.Sprintf("%.3g GiB", b/(1<<30))
	}
}

// admit prints the estimate on stderr (prefixed by the command name) and
// refuses it when it is over the memory limit or the budget.
func admit(w io.Writer, cmd string, e workEstimate, budget time.Duration) error {
	line := fmt.Sprintf("%s: estimate: %s, about %s", cmd, e.What, describeTime(e.Duration))
	if e.Duration < 10*time.Millisecond {
		line = fmt.Sprintf("%s: estimate: %s, under 0.01 s", cmd, e.What)
	}
	if e.Bytes >= 1<<20 {
		line += ", " + describeBytes(e.Bytes)
	}
	fmt.Fprintln(w, line+" (reference 2-core machine)")
	refuse := usagef
	if limit := memoryLimit(); e.Bytes > float64(limit) {
		return refuse("%s needs about %s, more than the %s this run may use (half the machine's available memory); lower %s",
			e.What, describeBytes(e.Bytes), describeBytes(float64(limit)), e.Flag)
	}
	if e.Duration > budget {
		return refuse("%s is predicted to take about %s, more than --budget %v; lower %s, or raise --budget (for example --budget %v) if it may run that long",
			e.What, describeTime(e.Duration), budget, e.Flag, suggestBudget(e.Duration))
	}
	return nil
}

// suggestBudget rounds a predicted time up to a budget that admits it.
func suggestBudget(d time.Duration) time.Duration {
	switch {
	case d < time.Minute:
		return d.Truncate(time.Second) + 10*time.Second
	case d < time.Hour:
		return d.Truncate(time.Minute) + 2*time.Minute
	case d < 1000*time.Hour:
		return d.Truncate(time.Hour) + time.Hour
	}
	return 1000 * time.Hour
}

// expansionEstimate predicts one evaluation of exp at order, by the one
// calibrated cost model, with the response matrix when the command needs
// it (fit and plan do: it costs several times the expectations). Memory
// of the expansion is small and streaming; its clusters are counted, not
// stored.
func expansionEstimate(exp *cluster.Expansion, sites, order int, response bool, flag string) workEstimate {
	nc, _ := exp.EstimateWork(order)
	what := expansionWhat(order, sites, float64(nc))
	if response {
		what += " with its response matrix"
	}
	return workEstimate{What: what, Duration: exp.PredictEvaluation(order, response), Flag: flag}
}

// expansionWhat names an expansion run in an estimate line.
func expansionWhat(order, sites int, clusters float64) string {
	return fmt.Sprintf("order-%d expansion of %d sites (about %.3g clusters)", order, sites, clusters)
}

// denseEstimate predicts the dense diagonalisation of n qubits: work
// 8^n (D^3) units by the one cost model, memory of a few D x D matrices.
func denseEstimate(n int, flag string) workEstimate {
	d := math.Exp2(float64(n))
	return workEstimate{
		What:     fmt.Sprintf("dense diagonalisation of %d qubits", n),
		Duration: cluster.PredictDuration(d * d * d),
		Bytes:    4 * d * d * 16,
		Flag:     flag,
	}
}

// typicalityEstimate predicts thermal typicality on n qubits with the
// given number of random vectors for terms of total weight norm1 at beta:
// a Chebyshev series of about beta/2 * norm1 + 30 terms per vector, each
// applying every term to every amplitude. Memory: a few state vectors and
// one sample (observables included) per random vector.
func typicalityEstimate(n, vectors, terms int, norm1, beta float64) workEstimate {
	dim := math.Exp2(float64(n))
	cheb := beta/2*norm1 + 30
	ops := float64(vectors) * cheb * float64(max(terms, 1)) * dim
	return workEstimate{
		What:     fmt.Sprintf("thermal typicality on %d qubits with %d random vectors", n, vectors),
		Duration: seconds(ops * typicalitySecondsPerOp),
		Bytes:    6*dim*16 + float64(vectors)*float64(64+8*terms),
		Flag:     "--vectors",
	}
}

// describeBudgetFlag writes a --budget the way it is typed: "45s", "1m",
// "2h"; durations with several units as time.Duration writes them.
func describeBudgetFlag(d time.Duration) string {
	switch {
	case d > 0 && d%time.Hour == 0:
		return fmt.Sprintf("%dh", d/time.Hour)
	case d > 0 && d%time.Minute == 0:
		return fmt.Sprintf("%dm", d/time.Minute)
	case d > 0 && d%time.Second == 0 && d < time.Minute:
		return fmt.Sprintf("%ds", d/time.Second)
	}
	return d.String()
}
