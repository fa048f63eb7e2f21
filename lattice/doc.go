// Package lattice holds the geometry warmfit works on: lattices built from
// a short specification or read from a custom graph file, their neighbour
// shells, the layout of Hamiltonian terms on them (models and presets), and
// the enumeration of connected site clusters that the linked-cluster
// expansion sums over.
//
// Sites are numbered with x fastest, then y, then z; with a multi-site unit
// cell, site = b + nb*cell, where b is the site within the cell.
//
// # Connected clusters of a finite lattice
//
// EachCluster, EachClusterFrom, CountClusters and BuildClusters enumerate
// the connected site sets of a built lattice (enumerate.go, an anchored
// form of Wernicke's ESU search): every set once, sites ascending. They
// serve the site-resolved expansion, where every embedded cluster carries
// its own coefficients.
//
// # Cluster classes of the infinite lattice
//
// A uniform model on an infinite lattice gives identical clusters
// identical spectra, so the uniform (bulk) expansion needs each kind of
// cluster once, with its count per unit cell. ClusterClasses enumerates
// the connected clusters of up to a given order anchored at one unit cell
// (each translation class once: the clusters whose smallest site lies in
// the anchor cell, in an open region so large that no cluster or
// perimeter reaches its edge) and reduces them to classes:
//
//	cl, err := lattice.ClusterClasses("square", 8, lattice.ClassOptions{})
//	// cl.Classes[k]: Size, SiteKinds, Bonds (canonical labels), Count per
//	// cell, Perimeters (counts split by perimeter size), Automorphisms.
//
// Two clusters are in one class when their coloured graphs are
// isomorphic: site kinds (ClassOptions.SiteKind, per unit-cell site),
// bond kinds (ClassOptions.BondKind, per bond type of BondTypes: the
// neighbour shell and the unit-cell offset, so that a ladder's legs and
// rungs or the three bond directions of the honeycomb can be told apart)
// and, for kinds marked Directed, the orientation of each bond. With the
// defaults (one site kind, one kind per shell, undirected) the classes are
// the topologically distinct clusters. Isomorphism is decided by a
// canonical form (canonical.go: colour refinement, then individualisation
// of the vertices of the first smallest ambiguous cell, keeping the
// smallest encoding over the leaves of the search); a map indexes the
// forms, but equality is equality of the full form, never of a hash.
//
// Counts are per unit cell; divide by CellSites for per-site lattice
// constants. Their sums per size are the fixed lattice animals (OEIS
// A001168 square, A001207 triangular, A001420 honeycomb per 2-site cell,
// A001931 cubic), which the tests check, together with the numbers of
// topologically distinct clusters (square 1, 1, 1, 3, 4, 10, 19, 51, 112,
// 300 for n = 1..10; triangular 1, 1, 2, 4, 8, 22, 54, 156 for n = 1..8)
// and, class by class and perimeter by perimeter, the enumeration of a
// large periodic lattice. The perimeter of an embedding (sites outside it
// adjacent to it) depends on the embedding, not the class: the
// linked-cluster multipliers need the split.
//
// The work is the number of fixed animals times a canonical labelling:
// the square lattice to order 11 (1.9e5 animals per site, 1248 classes)
// takes about 2 s, canonical forms on GOMAXPROCS workers; results do not
// depend on their number. A graph kind has no translations and is
// refused.
package lattice
