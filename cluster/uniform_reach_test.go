package cluster_test

import (
	"fmt"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"warmfit/cluster"
)

// TestUniformReachTable prints, for the Heisenberg model H = J sum S.S on
// the chain, square, triangular and honeycomb lattices, the reach of the
// energy at each order: the lowest temperature (in J, on a 200-point
// logarithmic grid from 0.05 J to 5 J) from which upwards the energy per
// site is trusted to 1e-3 J, bare and resummed (see Curve). It runs only
// when WARMFIT_REACH is set; WARMFIT_REACH=chain:16,square:11 chooses the
// lattices and highest orders (default chain:16, square:12,
// triangular:9, honeycomb:12; README.md holds the table). Example:
//
//	WARMFIT_REACH=1 go test ./cluster -run TestUniformReachTable -v -timeout 2h
func TestUniformReachTable(t *testing.T) {
	spec := os.Getenv("WARMFIT_REACH")
	if spec == "" {
		t.Skip("set WARMFIT_REACH to print the reach table")
	}
	if spec == "1" {
		spec = "chain:16,square:12,triangular:9,honeycomb:12"
	}
	temps := logGrid(0.05, 5, 200)
	for _, item := range strings.Split(spec, ",") {
		kind, orderText, _ := strings.Cut(item, ":")
		order, err := strconv.Atoi(orderText)
		if err != nil {
			t.Fatalf("WARMFIT_REACH item %q: want KIND:ORDER", item)
		}
		u, err := cluster.NewUniformExpansion(cluster.HeisenbergModel(kind), order)
		if err != nil {
			t.Fatal(err)
		}
		r, err := u.Evaluate([]float64{1}, cluster.UniformOptions{Temperatures: temps, MaxBlock: 1 << 14})
		if err != nil {
			t.Fatal(err)
		}
		fmt.Printf("%s Heisenberg, energy to 1e-3 J per site (T/J):\n  order  bare   resummed\n", kind)
		for o := 3; o <= order; o++ {
			c := r.Curve(cluster.QuantityEnergy, 0, cluster.TrustOptions{Order: o})
			fmt.Printf("  %5d  %s  %s\n", o, reachText(c.BareReach), reachText(c.ResummedReach))
		}
	}
}

func reachText(t float64) string {
	if math.IsInf(t, 1) {
		return "  none"
	}
	return fmt.Sprintf("%6.3f", t)
}
