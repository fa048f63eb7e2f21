package cluster_test

import (
	"math"
	"testing"

	"warmfit/cluster"
	"warmfit/lattice"
	"warmfit/lattice/model"
)

// xxzFieldModel is the XXZ preset in a Z field (Jxy 0.2, Jz 0.15, hz 0.4)
// with coefficient disorder of width 0.05. Independent disorder on XX and
// YY breaks total Z conservation and leaves the Z2 spin flip; with
// conserving true every bond's YY takes its XX coefficient, which keeps
// the U(1).
func xxzFieldModel(t testing.TB, l *lattice.Lattice, conserving bool) ([]lattice.Term, []float64) {
	terms, err := model.Preset(l, "xxz", map[string]float64{"Jxy": 0.2, "Jz": 0.15, "hz": 0.4})
	if err != nil {
		t.Fatal(err)
	}
	model.AddDisorder(terms, 0.05, 7)
	if conserving {
		xx := map[[2]int]float64{}
		for _, tm := range terms {
			if tm.Pauli == "XX" {
				xx[[2]int{tm.Sites[0], tm.Sites[1]}] = tm.Coeff
			}
		}
		for k, tm := range terms {
			if tm.Pauli == "YY" {
				terms[k].Coeff = xx[[2]int{tm.Sites[0], tm.Sites[1]}]
			}
		}
	}
	return terms, coeffsOf(terms)
}

// TestExpansionBlocksMatchDense: on a 4x4 XXZ lattice in a Z field at
// order 6, the expansion in blocks (U(1) and Z2) agrees with the dense
// one in every partial sum, expectation and response entry, and in the
// thermodynamics grid (independent method: common practice).
func TestExpansionBlocksMatchDense(t *testing.T) {
	l := mustLattice(t, "square:4x4")
	const beta, tol = 0.35, 1e-10
	for _, tc := range []struct {
		conserving bool
		want       cluster.Symmetry
		order      int
	}{{true, cluster.TotalZ, 6}, {false, cluster.ParityZ, 5}} {
		order := tc.order
		if testing.Short() {
			order = 4
		}
		terms, coeffs := xxzFieldModel(t, l, tc.conserving)
		exp, err := cluster.NewExpansion(l, terms)
		if err != nil {
			t.Fatal(err)
		}
		blk, err := exp.Evaluate(coeffs, beta, cluster.Options{Order: order, Response: true})
		if err != nil {
			t.Fatal(err)
		}
		dense, err := exp.Evaluate(coeffs, beta, cluster.Options{Order: order, Response: true, IgnoreSymmetry: true})
		if err != nil {
			t.Fatal(err)
		}
		if blk.Symmetry != tc.want || dense.Symmetry != cluster.NoSymmetry {
			t.Fatalf("symmetries %v and %v, want %v and none", blk.Symmetry, dense.Symmetry, tc.want)
		}
		name := tc.want.String()
		for o := 0; o < order; o++ {
			for _, q := range [][2]float64{{blk.LogZ[o], dense.LogZ[o]}, {blk.Energy[o], dense.Energy[o]}, {blk.HeatCapacity[o], dense.HeatCapacity[o]}} {
				if math.Abs(q[0]-q[1]) > tol*math.Max(1, math.Abs(q[1])) {
					t.Errorf("%s order %d: blocks %v, dense %v", name, o+1, q[0], q[1])
				}
			}
			for k := range terms {
				if math.Abs(blk.Expect[o][k]-dense.Expect[o][k]) > tol {
					t.Errorf("%s order %d: <%s> blocks %v, dense %v", name, o+1, terms[k].Key(), blk.Expect[o][k], dense.Expect[o][k])
				}
			}
		}
		if blk.Response.NNZ() != dense.Response.NNZ() {
			t.Fatalf("%s: response has %d entries in blocks, %d dense", name, blk.Response.NNZ(), dense.Response.NNZ())
		}
		for i := 0; i < blk.Response.Dim(); i++ {
			bc, bv := blk.Response.Row(i)
			dc, dv := dense.Response.Row(i)
			if len(bc) != len(dc) {
				t.Fatalf("%s: response row %d has %d entries in blocks, %d dense", name, i, len(bc), len(dc))
			}
			for p, v := range bv {
				if math.Abs(v-dv[p]) > tol || bc[p] != dc[p] {
					t.Fatalf("%s: response entry (%d,%d): blocks %v, dense (%d) %v", name, i, bc[p], v, dc[p], dv[p])
				}
			}
		}
		betas := []float64{0.1, beta, 1}
		gb, err := exp.Thermodynamics(coeffs, betas, cluster.Options{Order: order})
		if err != nil {
			t.Fatal(err)
		}
		gd, err := exp.Thermodynamics(coeffs, betas, cluster.Options{Order: order, IgnoreSymmetry: true})
		if err != nil {
			t.Fatal(err)
		}
		if gb.Symmetry != tc.want || gd.Symmetry != cluster.NoSymmetry {
			t.Fatalf("grid symmetries %v and %v", gb.Symmetry, gd.Symmetry)
		}
		for i := range betas {
			for o := 0; o < order; o++ {
				for _, q := range [][2]float64{{gb.LogZ[i][o], gd.LogZ[i][o]}, {gb.Energy[i][o], gd.Energy[i][o]}, {gb.HeatCapacity[i][o], gd.HeatCapacity[i][o]}} {
					if math.Abs(q[0]-q[1]) > tol*math.Max(1, math.Abs(q[1])) {
						t.Errorf("%s grid beta=%v order %d: blocks %v, dense %v", name, betas[i], o+1, q[0], q[1])
					}
				}
			}
		}
		if _, got := exp.EstimateWork(order); math.Abs(got-blockWorkSum(exp, order, tc.want)) > 1e-9*got {
			t.Errorf("%s: work estimate %v, want %v", name, got, blockWorkSum(exp, order, tc.want))
		}
	}
}

// blockWorkSum counts the clusters of every size by enumeration from
// every anchor and weighs each with the sum of its cubed sector
// dimensions (derived: C(n,k) states with k qubits in state 1 under
// TotalZ, 2^(n-1) of either parity).
func blockWorkSum(exp *cluster.Expansion, order int, sym cluster.Symmetry) float64 {
	counts := make([]float64, order)
	l := exp.Lattice()
	for a := 0; a < l.NumSites(); a++ {
		l.EachClusterFrom(a, order, func(sites []int) bool {
			counts[len(sites)-1]++
			return true
		})
	}
	var w float64
	for s, c := range counts {
		n := s + 1
		switch sym {
		case cluster.TotalZ:
			binom := 1.0
			for k := 0; k <= n; k++ {
				w += c * binom * binom * binom
				binom = binom * float64(n-k) / float64(k+1)
			}
		case cluster.ParityZ:
			w += c * 2 * math.Pow(2, 3*float64(n-1))
		default:
			w += c * math.Pow(8, float64(n))
		}
	}
	return w
}
