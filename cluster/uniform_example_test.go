package cluster_test

import (
	"fmt"

	"warmfit/cluster"
)

// The spin-1/2 Heisenberg chain's susceptibility per spin (units of
// g^2 mu_B^2 / J), summed over cluster classes to order 12 and judged at
// the default tolerance; Eggert, Affleck and Takahashi (1994) give
// 0.136543 at T = J and 0.094474 at T = 2J.
func ExampleUniformExpansion() {
	u, err := cluster.NewUniformExpansion(cluster.HeisenbergModel("chain"), 12)
	if err != nil {
		panic(err)
	}
	r, err := u.Evaluate([]float64{1}, cluster.UniformOptions{Temperatures: []float64{1, 2}})
	if err != nil {
		panic(err)
	}
	chi := r.Curve(cluster.QuantitySusceptibility, 0, cluster.TrustOptions{})
	for i, t := range chi.Temperatures {
		fmt.Printf("T = %g J: chi = %.5f (%v)\n", t, chi.Value[i], chi.Trust[i])
	}
	fmt.Println("blocks:", r.Symmetry)
	// Output:
	// T = 1 J: chi = 0.13654 (bare)
	// T = 2 J: chi = 0.09447 (bare)
	// blocks: total spin S (isotropic exchange), each level a multiplet of 2S+1
}
