package bulk

import (
	"fmt"
	"sort"
	"strings"
)

// cellOffset is one bond of a neighbour shell: site From of cell c is
// joined to site To of cell c+D; each bond of the infinite lattice appears
// once per cell. Cell coordinates are integer multiples of the Bravais
// vectors, so a periodic cluster is a quotient of the integer plane.
type cellOffset struct {
	From, To int
	D        [2]int
}

// latticeShells describes a lattice for the periodic-cluster model. The
// tables match the geometry of package lattice (chain spacing 1; square;
// triangular with a2 at 60 degrees; honeycomb with two sites per cell).
type latticeShells struct {
	basis        int
	coordination int
	nn, nnn      []cellOffset
}

var shellTables = map[string]latticeShells{
	"chain": {basis: 1, coordination: 2,
		nn:  []cellOffset{{0, 0, [2]int{1, 0}}},
		nnn: []cellOffset{{0, 0, [2]int{2, 0}}}},
	"square": {basis: 1, coordination: 4,
		nn:  []cellOffset{{0, 0, [2]int{1, 0}}, {0, 0, [2]int{0, 1}}},
		nnn: []cellOffset{{0, 0, [2]int{1, 1}}, {0, 0, [2]int{1, -1}}}},
	"triangular": {basis: 1, coordination: 6,
		nn:  []cellOffset{{0, 0, [2]int{1, 0}}, {0, 0, [2]int{0, 1}}, {0, 0, [2]int{-1, 1}}},
		nnn: []cellOffset{{0, 0, [2]int{1, 1}}, {0, 0, [2]int{-1, 2}}, {0, 0, [2]int{2, -1}}}},
	"honeycomb": {basis: 2, coordination: 3,
		nn: []cellOffset{{0, 1, [2]int{0, 0}}, {0, 1, [2]int{0, -1}}, {0, 1, [2]int{1, -1}}},
		nnn: []cellOffset{
			{0, 0, [2]int{1, 0}}, {0, 0, [2]int{0, 1}}, {0, 0, [2]int{-1, 1}},
			{1, 1, [2]int{1, 0}}, {1, 1, [2]int{0, 1}}, {1, 1, [2]int{-1, 1}},
		}},
}

// supercell is a periodic cluster: the cells of the lattice modulo the
// integer vectors A1 and A2 (for the chain, A1 = (L, 0), A2 = (0, 1)).
type supercell struct {
	sites  int
	a1, a2 [2]int
}

// clusterShapes lists, per lattice, the periodic clusters the model uses,
// largest first. Each is free of doubled bonds and, where the lattice is
// bipartite, keeps it bipartite (both supercell vectors join equal
// sublattices), so the antiferromagnet is not frustrated by the wrapping.
// The square 10-site cluster is the tilted sqrt10 x sqrt10 one.
var clusterShapes = map[string][]supercell{
	"chain":      {{12, [2]int{12, 0}, [2]int{0, 1}}, {10, [2]int{10, 0}, [2]int{0, 1}}, {8, [2]int{8, 0}, [2]int{0, 1}}},
	"square":     {{12, [2]int{4, 0}, [2]int{1, 3}}, {10, [2]int{3, 1}, [2]int{-1, 3}}, {8, [2]int{2, 2}, [2]int{2, -2}}},
	"triangular": {{12, [2]int{2, 2}, [2]int{-2, 4}}, {9, [2]int{3, 0}, [2]int{0, 3}}},
	"honeycomb":  {{12, [2]int{3, 0}, [2]int{0, 2}}, {8, [2]int{2, 0}, [2]int{0, 2}}},
}

// PeriodicLattices lists the lattices the periodic-cluster model knows.
func PeriodicLattices() []string {
	out := make([]string, 0, len(clusterShapes))
	for k := range clusterShapes {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}

// periodicCluster is the bond list of one periodic cluster.
type periodicCluster struct {
	name    string // "square:12"
	sites   int
	nn, nnn [][2]int // nnn is nil when the cluster is too small for it
}

// buildPeriodicCluster lays the lattice's shells on the supercell. It
// refuses a cluster whose nearest-neighbour bonds would double up or join
// a site to itself; next-nearest bonds are left out (nnn nil) when they
// would.
func buildPeriodicCluster(kind string, sc supercell) (*periodicCluster, error) {
	sh, ok := shellTables[kind]
	if !ok {
		return nil, fmt.Errorf("bulk: no periodic clusters for lattice %q (known: %s)", kind, strings.Join(PeriodicLattices(), ", "))
	}
	det := sc.a1[0]*sc.a2[1] - sc.a1[1]*sc.a2[0]
	if det < 0 {
		det = -det
	}
	if det*sh.basis != sc.sites {
		panic(fmt.Sprintf("bulk: supercell of %s has %d cells, not %d sites", kind, det, sc.sites))
	}
	// Cells c and c' are the same iff adj(A) (c - c') = 0 mod det.
	key := func(c [2]int) [2]int {
		u := sc.a2[1]*c[0] - sc.a2[0]*c[1]
		v := -sc.a1[1]*c[0] + sc.a1[0]*c[1]
		return [2]int{((u % det) + det) % det, ((v % det) + det) % det}
	}
	cellID := map[[2]int]int{}
	var cells [][2]int
	reach := abs(sc.a1[0]) + abs(sc.a2[0]) + abs(sc.a1[1]) + abs(sc.a2[1])
	for x := 0; x <= reach && len(cells) < det; x++ {
		for y := 0; y <= reach && len(cells) < det; y++ {
			k := key([2]int{x, y})
			if _, seen := cellID[k]; !seen {
				cellID[k] = len(cells)
				cells = append(cells, [2]int{x, y})
			}
		}
	}
	if len(cells) != det {
		panic("bulk: supercell enumeration missed cells")
	}
	bonds := func(table []cellOffset) ([][2]int, bool) {
		seen := map[[2]int]bool{}
		var out [][2]int
		for ci, c := range cells {
			for _, o := range table {
				d := cellID[key([2]int{c[0] + o.D[0], c[1] + o.D[1]})]
				i, j := ci*sh.basis+o.From, d*sh.basis+o.To
				if i == j {
					return nil, false
				}
				p := [2]int{min(i, j), max(i, j)}
				if seen[p] {
					return nil, false
				}
				seen[p] = true
				out = append(out, p)
			}
		}
		return out, true
	}
	pc := &periodicCluster{name: fmt.Sprintf("%s:%d", kind, sc.sites), sites: sc.sites}
	var ok1, ok2 bool
	if pc.nn, ok1 = bonds(sh.nn); !ok1 {
		return nil, fmt.Errorf("bulk: periodic cluster %s doubles nearest-neighbour bonds", pc.name)
	}
	if pc.nnn, ok2 = bonds(sh.nnn); ok2 {
		all := map[[2]int]bool{}
		for _, b := range append(append([][2]int{}, pc.nn...), pc.nnn...) {
			if all[b] {
				ok2 = false
			}
			all[b] = true
		}
	}
	if !ok2 {
		pc.nnn = nil
	}
	return pc, nil
}

func abs(x int) int {
	if x < 0 {
		return -x
	}
	return x
}
