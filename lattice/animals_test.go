package lattice

import (
	"fmt"
	"testing"
)

// Fixed lattice animals (connected site clusters counted up to
// translation) per site, against OEIS.
//
// Why a periodic lattice of L > 2n cells per axis counts them exactly:
// every bond of these lattices changes each cell coordinate by at most 1,
// so two sites of a connected n-site cluster differ by at most n-1 < L/2
// cells along each axis. The minimum-image difference of any two sites is
// then unique, so each cluster on the torus lifts to exactly one animal of
// the infinite lattice up to translation, and each animal has exactly
// one image per cell: (clusters of n sites) / (cells) = fixed animals per
// cell, with nothing lost or doubled by the wrap-around.
func TestLatticeAnimalsOEIS(t *testing.T) {
	tests := []struct {
		kind    string
		axes    int
		perCell []int64 // per unit cell; n = 1, 2, ...
		source  string
	}{
		// OEIS A001168, fixed polyominoes.
		{"square", 2, []int64{1, 2, 6, 19, 63, 216, 760, 2725}, "A001168"},
		// OEIS A001207, fixed polyhexes = site animals of the triangular lattice.
		{"triangular", 2, []int64{1, 3, 11, 44, 186, 814, 3652, 16689}, "A001207"},
		// OEIS A001420, fixed polyiamonds = site animals of the honeycomb
		// lattice, counted per 2-site cell (references.md: per site it is half).
		{"honeycomb", 2, []int64{2, 3, 6, 14, 36, 94, 250, 675}, "A001420"},
		// OEIS A001931, fixed polycubes.
		{"cubic", 3, []int64{1, 3, 15, 86, 534, 3481}, "A001931"},
	}
	for _, tt := range tests {
		maxSize := len(tt.perCell)
		l := 2*maxSize + 1
		size := fmt.Sprint(l)
		for a := 1; a < tt.axes; a++ {
			size += fmt.Sprintf("x%d", l)
		}
		lat := mustBuild(t, tt.kind+":"+size+":periodic")
		cells := int64(lat.NumSites() / len(unitCells[tt.kind].Basis))
		counts := lat.CountClusters(maxSize)
		for k, want := range tt.perCell {
			if counts[k]%cells != 0 || counts[k]/cells != want {
				t.Errorf("%s (%s): %d clusters of %d sites on %d cells, want %d per cell",
					tt.kind, tt.source, counts[k], k+1, cells, want)
			}
		}
	}
}

// A chain has one cluster of each size per site (references.md); the open
// chain of L sites has L-n+1 clusters of n sites.
func TestChainClusters(t *testing.T) {
	l := mustBuild(t, "chain:10")
	for k, c := range l.CountClusters(10) {
		if c != int64(10-k) {
			t.Errorf("chain:10: %d clusters of %d sites, want %d", c, k+1, 10-k)
		}
	}
}
