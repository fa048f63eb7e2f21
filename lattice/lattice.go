package lattice

import (
	"fmt"
	"slices"
	"sort"
	"sync"
)

// Boundary is the boundary condition of a built lattice.
type Boundary int

// The open boundary is called OpenBoundary because the name Open belongs
// to the function that opens a lattice from a specification or file.
const (
	OpenBoundary Boundary = iota // the zero value
	Periodic
)

// String returns "open" or "periodic".
func (b Boundary) String() string {
	switch b {
	case OpenBoundary:
		return "open"
	case Periodic:
		return "periodic"
	}
	return fmt.Sprintf("Boundary(%d)", int(b))
}

// Spec describes a lattice: a named kind with sizes in unit cells, or a
// custom graph (Kind "graph", Size holding the number of sites).
type Spec struct {
	Kind     string // chain, ladder, square, triangular, honeycomb, kagome, cubic or graph
	Size     []int  // unit cells along each axis
	Boundary Boundary
	Shells   int // 1: nearest neighbours interact; 2: next-nearest too (0 means 1)
}

// Bond joins sites I < J.
type Bond struct{ I, J int }

// Lattice is a set of sites with coordinates and neighbour shells. Its
// interaction graph (NN bonds, plus NNN bonds when Spec.Shells is 2)
// decides which site sets are connected clusters.
//
// Make lattices with Build, Open, FromGraph or DecodeLatticeJSON: they
// set up the interaction graph the methods below use. The fields are for
// reading; changing them after construction leaves that graph stale.
// All methods are safe for concurrent use, and enumerations may be
// nested (a visit function may start another enumeration).
type Lattice struct {
	Spec   Spec
	Coords [][]float64 // one point per site, 2 or 3 components
	NN     []Bond      // nearest-neighbour bonds
	NNN    []Bond      // next-nearest-neighbour bonds

	adj [][]int // interaction-graph neighbours of each site, sorted

	// Compressed copy of adj for the cluster enumeration.
	nbrStart []int32
	nbr      []int32

	// Scratch state of the cluster enumeration, one per goroutine.
	scratch *sync.Pool
}

// MaxSites bounds the number of sites of a lattice. Specifications and
// graph files are refused above it before anything is built: a lattice
// takes about 320 bytes a site (square:1024x1024, 2^20 sites, peaks at
// 330 MB), so the ceiling keeps the largest lattice near a third of a
// gigabyte, well below any machine the expansion runs on, and far above
// any array an experiment holds. (Cluster storage uses 32-bit indices.)
const MaxSites = 1 << 20

// MaxFileBytes bounds the size of a lattice or model file read by
// ReadFile (and by the model package): larger files, and unbounded
// streams such as /dev/zero, are refused after reading this much, before
// the document is held in memory whole (reading takes up to twice this
// much while the buffer grows). 128 MiB holds some 1.5 million terms.
const MaxFileBytes = 128 << 20

// NumSites returns the number of sites.
func (l *Lattice) NumSites() int { return len(l.Coords) }

// Dim returns the number of coordinate components per site: 2 for the
// planar kinds (a chain or ladder lies along x in the plane), 3 for cubic,
// and 2 or 3 for a custom graph as given in its file.
func (l *Lattice) Dim() int {
	if len(l.Coords) == 0 {
		return 0
	}
	return len(l.Coords[0])
}

// shells returns Spec.Shells with the default applied.
func (l *Lattice) shells() int {
	if l.Spec.Shells == 2 {
		return 2
	}
	return 1
}

// InteractionBonds returns the bonds of the interaction graph: the NN
// bonds, followed by the NNN bonds when Spec.Shells is 2. The slice is
// freshly allocated.
func (l *Lattice) InteractionBonds() []Bond {
	out := make([]Bond, 0, len(l.NN)+len(l.NNN))
	out = append(out, l.NN...)
	if l.shells() == 2 {
		out = append(out, l.NNN...)
	}
	return out
}

// Neighbors returns the interaction-graph neighbours of site i in
// ascending order. The slice is shared with the lattice: do not modify it.
func (l *Lattice) Neighbors(i int) []int { return l.adj[i] }

// Degree returns the number of interaction-graph neighbours of site i.
func (l *Lattice) Degree(i int) int { return len(l.adj[i]) }

// finish builds the interaction graph from the bonds. Every constructor
// calls it last.
func (l *Lattice) finish() {
	n := l.NumSites()
	deg := make([]int, n)
	bonds := l.InteractionBonds()
	for _, b := range bonds {
		deg[b.I]++
		deg[b.J]++
	}
	flat := make([]int, 2*len(bonds))
	l.adj = make([][]int, n)
	pos := 0
	for i := range l.adj {
		l.adj[i] = flat[pos : pos : pos+deg[i]]
		pos += deg[i]
	}
	for _, b := range bonds {
		l.adj[b.I] = append(l.adj[b.I], b.J)
		l.adj[b.J] = append(l.adj[b.J], b.I)
	}
	l.nbrStart = make([]int32, n+1)
	l.nbr = make([]int32, 0, len(flat))
	for i, a := range l.adj {
		sort.Ints(a)
		for _, j := range a {
			l.nbr = append(l.nbr, int32(j))
		}
		l.nbrStart[i+1] = int32(len(l.nbr))
	}
	nbrStart, nbr := l.nbrStart, l.nbr
	l.scratch = &sync.Pool{New: func() any { return newEnumerator(nbrStart, nbr) }}
}

// sortedSet returns a sorted copy of sites and whether all of them are
// distinct and in [0, n).
func sortedSet(sites []int, n int) ([]int, bool) {
	s := slices.Clone(sites)
	slices.Sort(s)
	for k, v := range s {
		if v < 0 || v >= n || (k > 0 && s[k-1] == v) {
			return s, false
		}
	}
	return s, true
}

// Connected reports whether sites, a non-empty set of distinct sites,
// induce a connected subgraph of the interaction graph. It returns false
// for an empty set and for repeated or out-of-range sites.
func (l *Lattice) Connected(sites []int) bool {
	set, ok := sortedSet(sites, l.NumSites())
	if !ok || len(set) == 0 {
		return false
	}
	seen := make([]bool, len(set))
	seen[0] = true
	queue := []int{0}
	reached := 1
	for len(queue) > 0 {
		k := queue[len(queue)-1]
		queue = queue[:len(queue)-1]
		for _, j := range l.adj[set[k]] {
			if m, in := slices.BinarySearch(set, j); in && !seen[m] {
				seen[m] = true
				reached++
				queue = append(queue, m)
			}
		}
	}
	return reached == len(set)
}

// Components returns the connected components of the interaction graph,
// each sorted ascending, ordered by their smallest site. A lattice built
// from a specification has one; a custom graph may have several, which
// callers should report.
func (l *Lattice) Components() [][]int {
	n := l.NumSites()
	comp := make([]int, n)
	for i := range comp {
		comp[i] = -1
	}
	var out [][]int
	for s := 0; s < n; s++ {
		if comp[s] >= 0 {
			continue
		}
		id := len(out)
		members := []int{s}
		comp[s] = id
		for k := 0; k < len(members); k++ {
			for _, j := range l.adj[members[k]] {
				if comp[j] < 0 {
					comp[j] = id
					members = append(members, j)
				}
			}
		}
		slices.Sort(members)
		out = append(out, members)
	}
	return out
}

// Perimeter returns the number of sites outside the set that are
// interaction-graph neighbours of at least one site in it. It panics on
// repeated or out-of-range sites.
func (l *Lattice) Perimeter(sites []int) int {
	set, ok := sortedSet(sites, l.NumSites())
	if !ok {
		panic(fmt.Sprintf("lattice: Perimeter of invalid site set %v", sites))
	}
	var outside []int
	for _, s := range set {
		for _, j := range l.adj[s] {
			if _, in := slices.BinarySearch(set, j); !in {
				outside = append(outside, j)
			}
		}
	}
	slices.Sort(outside)
	return len(slices.Compact(outside))
}

// WithShells returns the lattice with 1 or 2 neighbour shells in its
// interaction graph: l itself when that is already so, otherwise a
// rebuilt copy (which may be refused, as a *SpecError, when a periodic
// size is too small for two shells).
func (l *Lattice) WithShells(shells int) (*Lattice, error) {
	if shells != 1 && shells != 2 {
		return nil, specErrorf(l.Spec.String(), "shells %d: want 1 or 2", shells)
	}
	if l.shells() == shells {
		return l, nil
	}
	if l.Spec.Kind == "graph" {
		return FromGraph(l.Coords, l.NN, shells)
	}
	spec := l.Spec
	spec.Shells = shells
	return Build(spec)
}

// SameGraph reports whether l and o are the same lattice for a model:
// the same number of sites and the same nearest- and next-nearest-
// neighbour bonds in the same order (so the same site numbering), hence
// the same interaction graph. Coordinates, which serve only for drawing,
// are not compared. Two models may be compared term by term only when
// their lattices are the same graph.
func (l *Lattice) SameGraph(o *Lattice) bool {
	if l.NumSites() != o.NumSites() || l.shells() != o.shells() || len(l.NN) != len(o.NN) || len(l.NNN) != len(o.NNN) {
		return false
	}
	for k, b := range l.NN {
		if o.NN[k] != b {
			return false
		}
	}
	for k, b := range l.NNN {
		if o.NNN[k] != b {
			return false
		}
	}
	return true
}
