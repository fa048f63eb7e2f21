package fit

import (
	"fmt"
	"slices"

	"warmfit/lattice"
)

// CovarianceOptions chooses which covariances between term estimates are
// kept and which terms may go without data.
//
// Two estimates are correlated when some shots serve both (a shot in a
// product basis serves every term whose letters the basis shows on its
// support). Tracking every such pair costs O(terms²) per shot. Pairs are
// therefore kept only when their supports lie within graph distance
// Distance of each other; farther pairs are treated as independent. Their
// shot-level covariance <P_a P_b> - <P_a><P_b> is a connected correlation
// between separated regions, which decays with distance and vanishes as
// the temperature grows (at beta = 0 distinct Pauli strings are
// uncorrelated), so the omission is small where the expansion is trusted.
// The kept matrix is an estimate: it is not guaranteed to be positive
// semi-definite when pairs are dropped or terms are served by different
// shot sets.
type CovarianceOptions struct {
	// Distance is the largest graph distance between two supports whose
	// covariance is kept: 0 keeps pairs that share a site, 1 also pairs
	// joined by an edge, and so on. Negative keeps variances only. The
	// zero value is 0; DefaultCovarianceOptions uses 1.
	Distance int
	// AllPairs keeps every pair that can share shots, whatever the
	// distance (O(terms²) memory; for small systems and tests).
	AllPairs bool
	// Neighbors returns the sites adjacent to a site (for example a
	// lattice's neighbour list). When nil, two sites are adjacent when
	// some term contains both.
	Neighbors func(site int) []int
	// AllowMissing lists term indices that may lack usable data (for
	// instance because they share a fitted coefficient with measured
	// terms); their estimates are NaN and they are listed in
	// Estimates.Missing instead of causing an error.
	AllowMissing []int
}

// DefaultCovarianceOptions keeps covariances of terms whose supports
// share a site or are joined by an edge.
func DefaultCovarianceOptions() CovarianceOptions { return CovarianceOptions{Distance: 1} }

// pairRef names the partner b of a term a < b and the index of the pair.
type pairRef struct {
	other int32
	pair  int32
}

// lettersAgree reports whether two terms ask for the same letter on every
// shared site: only then can one product basis serve both.
func lettersAgree(a, b lattice.Term) bool {
	i, j := 0, 0
	for i < len(a.Sites) && j < len(b.Sites) {
		switch {
		case a.Sites[i] < b.Sites[j]:
			i++
		case a.Sites[i] > b.Sites[j]:
			j++
		default:
			if a.Pauli[i] != b.Pauli[j] {
				return false
			}
			i++
			j++
		}
	}
	return true
}

// termAdjacency joins sites that appear together in a term.
func termAdjacency(n int, terms []lattice.Term) [][]int {
	adj := make([][]int, n)
	for _, t := range terms {
		for i, a := range t.Sites {
			for _, b := range t.Sites[i+1:] {
				adj[a] = append(adj[a], b)
				adj[b] = append(adj[b], a)
			}
		}
	}
	for i := range adj {
		slices.Sort(adj[i])
		adj[i] = slices.Compact(adj[i])
	}
	return adj
}

// covariancePairs lists, for every term a, the terms b > a whose
// covariance opt keeps, numbering the pairs 0..npairs-1 in order of a
// then b. Pairs whose letters clash on a shared site never share a shot
// and are left out.
func covariancePairs(n int, terms []lattice.Term, opt CovarianceOptions) (pairsOf [][]pairRef, npairs int, err error) {
	pairsOf = make([][]pairRef, len(terms))
	if !opt.AllPairs && opt.Distance < 0 {
		return pairsOf, 0, nil
	}
	add := func(a, b int) {
		pairsOf[a] = append(pairsOf[a], pairRef{other: int32(b), pair: int32(npairs)})
		npairs++
	}
	if opt.AllPairs {
		for a := range terms {
			for b := a + 1; b < len(terms); b++ {
				if lettersAgree(terms[a], terms[b]) {
					add(a, b)
				}
			}
		}
		return pairsOf, npairs, nil
	}

	neighbors := opt.Neighbors
	if neighbors == nil {
		adj := termAdjacency(n, terms)
		neighbors = func(s int) []int { return adj[s] }
	}
	termsAt := make([][]int32, n)
	for k, t := range terms {
		for _, s := range t.Sites {
			termsAt[s] = append(termsAt[s], int32(k))
		}
	}
	siteStamp := make([]int, n)
	termStamp := make([]int, len(terms))
	var ball, frontier, next, partners []int
	for a, t := range terms {
		stamp := a + 1
		ball, frontier = ball[:0], frontier[:0]
		for _, s := range t.Sites {
			siteStamp[s] = stamp
			ball = append(ball, s)
			frontier = append(frontier, s)
		}
		for d := 0; d < opt.Distance && len(frontier) > 0; d++ {
			next = next[:0]
			for _, s := range frontier {
				for _, u := range neighbors(s) {
					if u < 0 || u >= n {
						return nil, 0, fmt.Errorf("neighbour %d of site %d outside 0..%d", u, s, n-1)
					}
					if siteStamp[u] != stamp {
						siteStamp[u] = stamp
						ball = append(ball, u)
						next = append(next, u)
					}
				}
			}
			frontier, next = next, frontier
		}
		partners = partners[:0]
		for _, s := range ball {
			for _, b := range termsAt[s] {
				if int(b) > a && termStamp[b] != stamp {
					termStamp[b] = stamp
					partners = append(partners, int(b))
				}
			}
		}
		slices.Sort(partners)
		for _, b := range partners {
			if lettersAgree(t, terms[b]) {
				add(a, b)
			}
		}
	}
	return pairsOf, npairs, nil
}
