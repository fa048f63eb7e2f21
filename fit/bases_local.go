package fit

import (
	"fmt"
	"slices"

	"warmfit/lattice"
)

// LocalStrings returns every Pauli string (all 3^m letter choices) on
// every set of m <= maxSites sites that lies inside a connected set of at
// most maxSites+1 sites of the terms' interaction graph (sites joined
// when a term contains both), in a deterministic order: sets by size,
// then by sites, letters in X, Y, Z order. maxSites is 1, 2 or 3. With 3
// this is what the stationarity constraints of fit/stationary need:
// probes on pairs at distance one or two times a term give strings on
// three sites within a connected set of four.
func LocalStrings(n int, terms []lattice.Term, maxSites int) ([]lattice.Term, error) {
	if maxSites < 1 || maxSites > 3 {
		return nil, fmt.Errorf("local strings on %d sites: want 1, 2 or 3", maxSites)
	}
	if err := lattice.CheckTerms(n, terms); err != nil {
		return nil, err
	}
	adj := termAdjacency(n, terms)
	// Connected sets of up to maxSites+1 sites, grown one neighbour at a
	// time from every used site.
	seen := map[string]bool{}
	var frontier [][]int
	for _, t := range terms {
		for _, s := range t.Sites {
			key := fmt.Sprint(s)
			if !seen[key] {
				seen[key] = true
				frontier = append(frontier, []int{s})
			}
		}
	}
	connected := append([][]int(nil), frontier...)
	for size := 2; size <= maxSites+1; size++ {
		var next [][]int
		for _, set := range frontier {
			for _, s := range set {
				for _, u := range adj[s] {
					if slices.Contains(set, u) {
						continue
					}
					grown := append(slices.Clone(set), u)
					slices.Sort(grown)
					key := fmt.Sprint(grown)
					if !seen[key] {
						seen[key] = true
						next = append(next, grown)
					}
				}
			}
		}
		connected = append(connected, next...)
		frontier = next
	}
	// Every subset of at most maxSites sites of those sets.
	subsets := map[string][]int{}
	for _, set := range connected {
		m := len(set)
		for mask := 1; mask < 1<<m; mask++ {
			var sub []int
			for i := range m {
				if mask&(1<<i) != 0 {
					sub = append(sub, set[i])
				}
			}
			if len(sub) <= maxSites {
				subsets[fmt.Sprint(sub)] = sub
			}
		}
	}
	sets := make([][]int, 0, len(subsets))
	for _, sub := range subsets {
		sets = append(sets, sub)
	}
	slices.SortFunc(sets, func(a, b []int) int {
		if len(a) != len(b) {
			return len(a) - len(b)
		}
		return slices.Compare(a, b)
	})
	var out []lattice.Term
	for _, set := range sets {
		total := 1
		for range set {
			total *= 3
		}
		for code := range total {
			lets := make([]byte, len(set))
			x := code
			for i := len(lets) - 1; i >= 0; i-- {
				lets[i] = letters[x%3]
				x /= 3
			}
			out = append(out, lattice.Term{Pauli: string(lets), Sites: slices.Clone(set)})
		}
	}
	return out, nil
}

// localCoveringBases returns covering bases for the terms and every
// Pauli string on connected sets of at most maxSites sites.
func localCoveringBases(n int, terms []lattice.Term, maxSites int) ([]string, error) {
	strs, err := LocalStrings(n, terms, maxSites)
	if err != nil {
		return nil, err
	}
	seen := map[string]bool{}
	for _, s := range strs {
		seen[s.Key()] = true
	}
	for _, t := range terms {
		if !seen[t.Key()] {
			strs = append(strs, lattice.Term{Pauli: t.Pauli, Sites: t.Sites})
		}
	}
	return CoveringBases(n, strs)
}
