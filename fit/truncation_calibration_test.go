package fit_test

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"testing"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/lattice"
	"warmfit/lattice/model"
	"warmfit/validate"
)

// The calibration of the fit's own truncation estimate (Truncation,
// order.go) against exact references: whole small lattices whose Gibbs
// expectations are exact (dense diagonalisation with the conserved-
// quantity blocks, validate.ExactThermal; a free-fermion chain,
// validate.NewFreeFermionChain, Lieb, Schultz, Mattis 1961), fitted
// noise-free at fixed orders well below the number of sites, as on a
// large array. The fitted minus the true coefficient is then the true
// truncation bias of each coefficient, which the estimate from the
// refits at the orders below must bound (for >= 95% of coefficients)
// and not exceed by much (median estimate/true <= 3). Noisy fits
// (binomial shots) check the other half: the warning must come where the
// pulls depart from 1, and not before.
//
//	WARMFIT_FIT_TRUNCATION=1 go test -run TestFitTruncationCalibration -v -timeout 60m ./fit/
//
// The per-order fits of the exact data are cached in
// $WARMFIT_FIT_TRUNCATION_CACHE (default: a file in the temporary
// directory), so that the estimator can be studied again without them.

// calibCase is one exact reference: a model at one temperature.
type calibCase struct {
	Name  string    `json:"name"`
	Spec  string    `json:"spec"`
	Seed  uint64    `json:"seed"`
	Beta  float64   `json:"beta"`
	Truth []float64 `json:"truth"` // true parameters
	// Orders and Theta: the fitted parameters of the exact data at each
	// order (Theta[i] at Orders[i]; nil where the fit did not converge).
	Orders []int       `json:"orders"`
	Theta  [][]float64 `json:"theta"`
	// Exact holds the exact expectations of the terms.
	Exact []float64 `json:"exact"`
	// Keys names the terms (Pauli letters and sites).
	Keys []string `json:"keys"`
}

// calibModel is the issue's recipe: `model --preset xxz --set
// Jxy=0.2,Jz=0.15,hz=0.4 --disorder 0.05 --seed S` (every coefficient
// shifted independently), on an open lattice or chain.
func calibModel(t testing.TB, spec, preset string, values map[string]float64, seed uint64) (*lattice.Lattice, []lattice.Term) {
	t.Helper()
	lat, err := lattice.Open(spec)
	if err != nil {
		t.Fatal(err)
	}
	terms, err := model.Preset(lat, preset, values)
	if err != nil {
		t.Fatal(err)
	}
	model.AddDisorder(terms, 0.05, seed)
	return lat, terms
}

var calibXXZ = map[string]float64{"Jxy": 0.2, "Jz": 0.15, "hz": 0.4}

// calibLattice describes one family of references.
type calibLattice struct {
	spec     string
	preset   string
	values   map[string]float64
	seeds    []uint64
	betas    []float64
	maxOrder int
	freeFerm bool   // exact by Jordan–Wigner instead of dense ED
	label    string // the family's name when the preset does not say it
}

func (cl calibLattice) name() string {
	if cl.label != "" {
		return cl.spec + "/" + cl.label
	}
	return cl.spec + "/" + cl.preset
}

func calibLattices() []calibLattice {
	betas := []float64{0.2, 0.4, 0.6, 0.8, 1.0}
	return []calibLattice{
		{spec: "square:4x3", preset: "xxz", values: calibXXZ, seeds: []uint64{1, 2, 3, 4}, betas: betas, maxOrder: 7},
		{spec: "square:6x2", preset: "xxz", values: calibXXZ, seeds: []uint64{5, 6}, betas: betas, maxOrder: 7},
		// A long chain: free fermions (XY couplings and Z fields), the
		// coefficients of the same size as above.
		{spec: "chain:40", preset: "xy", values: map[string]float64{"Jx": 0.2, "Jy": 0.2, "hz": 0.4}, seeds: []uint64{7, 8}, betas: []float64{2, 3, 4, 6, 8}, maxOrder: 8, freeFerm: true},
		{spec: "chain:40", preset: "xy", values: map[string]float64{"Jx": 0.3, "Jy": 0, "hz": 0.4}, seeds: []uint64{9, 10}, betas: []float64{1, 2, 3, 4}, maxOrder: 8, freeFerm: true, label: "tfim"},
	}
}

func calibCachePath() string {
	if p := os.Getenv("WARMFIT_FIT_TRUNCATION_CACHE"); p != "" {
		return p
	}
	return filepath.Join(os.TempDir(), "warmfit-fit-truncation.json")
}

// exactExpectations returns the exact Gibbs expectations of terms on the
// whole lattice at each beta.
func exactExpectations(t testing.TB, lat *lattice.Lattice, terms []lattice.Term, betas []float64, freeFerm bool) [][]float64 {
	t.Helper()
	ops, err := cluster.TermPaulis(terms)
	if err != nil {
		t.Fatal(err)
	}
	out := make([][]float64, len(betas))
	if freeFerm {
		for i, beta := range betas {
			ff, err := validate.NewFreeFermionChain(lat.NumSites(), terms, beta)
			if err != nil {
				t.Fatal(err)
			}
			out[i] = make([]float64, len(terms))
			for k, op := range ops {
				if out[i][k], err = ff.Expect(op); err != nil {
					t.Fatal(err)
				}
			}
		}
		return out
	}
	h, err := cluster.NewHamiltonian(lat.NumSites(), terms)
	if err != nil {
		t.Fatal(err)
	}
	spec, err := cluster.Diagonalize(h) // one spectrum serves every beta
	if err != nil {
		t.Fatal(err)
	}
	for i, beta := range betas {
		th, err := cluster.NewThermal(spec, beta)
		if err != nil {
			t.Fatal(err)
		}
		out[i] = make([]float64, len(terms))
		th.ExpectAll(ops, out[i])
	}
	return out
}

// buildCalibCases fits the exact data of one reference family at every
// order from the smallest to maxOrder (each order on its own, no refits).
func buildCalibCases(t *testing.T, cl calibLattice) []calibCase {
	var cases []calibCase
	for _, seed := range cl.seeds {
		lat, terms := calibModel(t, cl.spec, cl.preset, cl.values, seed)
		exact := exactExpectations(t, lat, terms, cl.betas, cl.freeFerm)
		for i, beta := range cl.betas {
			c := calibCase{Name: cl.name(), Spec: cl.spec, Seed: seed, Beta: beta, Exact: exact[i]}
			for _, term := range terms {
				c.Truth = append(c.Truth, term.Coeff)
				c.Keys = append(c.Keys, term.Key())
			}
			var theta []float64
			for L := 2; L <= cl.maxOrder; L++ {
				res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(terms), Data: exactEstimates(exact[i]), Beta: beta},
					fit.Options{Order: L, SkipTruncation: true, Start: theta})
				c.Orders = append(c.Orders, L)
				if err != nil || !res.Converged {
					t.Logf("%s seed %d beta %g order %d: not converged (%v)", cl.name(), seed, beta, L, err)
					c.Theta = append(c.Theta, nil)
					continue
				}
				c.Theta = append(c.Theta, res.Theta)
				theta = res.Coeffs
			}
			cases = append(cases, c)
			t.Logf("%s seed %d beta %g: orders %v fitted", cl.name(), seed, beta, c.Orders)
		}
	}
	return cases
}

// loadCalibCases returns the cases of every reference family, from the
// cache where it has them.
func loadCalibCases(t *testing.T) []calibCase {
	var all []calibCase
	for _, cl := range calibLattices() {
		path := calibCachePath() + "." + strings.NewReplacer(":", "_", "/", "_").Replace(cl.name()) + ".json"
		var cases []calibCase
		if b, err := os.ReadFile(path); err == nil && os.Getenv("WARMFIT_FIT_TRUNCATION") != "rebuild" {
			if err := json.Unmarshal(b, &cases); err != nil {
				cases = nil
			}
		}
		if cases == nil {
			cases = buildCalibCases(t, cl)
			if b, err := json.Marshal(cases); err == nil {
				if err := os.WriteFile(path, b, 0o644); err != nil {
					t.Logf("cache not written: %v", err)
				}
			}
		}
		all = append(all, cases...)
	}
	return all
}

// calibRow is one cell of the calibration table: one lattice, beta and
// order over all its seeds.
type calibRow struct {
	spec    string
	beta    float64
	order   int
	ratios  []float64 // estimate / true bias per coefficient (true bias > floor)
	bounded int
	maxTrue float64
	// old: the same for the rule before the calibration
	oldRatios  []float64
	oldBounded int
	// reported, oldReported: the fit's one number (the largest estimate)
	// over the largest true bias, per case
	reported, oldReported []float64
}

func quantile(v []float64, p float64) float64 {
	if len(v) == 0 {
		return math.NaN()
	}
	s := slices.Clone(v)
	sort.Float64s(s)
	return s[min(len(s)-1, int(p*float64(len(s))))]
}

// TestFitTruncationCalibration prints the calibration table of the fit's
// truncation estimate (see the comment at the top of this file).
func TestFitTruncationCalibration(t *testing.T) {
	if os.Getenv("WARMFIT_FIT_TRUNCATION") == "" {
		t.Skip("set WARMFIT_FIT_TRUNCATION=1 to calibrate the fit's truncation estimate (minutes; =rebuild ignores the cache)")
	}
	cases := loadCalibCases(t)
	// The true bias below this floor is the Newton tolerance, not
	// truncation.
	const floor = 1e-9
	var rows []*calibRow
	index := map[string]*calibRow{}
	// The safety factor was chosen on the seeds of calibSeeds; the others
	// are held out.
	calibSeeds := map[uint64]bool{1: true, 2: true, 7: true, 9: true}
	split := map[bool]*calibRow{true: {}, false: {}}
	for _, c := range cases {
		for i, L := range c.Orders {
			if L < 4 || i < 1 || c.Theta[i] == nil || c.Theta[i-1] == nil {
				continue
			}
			// The fit's own refits: up to four orders below L, an
			// unbroken run of converged ones.
			history := [][]float64{c.Theta[i]}
			for j := i - 1; j >= max(0, i-4) && c.Theta[j] != nil; j-- {
				history = append([][]float64{c.Theta[j]}, history...)
			}
			est := fit.TruncationEstimate(history)
			old := spreadEstimate(history[max(0, len(history)-3):])
			key := fmt.Sprintf("%s/%g/%d", c.Name, c.Beta, L)
			r := index[key]
			if r == nil {
				r = &calibRow{spec: c.Name, beta: c.Beta, order: L}
				index[key] = r
				rows = append(rows, r)
			}
			var caseTrue, caseEst, caseOld float64
			for q, th := range c.Theta[i] {
				b := math.Abs(th - c.Truth[q])
				caseTrue, caseEst, caseOld = math.Max(caseTrue, b), math.Max(caseEst, est[q]), math.Max(caseOld, old[q])
				r.maxTrue = math.Max(r.maxTrue, b)
				if b < floor {
					continue
				}
				r.ratios = append(r.ratios, est[q]/b)
				if est[q] >= b {
					r.bounded++
				}
				sp := split[calibSeeds[c.Seed]]
				sp.ratios = append(sp.ratios, est[q]/b)
				if est[q] >= b {
					sp.bounded++
				}
				r.oldRatios = append(r.oldRatios, old[q]/b)
				if old[q] >= b {
					r.oldBounded++
				}
			}
			if caseTrue > floor {
				r.reported = append(r.reported, caseEst/caseTrue)
				r.oldReported = append(r.oldReported, caseOld/caseTrue)
			}
		}
	}
	fmt.Println("| reference | beta | order | coefficients | bounded | median estimate/true | p90 | reported/largest true | before: bounded | before: median | before: reported/largest | largest true bias |")
	fmt.Println("|---|---|---|---|---|---|---|---|---|---|---|---|")
	var all, allOld, allRep, allOldRep []float64
	allBounded, allOldBounded := 0, 0
	for _, r := range rows {
		if len(r.ratios) == 0 {
			fmt.Printf("| %s | %g | %d | 0 | | | | | | | | %.2g |\n", r.spec, r.beta, r.order, r.maxTrue)
			continue
		}
		all = append(all, r.ratios...)
		allOld = append(allOld, r.oldRatios...)
		allBounded += r.bounded
		allOldBounded += r.oldBounded
		fmt.Printf("| %s | %g | %d | %d | %.1f%% | %.2g | %.2g | %.2g | %.1f%% | %.2g | %.2g | %.2g |\n", r.spec, r.beta, r.order, len(r.ratios),
			100*float64(r.bounded)/float64(len(r.ratios)), quantile(r.ratios, 0.5), quantile(r.ratios, 0.9), quantile(r.reported, 0.5),
			100*float64(r.oldBounded)/float64(len(r.ratios)), quantile(r.oldRatios, 0.5), quantile(r.oldReported, 0.5), r.maxTrue)
		allRep = append(allRep, r.reported...)
		allOldRep = append(allOldRep, r.oldReported...)
	}
	fmt.Printf("overall: %.1f%% of %d bounded, median %.2g, p10 %.2g, p90 %.2g; before: %.1f%% bounded, median %.2g, p10 %.2g, p90 %.2g\n",
		100*float64(allBounded)/float64(len(all)), len(all), quantile(all, 0.5), quantile(all, 0.1), quantile(all, 0.9),
		100*float64(allOldBounded)/float64(len(all)), quantile(allOld, 0.5), quantile(allOld, 0.1), quantile(allOld, 0.9))
	fmt.Printf("reported error / largest true bias: median %.2g, min %.2g (before: median %.2g, min %.2g)\n",
		quantile(allRep, 0.5), quantile(allRep, 0), quantile(allOldRep, 0.5), quantile(allOldRep, 0))
	for _, cal := range []bool{true, false} {
		sp := split[cal]
		fmt.Printf("seeds the factor was chosen on: %v: %.1f%% of %d bounded, median %.2g\n", cal, 100*float64(sp.bounded)/float64(len(sp.ratios)), len(sp.ratios), quantile(sp.ratios, 0.5))
	}
	if frac := float64(allBounded) / float64(len(all)); frac < 0.95 {
		t.Errorf("the estimate bounds only %.1f%% of the true biases, want >= 95%%", 100*frac)
	}
}

// spreadEstimate is the rule before the calibration, per parameter: the
// larger of the last two changes.
func spreadEstimate(h [][]float64) []float64 {
	n := len(h)
	out := make([]float64, len(h[n-1]))
	for q := range out {
		out[q] = math.Abs(h[n-1][q] - h[n-2][q])
		if n >= 3 {
			out[q] = math.Max(out[q], math.Abs(h[n-2][q]-h[n-3][q]))
		}
	}
	return out
}

// TestFitTruncationSteps prints, per reference, the rms change of the
// parameters at each order and their rms true bias (a study aid).
func TestFitTruncationSteps(t *testing.T) {
	if os.Getenv("WARMFIT_FIT_TRUNCATION") == "" {
		t.Skip("set WARMFIT_FIT_TRUNCATION=1")
	}
	cases := loadCalibCases(t)
	if b, err := json.Marshal(cases); err == nil {
		os.WriteFile(calibCachePath()+".all.json", b, 0o644)
	}
	for _, c := range cases {
		var steps, bias []string
		for i := range c.Orders {
			if c.Theta[i] == nil {
				steps = append(steps, "-")
				bias = append(bias, "-")
				continue
			}
			var s, b float64
			for q := range c.Theta[i] {
				b += (c.Theta[i][q] - c.Truth[q]) * (c.Theta[i][q] - c.Truth[q])
				if i > 0 && c.Theta[i-1] != nil {
					d := c.Theta[i][q] - c.Theta[i-1][q]
					s += d * d
				}
			}
			steps = append(steps, fmt.Sprintf("%.2g", math.Sqrt(s/float64(len(c.Truth)))))
			bias = append(bias, fmt.Sprintf("%.2g", math.Sqrt(b/float64(len(c.Truth)))))
		}
		fmt.Printf("%s s%d b%g steps %v bias %v\n", c.Spec, c.Seed, c.Beta, steps, bias)
	}
}

// TestFitTruncationWarnings fits binomial data (1e5 shots per term,
// SyntheticTableFromShots) of the exact references at fixed orders and
// checks both directions of the truncation warning: every fit that is
// really wrong (pull rms above 1.3, or more than a tenth of the
// coefficients biased by more than 2 stderr by truncation, the bias
// known from the exact fits) carries it, and the table shows where it
// starts against the pulls. The old rule (largest change of the last two
// orders above 0.1 x the median stderr) is shown beside it.
func TestFitTruncationWarnings(t *testing.T) {
	if os.Getenv("WARMFIT_FIT_TRUNCATION") == "" {
		t.Skip("set WARMFIT_FIT_TRUNCATION=1")
	}
	const shots = 100000
	cases := loadCalibCases(t)
	type cell struct {
		name             string
		beta             float64
		order            int
		pulls            []float64
		fits, warned     int
		oldWarned        int
		series           int
		ratios, trueBias []float64 // per fit: MaxRatio, largest true bias / stderr
	}
	var cells []*cell
	index := map[string]*cell{}
	missed := 0
	for _, c := range cases {
		if !strings.HasPrefix(c.Name, "square:") {
			continue
		}
		var cl calibLattice
		for _, x := range calibLattices() {
			if x.name() == c.Name {
				cl = x
			}
		}
		lat, terms := calibModel(t, cl.spec, cl.preset, cl.values, c.Seed)
		nshots := make([]int64, len(terms))
		for k := range nshots {
			nshots[k] = shots
		}
		tab, err := fit.SyntheticTableFromShots(terms, c.Exact, nshots, c.Seed*1000+uint64(c.Beta*10))
		if err != nil {
			t.Fatal(err)
		}
		data, _, err := fit.EstimatesFromTable(tab, terms, nil)
		if err != nil {
			t.Fatal(err)
		}
		for _, L := range []int{4, 5, 6} {
			res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(terms), Data: data, Beta: c.Beta}, fit.Options{Order: L})
			if err != nil || !res.Converged || res.ThetaStderr == nil {
				t.Logf("%s seed %d beta %g order %d: no result (%v)", c.Name, c.Seed, c.Beta, L, err)
				continue
			}
			key := fmt.Sprintf("%s/%g/%d", c.Name, c.Beta, L)
			ce := index[key]
			if ce == nil {
				ce = &cell{name: c.Name, beta: c.Beta, order: L}
				index[key] = ce
				cells = append(cells, ce)
			}
			ce.fits++
			var sq float64
			var biased int
			var worstTrue float64
			exactTheta := c.Theta[slices.Index(c.Orders, L)]
			for q, th := range res.Theta {
				p := (th - c.Truth[q]) / res.ThetaStderr[q]
				ce.pulls = append(ce.pulls, p)
				sq += p * p
				if exactTheta != nil {
					b := math.Abs(exactTheta[q]-c.Truth[q]) / res.ThetaStderr[q]
					worstTrue = math.Max(worstTrue, b)
					if b > 2 {
						biased++
					}
				}
			}
			pullRMS := math.Sqrt(sq / float64(len(res.Theta)))
			warned := res.Truncation.OverStderr > 0
			if warned {
				ce.warned++
			}
			if st := res.Truncation.Steps; len(st) > 0 {
				old := st[len(st)-1]
				if len(st) > 1 {
					old = math.Max(old, st[len(st)-2])
				}
				if old > 0.1*res.Truncation.StatError {
					ce.oldWarned++
				}
			}
			if len(res.Untrusted) > 0 {
				ce.series++
			}
			ce.ratios = append(ce.ratios, res.Truncation.MaxRatio)
			ce.trueBias = append(ce.trueBias, worstTrue)
			if (pullRMS > 1.3 || float64(biased) > 0.1*float64(len(res.Theta))) && !warned {
				missed++
				t.Errorf("%s seed %d beta %g order %d: pull rms %.2f, %d coefficients biased by > 2 stderr, but no truncation warning (max estimate/stderr %.2f)",
					c.Name, c.Seed, c.Beta, L, pullRMS, biased, res.Truncation.MaxRatio)
			}
		}
	}
	fmt.Println("| lattice | beta | order | fits | pull rms | abs pull > 2 | largest true bias / stderr (median over fits) | largest estimate / stderr | warned | warned by the old rule | series warning |")
	fmt.Println("|---|---|---|---|---|---|---|---|---|---|---|")
	for _, ce := range cells {
		var sq float64
		over := 0
		for _, p := range ce.pulls {
			sq += p * p
			if math.Abs(p) > 2 {
				over++
			}
		}
		fmt.Printf("| %s | %g | %d | %d | %.2f | %.1f%% | %.2g | %.2g | %d/%d | %d/%d | %d/%d |\n", ce.name, ce.beta, ce.order, ce.fits,
			math.Sqrt(sq/float64(len(ce.pulls))), 100*float64(over)/float64(len(ce.pulls)), quantile(ce.trueBias, 0.5), quantile(ce.ratios, 0.5),
			ce.warned, ce.fits, ce.oldWarned, ce.fits, ce.series, ce.fits)
	}
	fmt.Printf("really wrong fits without a warning: %d\n", missed)
}
