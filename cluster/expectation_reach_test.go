package cluster_test

import (
	"encoding/json"
	"fmt"
	"maps"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"warmfit/cluster"
	"warmfit/lattice"
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
	{"square XXZ + fields (Jxy 0.2, Jz 0.15, hz 0.4, hx 0.2)", "square:8x8:periodic", "xxz", tourParams, 7},
	{"triangular TFIM (J 1, hx 1)", "triangular:8x8:periodic", "tfim", map[string]float64{"J": 1, "hx": 1}, 7},
	{"chain Heisenberg (J 1)", "chain:12:periodic", "heisenberg", map[string]float64{"J": 1}, 11},
}

// reachGrid is the temperature grid of the reach table: beta x max|coeff|
// geometric from 0.02 to 4, 30 points.
func reachGrid() []float64 {
	grid := make([]float64, 30)
	for i := range grid {
		grid[i] = 0.02 * math.Pow(200, float64(i)/float64(len(grid)-1))
	}
	return grid
}

// reachSeries is the cached input of one model's rows: the partial sums
// of one representative term of every class of equal terms, on the grid.
// The table is derived from it in milliseconds, so a change to
// cluster.Converge re-derives the table without a new expansion.
type reachSeries struct {
	Spec    string             `json:"spec"`
	Preset  string             `json:"preset"`
	Params  map[string]float64 `json:"params"`
	Top     int                `json:"top"`
	Grid    []float64          `json:"grid_beta_times_max_coeff"`
	Seconds float64            `json:"wall_seconds"` // of the EvaluateGrid pass, on whatever machine and load
	Classes []reachClass       `json:"classes"`
}

// reachClass is one class of terms with the same letters and coefficient.
// On these uniform periodic lattices every member is the image of the
// representative under a lattice symmetry and has the same series;
// Spread is the largest difference from the representative seen.
type reachClass struct {
	Pauli   string      `json:"pauli"`
	Coeff   float64     `json:"coeff"`
	Members int         `json:"members"`
	Spread  float64     `json:"spread"`
	Series  [][]float64 `json:"series"` // [grid point][order-1]
}

// TestExpectationReachTable prints, per model and order, the lowest
// temperature from which upwards every term expectation of the site-
// resolved expansion is trusted to 1e-3 (cluster.Converge: estimated
// truncation error <= 1e-3), as the largest beta x max|coeff| of a
// geometric grid from 0.02 to 4 (30 points) below which every grid point
// is trusted. A second column checks the flag against the top order: the
// largest beta x max|coeff| up to which every value at the order is
// within 1e-3 of the top order's (meaningful for orders at least two
// below the top). It runs only when WARMFIT_EXPECT_REACH is set:
//
//	WARMFIT_EXPECT_REACH=1 go test -run TestExpectationReachTable -v -timeout 2h ./cluster/
//
// WARMFIT_EXPECT_REACH=square,chain runs only the models on those
// lattices. The per-term series come from one EvaluateGrid pass per model
// and are cached in testdata/reach/ (committed): with the cache the table
// is re-derived in seconds, for instance after a change to
// cluster.Converge; WARMFIT_EXPECT_REACH_FRESH=1 recomputes the series
// (about 4 CPU minutes for square order 7 and for triangular order 7, seconds for the chain).
func TestExpectationReachTable(t *testing.T) {
	env := os.Getenv("WARMFIT_EXPECT_REACH")
	if env == "" {
		t.Skip("set WARMFIT_EXPECT_REACH=1 to print the reach table of term expectations (seconds from the cached series)")
	}
	const tol = 1e-3
	fresh := os.Getenv("WARMFIT_EXPECT_REACH_FRESH") != ""
	for _, rm := range reachModels {
		kind, _, _ := strings.Cut(rm.spec, ":")
		if env != "1" && env != "all" && !strings.Contains(env, kind) {
			continue
		}
		path := filepath.Join("testdata", "reach", fmt.Sprintf("%s-%s-order%d.json", kind, rm.preset, rm.top))
		rs, ok := loadReachSeries(t, path, rm)
		if !ok || fresh {
			rs = computeReachSeries(t, rm)
			writeReachSeries(t, path, rs)
		}
		printReachTable(rm, rs, tol)
	}
}

// computeReachSeries runs the expansion of rm on the reach grid in one
// EvaluateGrid pass and keeps one series per class of equal terms.
func computeReachSeries(t *testing.T, rm reachModel) *reachSeries {
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
	grid := reachGrid()
	betas := make([]float64, len(grid))
	for i, x := range grid {
		betas[i] = x / maxCoeff
	}
	start := time.Now()
	res, err := exp.EvaluateGrid(coeffsOf(terms), betas, cluster.Options{Order: rm.top, MaxWork: 1e15})
	if err != nil {
		t.Fatal(err)
	}
	rs := &reachSeries{Spec: rm.spec, Preset: rm.preset, Params: rm.params, Top: rm.top, Grid: grid,
		Seconds: math.Round(time.Since(start).Seconds())}
	rs.Classes = reachClasses(terms, res)
	for _, c := range rs.Classes {
		// Members differ only by a lattice symmetry (translation, and
		// rotation or reflection where bonds of several directions share
		// a coefficient), so any spread beyond rounding is a bug.
		if c.Spread > 1e-9 {
			t.Errorf("%s: %s terms (coefficient %g) differ by %.3g between translates", rm.spec, c.Pauli, c.Coeff, c.Spread)
		}
	}
	t.Logf("%s to order %d on %d temperatures: %.0f s wall", rm.spec, rm.top, len(grid), rs.Seconds)
	return rs
}

// reachClasses groups the terms by letters and coefficient and keeps the
// first member's series of each group with the group's spread.
func reachClasses(terms []lattice.Term, res *cluster.GridResult) []reachClass {
	index := map[string]int{}
	var classes []reachClass
	var reps []int
	for k, tm := range terms {
		key := fmt.Sprintf("%s %.17g", tm.Pauli, tm.Coeff)
		c, ok := index[key]
		if !ok {
			c = len(classes)
			index[key] = c
			classes = append(classes, reachClass{Pauli: tm.Pauli, Coeff: tm.Coeff})
			reps = append(reps, k)
		}
		classes[c].Members++
		for i := range res.Expect {
			for o := range res.Expect[i] {
				classes[c].Spread = math.Max(classes[c].Spread, math.Abs(res.Expect[i][o][k]-res.Expect[i][o][reps[c]]))
			}
		}
	}
	for c := range classes {
		classes[c].Series = make([][]float64, len(res.Expect))
		for i := range res.Expect {
			s := make([]float64, res.Order)
			for o := range s {
				s[o] = res.Expect[i][o][reps[c]]
			}
			classes[c].Series[i] = s
		}
	}
	return classes
}

// loadReachSeries reads the cached series of rm, reporting whether the
// file exists and was computed for the same model, order and grid.
func loadReachSeries(t *testing.T, path string, rm reachModel) (*reachSeries, bool) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, false
	}
	var rs reachSeries
	if err := json.Unmarshal(data, &rs); err != nil {
		t.Logf("%s: %v; recomputing", path, err)
		return nil, false
	}
	if rs.Spec != rm.spec || rs.Preset != rm.preset || rs.Top != rm.top || !maps.Equal(rs.Params, rm.params) || !slices.Equal(rs.Grid, reachGrid()) {
		t.Logf("%s: computed for another model, order or grid; recomputing", path)
		return nil, false
	}
	return &rs, true
}

func writeReachSeries(t *testing.T, path string, rs *reachSeries) {
	data, err := json.MarshalIndent(rs, "", " ")
	if err != nil {
		t.Fatal(err)
	}
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		t.Fatal(err)
	}
	tmp := path + ".tmp"
	if err := os.WriteFile(tmp, append(data, '\n'), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Rename(tmp, path); err != nil {
		t.Fatal(err)
	}
}

// printReachTable derives the reach of every order from the cached
// series: the trusted column from cluster.Converge, the agreement column
// from the top order.
func printReachTable(rm reachModel, rs *reachSeries, tol float64) {
	top := rs.Top
	// flagOK[o-1] and agreeOK[o-1] stay true while every grid point so
	// far is trusted (within tol of the top order) at order o; the reach
	// is the last such point.
	flagReach := make([]float64, top)
	agreeReach := make([]float64, top)
	flagOK := make([]bool, top)
	agreeOK := make([]bool, top)
	for o := range flagOK {
		flagOK[o], agreeOK[o] = true, true
	}
	terms := 0
	for _, c := range rs.Classes {
		terms += c.Members
	}
	for i, x := range rs.Grid {
		for o := 1; o <= top; o++ {
			trusted, agree := true, true
			for _, c := range rs.Classes {
				series := c.Series[i]
				if !cluster.Converge(series[:o], len(c.Pauli), tol).Trusted {
					trusted = false
				}
				if math.Abs(series[o-1]-series[top-1]) > tol {
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
	fmt.Printf("%s, %s, %d terms in %d classes:\n| order | trusted to 1e-3 up to beta x max|coeff| | within 1e-3 of order %d up to |\n|---|---|---|\n",
		rm.name, rs.Spec, terms, len(rs.Classes), top)
	for o := 2; o <= top; o++ {
		agree := "-" // the top order and the one below say nothing about themselves
		if o <= top-2 {
			agree = reachValue(agreeReach[o-1])
		}
		fmt.Printf("| %d | %s | %s |\n", o, reachValue(flagReach[o-1]), agree)
	}
}

func reachValue(x float64) string {
	if x == 0 {
		return "below 0.02"
	}
	return fmt.Sprintf("%.3g", x)
}

// TestExpectationReachCacheCurrent: the committed series in
// testdata/reach belong to the models and grid of the reach table, so
// that WARMFIT_EXPECT_REACH=1 re-derives the README table in seconds and
// never silently recomputes for hours (consistency of this repository,
// no outside reference).
func TestExpectationReachCacheCurrent(t *testing.T) {
	for _, rm := range reachModels {
		kind, _, _ := strings.Cut(rm.spec, ":")
		path := filepath.Join("testdata", "reach", fmt.Sprintf("%s-%s-order%d.json", kind, rm.preset, rm.top))
		rs, ok := loadReachSeries(t, path, rm)
		if !ok {
			t.Errorf("%s: missing or stale; rerun WARMFIT_EXPECT_REACH=%s WARMFIT_EXPECT_REACH_FRESH=1 go test -run TestExpectationReachTable -v ./cluster/", path, kind)
			continue
		}
		for _, c := range rs.Classes {
			if len(c.Series) != len(rs.Grid) || c.Members == 0 || c.Spread > 1e-9 {
				t.Errorf("%s: class %s (coefficient %g) has %d series for %d grid points, %d members, spread %g",
					path, c.Pauli, c.Coeff, len(c.Series), len(rs.Grid), c.Members, c.Spread)
			}
			for _, s := range c.Series {
				if len(s) != rs.Top {
					t.Errorf("%s: class %s has a series of %d orders, want %d", path, c.Pauli, len(s), rs.Top)
					break
				}
			}
		}
	}
}
