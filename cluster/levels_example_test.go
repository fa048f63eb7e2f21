package cluster_test

import (
	"fmt"
	"log"

	"warmfit/cluster"
)

// The Heisenberg dimer in a Z field, H = 0.5 (XX + YY + ZZ) + 0.2 (Z_0 +
// Z_1), conserves total Z: its levels come sector by sector, each with
// its total Z (the triplet at 0.5 split by the field into 0.9, 0.5, 0.1,
// the singlet at -1.5), and the magnetisation follows from the labels.
func ExampleLevels() {
	var ops []cluster.PauliString
	for _, p := range []struct {
		letters string
		qubits  []int
	}{{"XX", []int{0, 1}}, {"YY", []int{0, 1}}, {"ZZ", []int{0, 1}}, {"Z", []int{0}}, {"Z", []int{1}}} {
		op, err := cluster.ParsePauli(p.letters, p.qubits)
		if err != nil {
			log.Fatal(err)
		}
		ops = append(ops, op)
	}
	h := &cluster.Hamiltonian{NumQubits: 2, Ops: ops, Coeffs: []float64{0.5, 0.5, 0.5, 0.2, 0.2}}
	var l cluster.Levels
	if err := l.Factorize(h); err != nil {
		log.Fatal(err)
	}
	fmt.Println("symmetry:", l.Symmetry())
	for i := 0; i < l.Len(); i++ {
		z, _ := l.TotalZ(i)
		fmt.Printf("E = %+.3f  total Z = %+.0f\n", l.Value(i), z)
	}
	g, err := l.Gibbs(0.7)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("beta 0.7: log Z = %.6f, <M> = %.6f, Var M = %.6f\n", g.LogZ, g.TotalZ, g.TotalZVariance)
	// Output:
	// symmetry: U(1) total Z
	// E = +0.900  total Z = +2
	// E = -1.500  total Z = +0
	// E = +0.500  total Z = +0
	// E = +0.100  total Z = -2
	// beta 0.7: log Z = 1.614888, <M> = -0.159052, Var M = 1.140321
}
