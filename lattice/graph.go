package lattice

import (
	"fmt"
	"math"
	"slices"
)

// FromGraph builds a custom lattice ("graph" kind) from site coordinates
// and its nearest-neighbour bonds. Coordinates have 2 or 3 components,
// the same for every site, and are finite; they serve for drawing only.
// Bonds join distinct sites in range, each pair at most once in either
// orientation; they are stored oriented I < J in the order given.
//
// For a graph, the next-nearest-neighbour shell NNN is defined by the
// graph, not by distances: it holds the pairs at graph distance exactly 2
// (joined by a path of two bonds but not by one), sorted. With shells 2
// they join the interaction graph. shells 0 means 1.
//
// A disconnected graph is accepted; Components lists its pieces.
// Errors name the offending argument and position, e.g.
// "bonds[3]: site 17 out of range [0,12)".
func FromGraph(coords [][]float64, bonds []Bond, shells int) (*Lattice, error) {
	if shells < 0 || shells > 2 {
		return nil, fmt.Errorf("shells %d: want 1 or 2", shells)
	}
	if shells == 0 {
		shells = 1
	}
	n := len(coords)
	if n == 0 {
		return nil, fmt.Errorf("sites: no sites")
	}
	if n > MaxSites {
		return nil, fmt.Errorf("sites: %d sites, more than %d", n, MaxSites)
	}
	dim := len(coords[0])
	flat := make([]float64, 0, n*dim)
	own := make([][]float64, n)
	for i, p := range coords {
		if len(p) != 2 && len(p) != 3 {
			return nil, fmt.Errorf("sites[%d]: %d coordinates, want 2 or 3", i, len(p))
		}
		if len(p) != dim {
			return nil, fmt.Errorf("sites[%d]: %d coordinates, but sites[0] has %d", i, len(p), dim)
		}
		for d, v := range p {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("sites[%d]: coordinate %d is not finite", i, d)
			}
		}
		flat = append(flat, p...)
		own[i] = flat[len(flat)-dim : len(flat) : len(flat)]
	}
	nn := make([]Bond, len(bonds))
	first := make(map[Bond]int, len(bonds))
	for k, b := range bonds {
		for _, s := range [2]int{b.I, b.J} {
			if s < 0 || s >= n {
				return nil, fmt.Errorf("bonds[%d]: site %d out of range [0,%d)", k, s, n)
			}
		}
		if b.I == b.J {
			return nil, fmt.Errorf("bonds[%d]: site %d bonded to itself", k, b.I)
		}
		o := Bond{min(b.I, b.J), max(b.I, b.J)}
		if prev, dup := first[o]; dup {
			return nil, fmt.Errorf("bonds[%d]: sites %d and %d are already bonded by bonds[%d]", k, o.I, o.J, prev)
		}
		first[o] = k
		nn[k] = o
	}
	l := &Lattice{
		Spec:   Spec{Kind: "graph", Size: []int{n}, Boundary: OpenBoundary, Shells: shells},
		Coords: own,
		NN:     nn,
		NNN:    distanceTwoPairs(n, nn),
	}
	l.finish()
	return l, nil
}

// distanceTwoPairs returns the pairs at graph distance exactly 2, sorted.
func distanceTwoPairs(n int, bonds []Bond) []Bond {
	adj := make([][]int, n)
	for _, b := range bonds {
		adj[b.I] = append(adj[b.I], b.J)
		adj[b.J] = append(adj[b.J], b.I)
	}
	// stamp[j] == i+1 marks j as seen from i (itself, a neighbour, or
	// already paired), so each pair is emitted once.
	stamp := make([]int, n)
	var out []Bond
	for i := 0; i < n; i++ {
		stamp[i] = i + 1
		for _, k := range adj[i] {
			stamp[k] = i + 1
		}
		first := len(out)
		for _, k := range adj[i] {
			for _, j := range adj[k] {
				if j > i && stamp[j] != i+1 {
					stamp[j] = i + 1
					out = append(out, Bond{i, j})
				}
			}
		}
		slices.SortFunc(out[first:], compareBonds)
	}
	return out
}
