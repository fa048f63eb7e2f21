package cluster_test

import (
	"fmt"
	"math"
	"os"
	"slices"
	"testing"

	"warmfit/cluster"
	"warmfit/lattice"
	"warmfit/lattice/model"
	"warmfit/validate"
)

// truncationSample is one value's estimated truncation error (Converge)
// against its true error (expansion minus an exact reference).
type truncationSample struct{ estimate, actual float64 }

// truncationRow summarises the samples of one reference, temperature and
// order: the fraction whose estimate bounds the true error and the
// median of estimate/true error.
type truncationRow struct {
	reference   string
	betaJ       float64 // beta times the largest |coefficient|
	order       int
	values      int
	bounded     float64
	medianRatio float64
}

func summariseTruncation(ref string, betaJ float64, order int, samples []truncationSample) truncationRow {
	row := truncationRow{reference: ref, betaJ: betaJ, order: order}
	var ratios []float64
	bounded := 0
	for _, s := range samples {
		if math.IsInf(s.estimate, 0) {
			continue
		}
		row.values++
		// A true error at rounding level is bounded by any estimate.
		if s.estimate >= s.actual || s.actual <= 1e-12 {
			bounded++
		}
		// Ratios of values already exact to rounding say nothing.
		if s.actual > 1e-12 {
			ratios = append(ratios, s.estimate/s.actual)
		}
	}
	if row.values > 0 {
		row.bounded = float64(bounded) / float64(row.values)
	}
	row.medianRatio = math.NaN()
	if len(ratios) > 0 {
		slices.Sort(ratios)
		row.medianRatio = ratios[len(ratios)/2]
	}
	// Printed as measured: the whole run takes minutes.
	fmt.Printf("| %s | %.3g | %d | %d | %.1f%% | %.3g |\n", row.reference, row.betaJ, row.order, row.values, 100*row.bounded, row.medianRatio)
	return row
}

// patchTruncation cuts patches from a disordered square XXZ + X and Z
// field model (the README tour's device), checks them against dense
// exact diagonalisation (validate.Crosscheck) and collects, per order at
// least margin below the patch size (where the patch's own end does not
// yet cut the series short), the estimate against the true error.
func patchTruncation(t *testing.T, shape []int, nPatches int, betas []float64, margin int) []truncationRow {
	l := mustLattice(t, "square:6x6")
	terms, err := model.Preset(l, "xxz", tourParams)
	if err != nil {
		t.Fatal(err)
	}
	model.AddDisorder(terms, 0.05, 4)
	m := &model.Model{Lattice: l, Terms: terms}
	maxCoeff := 0.0
	for _, tm := range terms {
		maxCoeff = math.Max(maxCoeff, math.Abs(tm.Coeff))
	}
	sets, err := validate.PatchesOfShape(l, shape)
	if err != nil {
		t.Fatal(err)
	}
	var keep [][]int
	for i := 0; i < nPatches; i++ {
		keep = append(keep, sets[i*len(sets)/nPatches])
	}
	var rows []truncationRow
	name := fmt.Sprintf("square XXZ+fields, %dx%d patches", shape[0], shape[1])
	for _, beta := range betas {
		res, err := validate.Crosscheck(m, beta, keep, validate.CrosscheckOptions{DenseQubits: 12})
		if err != nil {
			t.Fatal(err)
		}
		n := len(keep[0])
		for o := 2; o <= n-margin; o++ {
			var samples []truncationSample
			for pi := range res.Patches {
				pc := &res.Patches[pi]
				for i := range pc.Exact {
					samples = append(samples, truncationSample{pc.Estimate[o-1][i], math.Abs(pc.Diff(o, i))})
				}
			}
			rows = append(rows, summariseTruncation(name, beta*maxCoeff, o, samples))
		}
	}
	return rows
}

// chainTruncation expands a disordered transverse-field Ising chain of 40
// open sites to order 10 and compares every term with the exact free-
// fermion solution (validate.NewFreeFermionChain: Pfeuty 1970, Lieb,
// Schultz, Mattis 1961).
func chainTruncation(t *testing.T, betas []float64) []truncationRow {
	const n = 40
	l := mustLattice(t, fmt.Sprintf("chain:%d", n))
	var terms []lattice.Term
	rng := uint64(7)
	next := func() float64 { // a small fixed LCG: the disorder needs no quality
		rng = rng*6364136223846793005 + 1442695040888963407
		return float64(rng>>11) / (1 << 53)
	}
	for i := 0; i+1 < n; i++ {
		tm, _ := lattice.NewTerm("ZZ", []int{i, i + 1}, 1+0.2*(next()-0.5))
		terms = append(terms, tm)
	}
	for i := 0; i < n; i++ {
		tm, _ := lattice.NewTerm("X", []int{i}, 0.7+0.2*(next()-0.5))
		terms = append(terms, tm)
	}
	maxCoeff := 0.0
	for _, tm := range terms {
		maxCoeff = math.Max(maxCoeff, math.Abs(tm.Coeff))
	}
	exp, err := cluster.NewExpansion(l, terms)
	if err != nil {
		t.Fatal(err)
	}
	ops, err := cluster.TermPaulis(terms)
	if err != nil {
		t.Fatal(err)
	}
	const top = 10
	var rows []truncationRow
	for _, beta := range betas {
		ff, err := validate.NewFreeFermionChain(n, terms, beta)
		if err != nil {
			t.Fatal(err)
		}
		res, err := exp.Evaluate(coeffsOf(terms), beta, cluster.Options{Order: top})
		if err != nil {
			t.Fatal(err)
		}
		exact := make([]float64, len(terms))
		for k := range terms {
			if exact[k], err = ff.Expect(ops[k]); err != nil {
				t.Fatal(err)
			}
		}
		series := make([]float64, top)
		for o := 4; o <= top; o += 2 {
			var samples []truncationSample
			for k, tm := range terms {
				for j := range series {
					series[j] = res.Expect[j][k]
				}
				c := cluster.Converge(series[:o], len(tm.Sites), 1e-3)
				samples = append(samples, truncationSample{c.Error, math.Abs(series[o-1] - exact[k])})
			}
			rows = append(rows, summariseTruncation("TFIM chain (free fermions), 40 sites", beta*maxCoeff, o, samples))
		}
	}
	return rows
}

// TestTruncationCalibration measures how well Converge's truncation
// estimate bounds the true error of term expectations against exact
// references, and prints the table README.md quotes. It takes minutes
// (dense diagonalisation of 9- and 10-site patches): run it with
//
//	WARMFIT_TRUNCATION=1 go test -run TestTruncationCalibration -v -timeout 60m ./cluster/
//
// (WARMFIT_TRUNCATION=chain or =patches runs one part; =all adds a 4x3
// patch, 12 qubits).
func TestTruncationCalibration(t *testing.T) {
	if os.Getenv("WARMFIT_TRUNCATION") == "" {
		t.Skip("set WARMFIT_TRUNCATION=1 to calibrate the truncation estimate (minutes)")
	}
	fmt.Println("| reference | beta x max|coeff| | order | values | bounded | median estimate/true |")
	fmt.Println("|---|---|---|---|---|---|")
	which := os.Getenv("WARMFIT_TRUNCATION")
	part := func(name string) bool { return which == "1" || which == "all" || which == name }
	var rows []truncationRow
	if part("chain") {
		rows = append(rows, chainTruncation(t, []float64{0.5, 1, 1.5, 2, 3})...)
	}
	if part("patches") {
		rows = append(rows, patchTruncation(t, []int{3, 3}, 4, []float64{0.35, 0.7, 1, 1.5, 2}, 3)...)
		rows = append(rows, patchTruncation(t, []int{5, 2}, 2, []float64{0.35, 0.7, 1, 1.5, 2}, 3)...)
	}
	if which == "all" {
		rows = append(rows, patchTruncation(t, []int{4, 3}, 1, []float64{0.35, 1, 2}, 3)...)
	}
	total, bounded := 0, 0.0
	for _, r := range rows {
		total += r.values
		bounded += r.bounded * float64(r.values)
	}
	fmt.Printf("overall: %.1f%% of %d values bounded\n", 100*bounded/float64(total), total)
}
