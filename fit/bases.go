package fit

import (
	"fmt"
	"math/rand/v2"
	"slices"
	"sort"
	"strconv"
	"strings"

	"warmfit/lattice"
)

// A product basis is a string of one letter X, Y or Z per qubit; a shot
// in it serves every term whose letters it shows on the term's support.

// Serves reports whether a shot in basis measures term t.
func Serves(basis string, t lattice.Term) bool {
	for i, s := range t.Sites {
		if s >= len(basis) || basis[s] != t.Pauli[i] {
			return false
		}
	}
	return true
}

// CoveringBases returns a small set of product bases on n qubits such that
// every term is served by at least one of them.
//
// Construction: colour the interaction graph (sites joined when a term
// contains both) with DSatur, so the sites of every term get distinct
// colours. A map from colours to letters then gives a basis, and a term
// is served when the map sends its colours to its letters. Sets of maps
// come from: greedy set cover over all 3^c maps (c ≤ 6 colours); the
// 9-row orthogonal array OA(9,4,3,2) (two-site terms, c ≤ 4); and maps
// built greedily letter by letter. Each set is pruned (dropping, last
// first, any basis whose terms the others also serve) and the smallest
// is returned. The result is deterministic.
//
// Lower bounds (see CoveringLowerBound): a basis shows one letter string
// on any set of sites, so at least as many bases are needed as there are
// distinct letter strings that the terms ask for on one site set. Uniform
// bases (all X, all Y, all Z) serve any model whose terms each use one
// letter (XXZ with fields: 3 bases, optimal when X, Y and Z all occur on
// one bond); all nine two-site terms on a bond need 9, which this
// construction reaches on bipartite interaction graphs (2 colours, 9 maps).
func CoveringBases(n int, terms []lattice.Term) ([]string, error) {
	if n <= 0 {
		return nil, fmt.Errorf("number of qubits %d must be positive", n)
	}
	if err := lattice.CheckTerms(n, terms); err != nil {
		return nil, err
	}
	if len(terms) == 0 {
		return nil, nil
	}
	colour, ncol := dsaturColouring(termAdjacency(n, terms))

	// A requirement is a partial map colour -> letter ('.' = free).
	reqSet := map[string]bool{}
	for _, t := range terms {
		req := []byte(strings.Repeat(".", ncol))
		for i, s := range t.Sites {
			req[colour[s]] = t.Pauli[i]
		}
		reqSet[string(req)] = true
	}
	reqs := make([]string, 0, len(reqSet))
	for r := range reqSet {
		reqs = append(reqs, r)
	}
	sort.Strings(reqs)

	// Several constructions; the smallest result after pruning wins (the
	// first on ties), so the choice is deterministic.
	var candidates [][]string
	if ncol <= maxEnumeratedColours {
		candidates = append(candidates, coverByEnumeration(ncol, reqs))
	}
	if oa := orthogonalArrayMaps(ncol, terms); oa != nil {
		candidates = append(candidates, oa)
	}
	candidates = append(candidates, coverGreedyRows(ncol, reqs, 1), coverGreedyRows(ncol, reqs, 64))
	var bases []string
	for _, maps := range candidates {
		b := make([]string, len(maps))
		for i, m := range maps {
			site := make([]byte, n)
			for s := range site {
				site[s] = m[colour[s]]
			}
			b[i] = string(site)
		}
		b = pruneBases(b, terms)
		if bases == nil || len(b) < len(bases) {
			bases = b
		}
	}
	for k, t := range terms {
		if !slices.ContainsFunc(bases, func(b string) bool { return Serves(b, t) }) {
			return nil, fmt.Errorf("internal error: covering bases miss term %d (%s)", k, t.Key())
		}
	}
	return bases, nil
}

const letters = "XYZ"

// maxEnumeratedColours bounds the exhaustive candidate list (3^6 = 729
// maps); beyond it maps are built greedily.
const maxEnumeratedColours = 6

// matches reports whether full map m satisfies partial map req.
func matches(m, req string) bool {
	for i := 0; i < len(req); i++ {
		if req[i] != '.' && req[i] != m[i] {
			return false
		}
	}
	return true
}

// coverByEnumeration runs greedy set cover over all 3^c maps, taking the
// first best map (in the order of uniform maps first, then base-3 order)
// until every requirement is met.
func coverByEnumeration(c int, reqs []string) []string {
	total := 1
	for range c {
		total *= 3
	}
	cands := make([]string, 0, total)
	for _, l := range []byte(letters) {
		cands = append(cands, strings.Repeat(string(l), c))
	}
	for code := 0; code < total; code++ {
		m := make([]byte, c)
		x := code
		for i := range m {
			m[i] = letters[x%3]
			x /= 3
		}
		s := string(m)
		if strings.Count(s, s[:1]) == c {
			continue // uniform, already listed
		}
		cands = append(cands, s)
	}
	covered := make([]bool, len(reqs))
	left := len(reqs)
	var out []string
	for left > 0 {
		best, bestGain := -1, 0
		for i, m := range cands {
			gain := 0
			for r, req := range reqs {
				if !covered[r] && matches(m, req) {
					gain++
				}
			}
			if gain > bestGain {
				best, bestGain = i, gain
			}
		}
		for r, req := range reqs {
			if !covered[r] && matches(cands[best], req) {
				covered[r] = true
				left--
			}
		}
		out = append(out, cands[best])
	}
	return out
}

// coverGreedyRows builds maps one at a time. A candidate map starts from
// an unmet requirement and fixes the free colours in order, each to the
// letter that keeps the most unmet requirements satisfiable; of the
// candidates seeded by the first maxSeeds unmet requirements, the one
// meeting the most is kept.
func coverGreedyRows(c int, reqs []string, maxSeeds int) []string {
	covered := make([]bool, len(reqs))
	left := len(reqs)
	gainOf := func(m string) int {
		g := 0
		for r, req := range reqs {
			if !covered[r] && matches(m, req) {
				g++
			}
		}
		return g
	}
	var out []string
	for left > 0 {
		best, bestGain := "", 0
		seeds := 0
		for first := range reqs {
			if covered[first] || seeds == maxSeeds {
				continue
			}
			seeds++
			row := []byte(reqs[first])
			for i := range row {
				if row[i] != '.' {
					continue
				}
				pick, pickGain := byte('Z'), -1
				for _, l := range []byte(letters) {
					row[i] = l
					gain := 0
					for r, req := range reqs {
						if !covered[r] && compatible(row, req) {
							gain++
						}
					}
					if gain > pickGain {
						pick, pickGain = l, gain
					}
				}
				row[i] = pick
			}
			if g := gainOf(string(row)); g > bestGain {
				best, bestGain = string(row), g
			}
		}
		for r, req := range reqs {
			if !covered[r] && matches(best, req) {
				covered[r] = true
				left--
			}
		}
		out = append(out, best)
	}
	return out
}

// orthogonalArrayMaps returns the 9 maps (a, b, a+b, a+2b) mod 3 over
// a, b in {0, 1, 2}, letters X, Y, Z for 0, 1, 2: an orthogonal array
// OA(9, 4, 3, 2) (Bush 1952; the rows of two orthogonal Latin squares of
// order 3), in which every pair of columns shows every letter pair once.
// It serves any terms on at most two sites with at most 4 colours, in
// 9 bases, the lower bound when one bond carries all nine letter pairs.
// It returns nil when terms have more sites or there are more colours.
func orthogonalArrayMaps(c int, terms []lattice.Term) []string {
	if c > 4 {
		return nil
	}
	for _, t := range terms {
		if len(t.Sites) > 2 {
			return nil
		}
	}
	var out []string
	for a := 0; a < 3; a++ {
		for b := 0; b < 3; b++ {
			row := []byte{letters[a], letters[b], letters[(a+b)%3], letters[(a+2*b)%3]}
			out = append(out, string(row[:c]))
		}
	}
	return out
}

// compatible reports whether partial maps row and req agree where both
// are fixed.
func compatible(row []byte, req string) bool {
	for i := 0; i < len(req); i++ {
		if req[i] != '.' && row[i] != '.' && req[i] != row[i] {
			return false
		}
	}
	return true
}

// pruneBases drops, last first, every basis whose terms are all served by
// the bases kept.
func pruneBases(bases []string, terms []lattice.Term) []string {
	servedBy := make([]int, len(terms))
	serve := make([][]bool, len(bases))
	for i, b := range bases {
		serve[i] = make([]bool, len(terms))
		for k, t := range terms {
			if Serves(b, t) {
				serve[i][k] = true
				servedBy[k]++
			}
		}
	}
	keep := make([]bool, len(bases))
	for i := range keep {
		keep[i] = true
	}
	for i := len(bases) - 1; i >= 0; i-- {
		needed := false
		for k := range terms {
			if serve[i][k] && servedBy[k] == 1 {
				needed = true
				break
			}
		}
		if !needed {
			keep[i] = false
			for k := range terms {
				if serve[i][k] {
					servedBy[k]--
				}
			}
		}
	}
	var out []string
	for i, b := range bases {
		if keep[i] {
			out = append(out, b)
		}
	}
	return out
}

// dsaturColouring colours a graph so that neighbours differ, choosing
// next the uncoloured vertex with the most distinct neighbour colours
// (then the highest degree, then the lowest index) and giving it the
// smallest free colour (Brélaz 1979). It is optimal on bipartite graphs.
func dsaturColouring(adj [][]int) (colour []int, ncolours int) {
	n := len(adj)
	colour = make([]int, n)
	for i := range colour {
		colour[i] = -1
	}
	seen := make([]map[int]bool, n) // colours among coloured neighbours
	for i := range seen {
		seen[i] = map[int]bool{}
	}
	for range n {
		best := -1
		for v := 0; v < n; v++ {
			if colour[v] >= 0 {
				continue
			}
			if best < 0 || len(seen[v]) > len(seen[best]) ||
				(len(seen[v]) == len(seen[best]) && len(adj[v]) > len(adj[best])) {
				best = v
			}
		}
		c := 0
		for seen[best][c] {
			c++
		}
		colour[best] = c
		ncolours = max(ncolours, c+1)
		for _, u := range adj[best] {
			if colour[u] < 0 {
				seen[u][c] = true
			}
		}
	}
	return colour, ncolours
}

// CoveringLowerBound returns a lower bound on the number of product bases
// that serve every term: the largest number of distinct letter strings
// the terms ask for on one site set (single sites, pairs of sites and
// whole supports, each counting the letters of every term containing
// them). A basis shows one string per site set, so it meets one of them.
func CoveringLowerBound(terms []lattice.Term) int {
	asked := map[string]map[string]bool{}
	note := func(t lattice.Term, idx []int) {
		sites := make([]int, len(idx))
		lets := make([]byte, len(idx))
		for i, j := range idx {
			sites[i], lets[i] = t.Sites[j], t.Pauli[j]
		}
		key := lattice.SitesString(sites)
		if asked[key] == nil {
			asked[key] = map[string]bool{}
		}
		asked[key][string(lets)] = true
	}
	for _, t := range terms {
		for i := range t.Sites {
			note(t, []int{i})
			for j := i + 1; j < len(t.Sites); j++ {
				note(t, []int{i, j})
			}
		}
		if len(t.Sites) > 2 {
			all := make([]int, len(t.Sites))
			for i := range all {
				all[i] = i
			}
			note(t, all)
		}
	}
	bound := 0
	for _, set := range asked {
		bound = max(bound, len(set))
	}
	return bound
}

// RandomBases returns count bases on n qubits with independent uniformly
// random letters, from a PCG generator seeded with seed (deterministic).
func RandomBases(n, count int, seed uint64) []string {
	rng := rand.New(rand.NewPCG(seed, 0x5851f42d4c957f2d))
	out := make([]string, count)
	b := make([]byte, n)
	for i := range out {
		for s := range b {
			b[s] = letters[rng.IntN(3)]
		}
		out[i] = string(b)
	}
	return out
}

// ShotsPerTerm returns, for each term, the number of shots that serve it
// when every basis is measured shotsPerBasis times.
func ShotsPerTerm(bases []string, shotsPerBasis int64, terms []lattice.Term) []int64 {
	out := make([]int64, len(terms))
	for k, t := range terms {
		for _, b := range bases {
			if Serves(b, t) {
				out[k] += shotsPerBasis
			}
		}
	}
	return out
}

// SchemeBases turns a measurement-scheme name into product bases for
// terms on n qubits: "covering" (CoveringBases), "covering:3" (covering
// bases for the terms and every Pauli string on connected sets of up to
// three sites, LocalStrings: what the stationarity method of
// fit/stationary needs) or "random:K" (K random bases, RandomBases with
// seed). It also returns a description of the scheme for reports.
func SchemeBases(scheme string, n int, terms []lattice.Term, seed uint64) ([]string, string, error) {
	switch {
	case scheme == "covering":
		b, err := CoveringBases(n, terms)
		return b, scheme, err
	case scheme == "covering:3":
		b, err := localCoveringBases(n, terms, 3)
		return b, scheme, err
	case strings.HasPrefix(scheme, "random:"):
		k, err := strconv.Atoi(strings.TrimPrefix(scheme, "random:"))
		if err != nil || k < 1 {
			return nil, "", fmt.Errorf("bases %q: want random:K with K a positive integer", scheme)
		}
		if int64(k)*int64(n) > MaxBasisLetters {
			return nil, "", fmt.Errorf("bases %q: %d bases of %d letters would take %d MB; at most %d letters in all (%d bases on this system)",
				scheme, k, n, int64(k)*int64(n)>>20, int64(MaxBasisLetters), MaxBasisLetters/int64(max(n, 1)))
		}
		return RandomBases(n, k, seed), fmt.Sprintf("%s (seed %d)", scheme, seed), nil
	}
	return nil, "", fmt.Errorf("bases %q: want covering, covering:3 or random:K", scheme)
}

// MaxBasisLetters bounds random:K before anything is allocated: K bases
// of n letters hold K n bytes, and 2^28 (256 MB) is more than any
// experiment measures.
const MaxBasisLetters int64 = 1 << 28
