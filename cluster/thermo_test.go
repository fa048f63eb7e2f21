package cluster_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"warmfit/cluster"
)

// The temperature grid must agree with single evaluations, and at every
// order obey the thermodynamic identities C = -beta^2 dE/dbeta and
// E = -d log Z/dbeta (closed forms; each cluster's contribution obeys them
// and the multipliers do not depend on beta).
func TestThermodynamicsGridIdentities(t *testing.T) {
	l := mustLattice(t, "triangular:4x3")
	rng := rand.New(rand.NewPCG(5, 6))
	terms := randomTerms(l, 0.6, true, rng)
	exp, err := cluster.NewExpansion(l, terms)
	if err != nil {
		t.Fatal(err)
	}
	const beta, h, L = 0.3, 1e-4, 4
	grid, err := exp.Thermodynamics(coeffsOf(terms), []float64{beta - h, beta, beta + h}, cluster.Options{Order: L})
	if err != nil {
		t.Fatal(err)
	}
	single, err := exp.Evaluate(coeffsOf(terms), beta, cluster.Options{Order: L})
	if err != nil {
		t.Fatal(err)
	}
	for o := 0; o < L; o++ {
		if math.Abs(grid.Energy[1][o]-single.Energy[o]) > 1e-10 || math.Abs(grid.LogZ[1][o]-single.LogZ[o]) > 1e-10 {
			t.Errorf("order %d: grid and single evaluation differ", o+1)
		}
		dE := (grid.Energy[2][o] - grid.Energy[0][o]) / (2 * h)
		if c := grid.HeatCapacity[1][o]; math.Abs(c+beta*beta*dE) > 1e-5*math.Max(1, math.Abs(c)) {
			t.Errorf("order %d: C = %.10g, -beta^2 dE/dbeta = %.10g", o+1, c, -beta*beta*dE)
		}
		dLogZ := (grid.LogZ[2][o] - grid.LogZ[0][o]) / (2 * h)
		if e := grid.Energy[1][o]; math.Abs(e+dLogZ) > 1e-5*math.Max(1, math.Abs(e)) {
			t.Errorf("order %d: E = %.10g, -dlogZ/dbeta = %.10g", o+1, e, -dLogZ)
		}
	}
}
