package lattice

// Boundary is the boundary condition of a built lattice.
type Boundary int

const (
	Open Boundary = iota
	Periodic
)

// Spec describes a lattice: a named kind with sizes in unit cells, or a
// custom graph (Kind "graph").
type Spec struct {
	Kind     string // chain, ladder, square, triangular, honeycomb, kagome, cubic or graph
	Size     []int  // unit cells along each axis
	Boundary Boundary
	Shells   int // 1: nearest neighbours interact; 2: next-nearest too
}

// Bond joins sites I < J.
type Bond struct{ I, J int }

// Lattice is a set of sites with coordinates and neighbour shells. Its
// interaction graph (NN bonds, plus NNN bonds when Spec.Shells is 2)
// decides which site sets are connected clusters.
type Lattice struct {
	Spec   Spec
	Coords [][]float64 // one point per site, 2 or 3 components
	NN     []Bond      // nearest-neighbour bonds
	NNN    []Bond      // next-nearest-neighbour bonds

	adj [][]int // interaction-graph neighbours of each site, sorted
}

// NumSites returns the number of sites.
func (l *Lattice) NumSites() int { return len(l.Coords) }
