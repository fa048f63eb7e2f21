package cluster_test

import (
	"fmt"
	"os"
	"runtime"
	"strings"
	"syscall"
	"testing"
	"time"

	"warmfit/cluster"
	"warmfit/lattice/model"
)

// calibrationJob is one evaluation whose measured time is compared with
// the cost model's prediction: the jobs of the README tour, the demo and
// the benchmarks of the issue that asked for a calibrated cost model.
type calibrationJob struct {
	name     string
	spec     string
	preset   string
	params   map[string]float64
	order    int
	response bool
	heavy    bool // minutes: only with WARMFIT_CALIBRATE=all
	clean    bool // no disorder (which would break a U(1) symmetry)
}

// tourParams is the device of the README tour and the benchmarks.
var tourParams = map[string]float64{"Jxy": 0.2, "Jz": 0.15, "hz": 0.4, "hx": 0.2}

var calibrationJobs = []calibrationJob{
	// Real dense path: XXZ + X and Z fields (no symmetry).
	{name: "tour 6x6 order 5", spec: "square:6x6", preset: "xxz", params: tourParams, order: 5},
	{name: "tour 6x6 order 6", spec: "square:6x6", preset: "xxz", params: tourParams, order: 6},
	{name: "tour 6x6 order 6 response", spec: "square:6x6", preset: "xxz", params: tourParams, order: 6, response: true},
	{name: "demo 6x6 order 7", spec: "square:6x6", preset: "xxz", params: tourParams, order: 7},
	{name: "issue 20x20 order 4", spec: "square:20x20", preset: "xxz", params: tourParams, order: 4},
	{name: "issue 20x20 order 5", spec: "square:20x20", preset: "xxz", params: tourParams, order: 5},
	{name: "issue 20x20 order 5 response", spec: "square:20x20", preset: "xxz", params: tourParams, order: 5, response: true},
	{name: "issue 20x20 order 6", spec: "square:20x20", preset: "xxz", params: tourParams, order: 6, heavy: true},
	// Complex Hermitian path: every two-site Pauli product.
	{name: "complex 6x6 order 5", spec: "square:6x6", preset: "all2local", order: 5},
	{name: "complex 6x6 order 6", spec: "square:6x6", preset: "all2local", order: 6},
	// Blocked paths: a parity (XXZ with disordered XX and YY in a Z
	// field; the transverse-field Ising model) and U(1) (clean XXZ in a
	// Z field, the Heisenberg chain).
	{name: "parity XXZ 20x20 order 6", spec: "square:20x20", preset: "xxz", params: map[string]float64{"Jxy": 0.2, "Jz": 0.15, "hz": 0.4}, order: 6},
	{name: "parity TFIM 20x20 order 6", spec: "square:20x20", preset: "tfim", params: map[string]float64{"J": 1, "hx": 0.5}, order: 6},
	{name: "U(1) XXZ 20x20 order 6", spec: "square:20x20", preset: "xxz", params: map[string]float64{"Jxy": 0.2, "Jz": 0.15, "hz": 0.4}, order: 6, clean: true},
	{name: "U(1) XXZ 20x20 order 7", spec: "square:20x20", preset: "xxz", params: map[string]float64{"Jxy": 0.2, "Jz": 0.15, "hz": 0.4}, order: 7, clean: true, heavy: true},
	{name: "U(1) chain 64 order 10", spec: "chain:64", preset: "heisenberg", params: map[string]float64{"J": 1}, order: 10, clean: true},
}

// cpuTime is the user plus system time of the process so far.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// BenchmarkCostCalibration measures the jobs above and prints, for each,
// the estimated work, the predicted wall time on a quiet 2-core machine
// (Expansion.PredictEvaluation), the measured wall and CPU time and the
// ratios. On a shared machine the wall time is inflated by the load; the
// CPU time divided by the workers is what a quiet machine would take.
// Run it with
//
//	go test -run '^$' -bench CostCalibration -benchtime 1x ./cluster/
//
// (WARMFIT_CALIBRATE=all adds the jobs of minutes; WARMFIT_CALIBRATE=TEXT
// runs only the jobs whose name contains TEXT).
func BenchmarkCostCalibration(b *testing.B) {
	only := os.Getenv("WARMFIT_CALIBRATE")
	all := only == "all"
	workers := runtime.GOMAXPROCS(0)
	fmt.Printf("%-30s %-18s %10s %10s %9s %9s %9s %8s %8s\n", "job", "blocks", "clusters", "work", "predicted", "wall", "cpu/w", "wall/pr", "cpu/pr")
	for b.Loop() {
		for _, j := range calibrationJobs {
			switch {
			case all:
			case only != "":
				if !strings.Contains(j.name, only) {
					continue
				}
			case j.heavy:
				continue
			}
			l := mustLattice(b, j.spec)
			terms, err := model.Preset(l, j.preset, j.params)
			if err != nil {
				b.Fatal(err)
			}
			if !j.clean {
				model.AddDisorder(terms, 0.05, 4)
			}
			exp, err := cluster.NewExpansion(l, terms)
			if err != nil {
				b.Fatal(err)
			}
			nc, work := exp.EstimateWork(j.order)
			predicted := exp.PredictEvaluation(j.order, j.response)
			c0, t0 := cpuTime(), time.Now()
			if _, err := exp.Evaluate(coeffsOf(terms), 0.35, cluster.Options{Order: j.order, Response: j.response, MaxWork: 1e15}); err != nil {
				b.Fatal(err)
			}
			wall, cpu := time.Since(t0), (cpuTime()-c0)/time.Duration(workers)
			fmt.Printf("%-30s %-18v %10d %10.3g %9.3g %9.3g %9.3g %8.2f %8.2f\n", j.name, exp.Symmetry(coeffsOf(terms)), nc, work,
				predicted.Seconds(), wall.Seconds(), cpu.Seconds(), wall.Seconds()/predicted.Seconds(), cpu.Seconds()/predicted.Seconds())
		}
	}
}
