package cluster_test

import (
	"fmt"
	"os"
	"testing"
	"time"

	"warmfit/cluster"
)

func TestExplore(t *testing.T) {
	if os.Getenv("EXPLORE") == "" {
		t.Skip()
	}
	kind := os.Getenv("EXPLORE")
	var order int
	fmt.Sscan(os.Getenv("ORDER"), &order)
	temps := []float64{0.3, 0.4, 0.5, 0.6, 0.640851, 0.7, 0.8, 1, 1.5, 2, 3, 5}
	t0 := time.Now()
	m := cluster.HeisenbergModel(kind)
	vals := []float64{1}
	if os.Getenv("ISING") != "" {
		m = cluster.UniformModel{Lattice: kind, Couplings: []cluster.Coupling{{Name: "J", Terms: []cluster.TemplateTerm{{"ZZ", 0, -1}}}}}
		temps = []float64{2.5, 3, 4, 5}
	}
	u, err := cluster.NewUniformExpansion(m, order)
	if err != nil {
		t.Fatal(err)
	}
	t1 := time.Now()
	r, err := u.Evaluate(vals, cluster.UniformOptions{Temperatures: temps})
	if err != nil {
		t.Fatal(err)
	}
	fmt.Printf("classes %v eval %v stats %+v %s\n", t1.Sub(t0), time.Since(t1), r.Stats, r.Symmetry)
	for _, q := range []cluster.Quantity{cluster.QuantityEnergy, cluster.QuantitySusceptibility, cluster.QuantityHeatCapacity} {
		c := r.Curve(q, 0, cluster.TrustOptions{})
		fmt.Printf("%v: bare reach %g resummed reach %g\n", q, c.BareReach, c.ResummedReach)
		for i, T := range temps {
			fmt.Printf("  T=%-8g bare %.7f prev %.7f wynn %.7f/%.7f euler %.7f/%.7f  %v\n", T, c.Bare[i], c.BarePrev[i], c.Wynn[i], c.WynnPrev[i], c.Euler[i], c.EulerPrev[i], c.Trust[i])
		}
	}
}
