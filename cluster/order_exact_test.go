package cluster_test

import (
	"strings"
	"testing"

	"warmfit/cluster"
	"warmfit/lattice/model"
)

// On a lattice small enough to diagonalise whole, the automatic order may
// pass its dimension ceiling up to the number of sites, where the
// expansion is exact (inclusion-exclusion over all connected clusters;
// Rigol, Bryant, Singh, arXiv 0706.3254); on a larger lattice the
// ceiling holds and says how to go further.
func TestOrderPolicyReachesWholeSmallLattice(t *testing.T) {
	for _, tc := range []struct {
		spec  string
		order int
		ok    bool
		why   string
	}{
		{"square:3x3", 9, true, ""},
		{"square:3x3", 10, false, "above the automatic ceiling 8"},
		{"square:4x4", 9, false, "above the automatic ceiling 8"},
	} {
		lat := mustLattice(t, tc.spec)
		terms, err := model.Preset(lat, "tfim", nil)
		if err != nil {
			t.Fatal(err)
		}
		e, err := cluster.NewExpansion(lat, terms)
		if err != nil {
			t.Fatal(err)
		}
		p := cluster.NewOrderPolicy(lat, terms)
		ok, why := p.Allows(e, tc.order)
		if ok != tc.ok || !strings.Contains(why, tc.why) {
			t.Errorf("%s order %d: allows %v (%q), want %v (%q)", tc.spec, tc.order, ok, why, tc.ok, tc.why)
		}
	}
}
