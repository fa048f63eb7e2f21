package fit

import (
	"fmt"
	"slices"

	"warmfit/lattice"
)

// LocalStrings returns every Pauli string (all 3^m letter choices) on
// every connected set of m <= maxSites sites of the terms' interaction
// graph (sites joined when a term contains both), in a deterministic
// order: sets by size, then by sites, letters in X, Y, Z order. maxSites
// is 1, 2 or 3. The stationarity constraints of fit/stationary need the
// 3-local strings on paths i-j-k, which this covers.
func LocalStrings(n int, terms []lattice.Term, maxSites int) ([]lattice.Term, error) {
	if maxSites < 1 || maxSites > 3 {
		return nil, fmt.Errorf("local strings on %d sites: want 1, 2 or 3", maxSites)
	}
	if err := lattice.CheckTerms(n, terms); err != nil {
		return nil, err
	}
	adj := termAdjacency(n, terms)
	used := make([]bool, n)
	for _, t := range terms {
		for _, s := range t.Sites {
			used[s] = true
		}
	}
	var sets [][]int
	for s := range n {
		if used[s] {
			sets = append(sets, []int{s})
		}
	}
	if maxSites >= 2 {
		for a := range n {
			for _, b := range adj[a] {
				if b > a {
					sets = append(sets, []int{a, b})
				}
			}
		}
	}
	if maxSites >= 3 {
		seen := map[[3]int]bool{}
		var triples [][]int
		for j := range n {
			for x, i := range adj[j] {
				for _, k := range adj[j][x+1:] {
					tr := []int{i, j, k}
					slices.Sort(tr)
					key := [3]int{tr[0], tr[1], tr[2]}
					if !seen[key] {
						seen[key] = true
						triples = append(triples, tr)
					}
				}
			}
		}
		slices.SortFunc(triples, slices.Compare)
		sets = append(sets, triples...)
	}
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
