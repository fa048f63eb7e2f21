package cluster_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"warmfit/cluster"
	"warmfit/lattice"
)

// gridCase is one model of the grid tests.
type gridCase struct {
	name  string
	spec  string
	order int
	sym   cluster.Symmetry
	terms func(t testing.TB, l *lattice.Lattice) []lattice.Term
}

var gridCases = []gridCase{
	{"random real, dense", "triangular:4x3", 5, cluster.NoSymmetry, func(t testing.TB, l *lattice.Lattice) []lattice.Term {
		return randomTerms(l, 0.6, false, rand.New(rand.NewPCG(11, 12)))
	}},
	{"random with Y (complex), dense", "square:4x3", 5, cluster.NoSymmetry, func(t testing.TB, l *lattice.Lattice) []lattice.Term {
		return randomTerms(l, 0.6, true, rand.New(rand.NewPCG(13, 14)))
	}},
	{"XXZ + Z field, U(1) blocks", "square:4x4", 6, cluster.TotalZ, func(t testing.TB, l *lattice.Lattice) []lattice.Term {
		terms, _ := xxzFieldModel(t, l, true)
		return terms
	}},
	{"XXZ + Z field, parity blocks", "square:4x4", 5, cluster.ParityZ, func(t testing.TB, l *lattice.Lattice) []lattice.Term {
		terms, _ := xxzFieldModel(t, l, false)
		return terms
	}},
	{"transverse-field Ising, X-parity frame", "triangular:4x4", 5, cluster.ParityX, func(t testing.TB, l *lattice.Lattice) []lattice.Term {
		return transverseIsingTerms(l, 0.9)
	}},
	{"XXZ + DM (complex), U(1) blocks", "square:4x3", 5, cluster.TotalZ, func(t testing.TB, l *lattice.Lattice) []lattice.Term {
		terms, _ := xxzFieldModel(t, l, true)
		rng := rand.New(rand.NewPCG(15, 16))
		for _, b := range l.InteractionBonds() {
			d := 0.3 * (2*rng.Float64() - 1) // D (X_i Y_j - Y_i X_j) conserves total Z
			xy, _ := lattice.NewTerm("XY", []int{b.I, b.J}, d)
			yx, _ := lattice.NewTerm("YX", []int{b.I, b.J}, -d)
			terms = append(terms, xy, yx)
		}
		return terms
	}},
}

// TestEvaluateGridMatchesEvaluate: the one-pass temperature grid equals
// single evaluations at every beta, order and term, in the thermodynamics
// and every expectation, with and without symmetry blocks, for real and
// complex models (independent method: the single-temperature Evaluate,
// common practice).
func TestEvaluateGridMatchesEvaluate(t *testing.T) {
	betas := []float64{0, 0.1, 0.35, 0.8, 2.5}
	const tol = 1e-12
	for _, tc := range gridCases {
		t.Run(tc.name, func(t *testing.T) {
			l := mustLattice(t, tc.spec)
			terms := tc.terms(t, l)
			coeffs := coeffsOf(terms)
			exp, err := cluster.NewExpansion(l, terms)
			if err != nil {
				t.Fatal(err)
			}
			order := tc.order
			if testing.Short() {
				order = min(order, 4)
			}
			opt := cluster.Options{Order: order}
			grid, err := exp.EvaluateGrid(coeffs, betas, opt)
			if err != nil {
				t.Fatal(err)
			}
			if grid.Symmetry != tc.sym {
				t.Fatalf("symmetry %v, want %v", grid.Symmetry, tc.sym)
			}
			worst := 0.0
			for i, beta := range betas {
				single, err := exp.Evaluate(coeffs, beta, opt)
				if err != nil {
					t.Fatal(err)
				}
				for o := 0; o < order; o++ {
					for _, q := range [][3]float64{
						{grid.LogZ[i][o], single.LogZ[o], 0}, {grid.Energy[i][o], single.Energy[o], 1}, {grid.HeatCapacity[i][o], single.HeatCapacity[o], 2},
					} {
						if d := math.Abs(q[0] - q[1]); d > tol*math.Max(1, math.Abs(q[1])) {
							t.Errorf("beta %v order %d quantity %v: grid %.15g, single %.15g", beta, o+1, q[2], q[0], q[1])
						}
					}
					for k := range terms {
						d := math.Abs(grid.Expect[i][o][k] - single.Expect[o][k])
						worst = math.Max(worst, d)
						if d > tol {
							t.Errorf("beta %v order %d <%s>: grid %.15g, single %.15g", beta, o+1, terms[k].Key(), grid.Expect[i][o][k], single.Expect[o][k])
						}
					}
				}
			}
			t.Logf("%d terms, order %d, %d temperatures: largest difference %.2g", len(terms), order, len(betas), worst)
		})
	}
}

// TestEvaluateGridThermodynamicsAgree: the thermodynamics of EvaluateGrid
// (full spectra) and of Thermodynamics (eigenvalues only) are the same
// sums over the same clusters (common practice).
func TestEvaluateGridThermodynamicsAgree(t *testing.T) {
	tc := gridCases[3]
	l := mustLattice(t, tc.spec)
	terms := tc.terms(t, l)
	exp, err := cluster.NewExpansion(l, terms)
	if err != nil {
		t.Fatal(err)
	}
	betas := []float64{0.2, 0.7, 1.5}
	opt := cluster.Options{Order: 4}
	grid, err := exp.EvaluateGrid(coeffsOf(terms), betas, opt)
	if err != nil {
		t.Fatal(err)
	}
	th, err := exp.Thermodynamics(coeffsOf(terms), betas, opt)
	if err != nil {
		t.Fatal(err)
	}
	for i := range betas {
		for o := 0; o < 4; o++ {
			for _, q := range [][2]float64{{grid.LogZ[i][o], th.LogZ[i][o]}, {grid.Energy[i][o], th.Energy[i][o]}, {grid.HeatCapacity[i][o], th.HeatCapacity[i][o]}} {
				if math.Abs(q[0]-q[1]) > 1e-10*math.Max(1, math.Abs(q[1])) {
					t.Errorf("beta %v order %d: EvaluateGrid %v, Thermodynamics %v", betas[i], o+1, q[0], q[1])
				}
			}
		}
	}
}

// TestEvaluateGridRefuses: the response is not offered on a grid, and
// temperatures must be finite and non-negative.
func TestEvaluateGridRefuses(t *testing.T) {
	l := mustLattice(t, "chain:4")
	terms := transverseIsingTerms(l, 1)
	exp, err := cluster.NewExpansion(l, terms)
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		betas []float64
		opt   cluster.Options
	}{
		{[]float64{0.5}, cluster.Options{Order: 3, Response: true}},
		{[]float64{0.5, math.NaN()}, cluster.Options{Order: 3}},
		{[]float64{-1}, cluster.Options{Order: 3}},
		{[]float64{math.Inf(1)}, cluster.Options{Order: 3}},
	} {
		if _, err := exp.EvaluateGrid(coeffsOf(terms), tc.betas, tc.opt); err == nil {
			t.Errorf("betas %v, options %+v: no error", tc.betas, tc.opt)
		}
	}
}

// ExampleExpansion_EvaluateGrid: the nearest-neighbour correlation of the
// transverse-field Ising chain at three temperatures from one pass.
func ExampleExpansion_EvaluateGrid() {
	l, err := lattice.Open("chain:16:periodic")
	if err != nil {
		panic(err)
	}
	var terms []lattice.Term
	for s := 0; s < l.NumSites(); s++ {
		zz, _ := lattice.NewTerm("ZZ", []int{s, (s + 1) % l.NumSites()}, -1)
		x, _ := lattice.NewTerm("X", []int{s}, -1)
		terms = append(terms, zz, x)
	}
	exp, err := cluster.NewExpansion(l, terms)
	if err != nil {
		panic(err)
	}
	res, err := exp.EvaluateGrid(coeffsOf(terms), []float64{0.1, 0.3, 0.5}, cluster.Options{Order: 8})
	if err != nil {
		panic(err)
	}
	for i, beta := range res.Betas {
		fmt.Printf("beta %.1f: <Z0 Z1> = %.4f\n", beta, res.Expect[i][7][0])
	}
	// Output:
	// beta 0.1: <Z0 Z1> = 0.0990
	// beta 0.3: <Z0 Z1> = 0.2759
	// beta 0.5: <Z0 Z1> = 0.4058
}
