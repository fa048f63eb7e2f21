package stationary

import (
	"fmt"
	"math/bits"
	"slices"
	"sort"
	"strings"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/lattice"
)

// System is the linear constraint system of stationarity for a list of
// terms: one row per probe operator A, with entries
//
//	M[A, p] = sum over terms k of parameter p of s(A, k) <P(A, k)>,
//
// where A E_k = ±i P(A, k) for anticommuting Pauli strings and
// s(A, k) = ∓1 the sign that makes Tr(rho [A, H]) / 2i = sum_p theta_p
// M[A, p] real. A System holds no data: it lists which correlators the
// rows need (Strings) and how they enter; Matrix fills in values.
type System struct {
	n      int
	terms  []lattice.Term
	params *fit.Params

	// Probes are the operators A, one per row, as terms (Coeff unused).
	Probes []lattice.Term
	// Strings are the Pauli strings whose expectations the rows use,
	// followed by those of the terms themselves that are not already
	// listed (the thermal match and the consistency check use them).
	Strings []lattice.Term
	// TermString[k] is the index in Strings of term k.
	TermString []int

	// FarPairs reports whether pairs of sites at distance two are probed
	// (SystemOptions.FarPairs, or by default for real models).
	FarPairs bool

	rowStart []int
	ents     []entry
}

// entry is one nonzero of a row: sign times the expectation of string
// str, added to the column of parameter param (term is the term behind it).
type entry struct {
	param, str, term int32
	sign             float64
}

// NewSystem builds the stationarity constraints of terms on n qubits.
// Probes are every Pauli letter on every site of a term's support and
// every pair of letters on every pair of sites that share a term; a
// probe that commutes with every term gives no row and is left out.
// Terms sharing a Group share one parameter (fit.NewParams). Terms must
// be canonical and distinct (lattice.CheckTerms).
func NewSystem(n int, terms []lattice.Term) (*System, error) {
	return NewSystemWith(n, terms, SystemOptions{})
}

// SystemOptions choose the probes.
type SystemOptions struct {
	// FarPairs adds probes on pairs of sites at distance two (a common
	// neighbour). Models with symmetries (real, parity- or U(1)-
	// conserving) zero most nearest-neighbour rows, and the extra rows
	// resolve directions they leave open; otherwise they mostly add
	// correlated noise (the weights treat rows as independent), so they
	// are off by default. Their strings are still within covering:3.
	FarPairs bool
	// NearOnly turns off the far pairs that real models get by default
	// (see NewSystemWith).
	NearOnly bool
	// PairDistance, when above 2, probes every pair of sites within that
	// distance on the graph of the terms (1: pairs sharing a term, 2: the
	// far pairs). Their commutators stay 3-local, so covering:3 bases
	// still measure every string.
	PairDistance int
}

// isReal reports whether every term is a real matrix (an even number of
// Y letters): then the Gibbs state is real, every string with an odd
// number of Y has zero expectation, and only probes with an odd number of
// Y give a row with signal.
func isReal(terms []lattice.Term) bool {
	for _, t := range terms {
		if strings.Count(t.Pauli, "Y")%2 == 1 {
			return false
		}
	}
	return true
}

// NewSystemWith is NewSystem with a choice of probes.
func NewSystemWith(n int, terms []lattice.Term, opt SystemOptions) (*System, error) {
	if err := lattice.CheckTerms(n, terms); err != nil {
		return nil, err
	}
	if len(terms) == 0 {
		return nil, fmt.Errorf("stationary: no terms")
	}
	sys := &System{n: n, terms: terms, params: fit.NewParams(terms), TermString: make([]int, len(terms))}

	// Terms by site, sites of terms, pairs of sites sharing a term.
	bySite := map[int][]int{}
	pairSet := map[[2]int]bool{}
	for k, t := range terms {
		for i, s := range t.Sites {
			bySite[s] = append(bySite[s], k)
			for _, u := range t.Sites[i+1:] {
				pairSet[[2]int{s, u}] = true
			}
		}
	}
	// Pairs at distance two (a common neighbour): symmetric models (real,
	// parity- or U(1)-conserving ones) give too few independent rows from
	// nearest-neighbour probes alone.
	adj := map[int][]int{}
	for p := range pairSet {
		adj[p[0]] = append(adj[p[0]], p[1])
		adj[p[1]] = append(adj[p[1]], p[0])
	}
	// Real models (XXZ, TFIM, Heisenberg with real fields) keep signal
	// only in probes with an odd number of Y: on a 3x3 XXZ lattice that is
	// 57 rows for 54 parameters, and the second-smallest singular value
	// of the exact constraint matrix is 7e-4 of the largest, so shot noise
	// turns the direction (TestRealModelsResolvedExactly). Far pairs raise
	// it to about 2e-2; they are on for real models unless NearOnly.
	sys.FarPairs = opt.FarPairs || (!opt.NearOnly && isReal(terms))
	far := map[[2]int]bool{}
	for _, nb := range adj {
		if !sys.FarPairs {
			break
		}
		for x, a := range nb {
			for _, b := range nb[x+1:] {
				p := [2]int{min(a, b), max(a, b)}
				if !pairSet[p] {
					far[p] = true
				}
			}
		}
	}
	if opt.PairDistance > 2 {
		sys.FarPairs = true
		for s := range adj {
			dist := map[int]int{s: 0}
			queue := []int{s}
			for len(queue) > 0 {
				a := queue[0]
				queue = queue[1:]
				if dist[a] == opt.PairDistance {
					continue
				}
				for _, b := range adj[a] {
					if _, seen := dist[b]; !seen {
						dist[b] = dist[a] + 1
						queue = append(queue, b)
					}
				}
			}
			for b, d := range dist {
				if d >= 2 && s < b {
					far[[2]int{s, b}] = true
				}
			}
		}
	}
	for p := range far {
		pairSet[p] = true
	}
	sites := make([]int, 0, len(bySite))
	for s := range bySite {
		sites = append(sites, s)
	}
	sort.Ints(sites)
	pairs := make([][2]int, 0, len(pairSet))
	for p := range pairSet {
		pairs = append(pairs, p)
	}
	sort.Slice(pairs, func(a, b int) bool {
		if pairs[a][0] != pairs[b][0] {
			return pairs[a][0] < pairs[b][0]
		}
		return pairs[a][1] < pairs[b][1]
	})

	index := map[string]int32{}
	intern := func(t lattice.Term) int32 {
		key := t.Key()
		if j, ok := index[key]; ok {
			return j
		}
		j := int32(len(sys.Strings))
		index[key] = j
		sys.Strings = append(sys.Strings, t)
		return j
	}
	sys.rowStart = append(sys.rowStart, 0)
	addProbe := func(letters string, psites []int) error {
		probe := lattice.Term{Pauli: letters, Sites: psites}
		var near []int
		for _, s := range psites {
			near = append(near, bySite[s]...)
		}
		slices.Sort(near)
		near = slices.Compact(near)
		start := len(sys.ents)
		for _, k := range near {
			e, ok, err := commutatorEntry(probe, terms[k])
			if err != nil {
				return err
			}
			if !ok {
				continue
			}
			sys.ents = append(sys.ents, entry{param: int32(sys.params.Of[k]), str: intern(e.str), term: int32(k), sign: e.sign})
		}
		if len(sys.ents) > start {
			sys.Probes = append(sys.Probes, probe)
			sys.rowStart = append(sys.rowStart, len(sys.ents))
		}
		return nil
	}
	const pauliLetters = "XYZ"
	for _, s := range sites {
		for _, a := range pauliLetters {
			if err := addProbe(string(a), []int{s}); err != nil {
				return nil, err
			}
		}
	}
	for _, p := range pairs {
		for _, a := range pauliLetters {
			for _, b := range pauliLetters {
				if err := addProbe(string([]rune{a, b}), []int{p[0], p[1]}); err != nil {
					return nil, err
				}
			}
		}
	}
	for k, t := range terms {
		sys.TermString[k] = int(intern(lattice.Term{Pauli: t.Pauli, Sites: t.Sites}))
	}
	return sys, nil
}

// commutator is the entry one term gives a probe's row.
type commutator struct {
	str  lattice.Term
	sign float64
}

// commutatorEntry returns P and s with [A, E] = 2 i s P, or ok false when
// A and E commute. Both are mapped to local qubits 0..3 (cluster's Pauli
// strings address at most 64 qubits; lattices are larger).
func commutatorEntry(a, e lattice.Term) (commutator, bool, error) {
	local := slices.Concat(a.Sites, e.Sites)
	slices.Sort(local)
	local = slices.Compact(local)
	pos := func(sites []int) []int {
		out := make([]int, len(sites))
		for i, s := range sites {
			out[i], _ = slices.BinarySearch(local, s)
		}
		return out
	}
	pa, err := cluster.ParsePauli(a.Pauli, pos(a.Sites))
	if err != nil {
		return commutator{}, false, err
	}
	pe, err := cluster.ParsePauli(e.Pauli, pos(e.Sites))
	if err != nil {
		return commutator{}, false, err
	}
	if pa.Commutes(pe) {
		return commutator{}, false, nil
	}
	prod, k := pa.Mul(pe)
	// [A, E] = 2 A E = 2 i^k P with k odd; divided by 2i: i^(k-1) = ±1.
	sign := 1.0
	if k == 3 {
		sign = -1
	}
	var qs, gs []int
	for m := prod.Support(); m != 0; m &= m - 1 {
		q := bits.TrailingZeros64(m)
		qs = append(qs, q)
		gs = append(gs, local[q])
	}
	return commutator{str: lattice.Term{Pauli: prod.Letters(qs), Sites: gs}, sign: sign}, true, nil
}

// NumQubits returns the number of qubits.
func (s *System) NumQubits() int { return s.n }

// Terms returns the terms, aligned with coefficient vectors.
func (s *System) Terms() []lattice.Term { return s.terms }

// Params returns the term-to-parameter map (tied groups).
func (s *System) Params() *fit.Params { return s.params }

// NumRows returns the number of constraints.
func (s *System) NumRows() int { return len(s.Probes) }

// NumEntries returns the number of stored row entries.
func (s *System) NumEntries() int { return len(s.ents) }

// row returns the entries of row a.
func (s *System) row(a int) []entry { return s.ents[s.rowStart[a]:s.rowStart[a+1]] }

// Residuals stores in dst[a] = sum_k lambda_k s(a,k) <P(a,k)> for the
// given string expectations (aligned with Strings) and term coefficients:
// Tr(rho [A_a, H]) / 2i, zero for every row when rho is stationary under H.
func (s *System) Residuals(dst, values, lambda []float64) []float64 {
	if len(values) != len(s.Strings) || len(lambda) != len(s.terms) {
		panic(fmt.Sprintf("stationary: Residuals given %d values for %d strings and %d coefficients for %d terms",
			len(values), len(s.Strings), len(lambda), len(s.terms)))
	}
	dst = slices.Grow(dst[:0], s.NumRows())[:s.NumRows()]
	for a := range dst {
		var sum float64
		for _, e := range s.row(a) {
			sum += e.sign * lambda[e.term] * values[e.str]
		}
		dst[a] = sum
	}
	return dst
}
