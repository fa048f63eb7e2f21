package cluster_test

import (
	"fmt"
	"math"
	"os"
	"strings"
	"testing"

	"warmfit/cluster"
	"warmfit/lattice/model"
)

// reachModel is one model of the reach table: uniform couplings on a
// periodic lattice large enough that no cluster of the top order wraps
// around it (side > order), so every value is the infinite lattice's.
type reachModel struct {
	name   string
	spec   string
	preset string
	params map[string]float64
	top    int
}

var reachModels = []reachModel{
	{"square XXZ + fields (Jxy 0.2, Jz 0.15, hz 0.4, hx 0.2)", "square:7x7:periodic", "xxz", tourParams, 6},
	{"triangular TFIM (J 1, hx 1)", "triangular:6x6:periodic", "tfim", map[string]float64{"J": 1, "hx": 1}, 5},
	{"chain Heisenberg (J 1)", "chain:12:periodic", "heisenberg", map[string]float64{"J": 1}, 11},
}

// TestExpectationReachTable prints, per model and order, the lowest
// temperature from which upwards every term expectation of the site-
// resolved expansion is trusted to 1e-3 (cluster.Converge: estimated
// truncation error <= 1e-3), as the largest beta x max|coeff| of a
// geometric grid from 0.02 to 4 (30 points) below which every grid point
// is trusted. A second column checks the flag against the top order: the
// largest beta x max|coeff| up to which every value at the order is
// within 1e-3 of the top order's (meaningful for orders at least two
// below the top). It runs only when WARMFIT_EXPECT_REACH is set (minutes):
//
//	WARMFIT_EXPECT_REACH=1 go test -run TestExpectationReachTable -v -timeout 2h ./cluster/
//
// WARMFIT_EXPECT_REACH=square,chain runs only the models on those
// lattices; =all raises the square and triangular top orders by one
// (hours under load).
func TestExpectationReachTable(t *testing.T) {
	env := os.Getenv("WARMFIT_EXPECT_REACH")
	if env == "" {
		t.Skip("set WARMFIT_EXPECT_REACH=1 to print the reach table of term expectations (minutes)")
	}
	const tol = 1e-3
	grid := make([]float64, 30)
	for i := range grid {
		grid[i] = 0.02 * math.Pow(200, float64(i)/float64(len(grid)-1))
	}
	for _, rm := range reachModels {
		kind, _, _ := strings.Cut(rm.spec, ":")
		if env != "1" && env != "all" && !strings.Contains(env, kind) {
			continue
		}
		if env == "all" && kind != "chain" {
			rm.top++
			side := rm.top + 1
			rm.spec = fmt.Sprintf("%s:%dx%d:periodic", kind, side, side)
		}
		l := mustLattice(t, rm.spec)
		terms, err := model.Preset(l, rm.preset, rm.params)
		if err != nil {
			t.Fatal(err)
		}
		maxCoeff := 0.0
		for _, tm := range terms {
			maxCoeff = math.Max(maxCoeff, math.Abs(tm.Coeff))
		}
		exp, err := cluster.NewExpansion(l, terms)
		if err != nil {
			t.Fatal(err)
		}
		coeffs := coeffsOf(terms)
		// flagged[o-1] and agrees[o-1] stay true while every grid point so
		// far is trusted (within tol of the top order) at order o; reach
		// is the last such point.
		flagReach := make([]float64, rm.top)
		agreeReach := make([]float64, rm.top)
		flagOK := make([]bool, rm.top)
		agreeOK := make([]bool, rm.top)
		for o := range flagOK {
			flagOK[o], agreeOK[o] = true, true
		}
		for _, x := range grid {
			res, err := exp.Evaluate(coeffs, x/maxCoeff, cluster.Options{Order: rm.top, MaxWork: 1e15})
			if err != nil {
				t.Fatal(err)
			}
			series := make([]float64, rm.top)
			for o := 1; o <= rm.top; o++ {
				trusted, agree := true, true
				for k, tm := range terms {
					for j := range series {
						series[j] = res.Expect[j][k]
					}
					if !cluster.Converge(series[:o], len(tm.Sites), tol).Trusted {
						trusted = false
					}
					if math.Abs(series[o-1]-series[rm.top-1]) > tol {
						agree = false
					}
				}
				if flagOK[o-1] = flagOK[o-1] && trusted; flagOK[o-1] {
					flagReach[o-1] = x
				}
				if agreeOK[o-1] = agreeOK[o-1] && agree; agreeOK[o-1] {
					agreeReach[o-1] = x
				}
			}
		}
		fmt.Printf("%s, %s, %d terms:\n| order | trusted to 1e-3 up to beta x max|coeff| | within 1e-3 of order %d up to |\n|---|---|---|\n", rm.name, rm.spec, len(terms), rm.top)
		for o := 2; o <= rm.top; o++ {
			agree := "-" // the top order and the one below say nothing about themselves
			if o <= rm.top-2 {
				agree = reachValue(agreeReach[o-1])
			}
			fmt.Printf("| %d | %s | %s |\n", o, reachValue(flagReach[o-1]), agree)
		}
	}
}

func reachValue(x float64) string {
	if x == 0 {
		return "below 0.02"
	}
	return fmt.Sprintf("%.3g", x)
}
