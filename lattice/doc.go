// Package lattice holds the geometry warmfit works on: lattices built from
// a short specification or read from a custom graph file, their neighbour
// shells, the Pauli terms laid out on them, and the enumeration of the
// connected site clusters that the linked-cluster expansion sums over.
//
// # Lattices
//
// A Lattice is a finite set of sites with coordinates and two neighbour
// shells (nearest and next-nearest bonds). It is made by Build from a Spec,
// by Open from a specification string such as "square:4x4",
// "honeycomb:3x3:periodic" or "square:6x6:open:shells=2" (or the path of a
// JSON graph file), by FromGraph from explicit coordinates and bonds, or
// by DecodeLatticeJSON from the "lattice" member of a model file.
//
// Sites are numbered with x fastest, then y, then z; with a multi-site
// unit cell, site = b + nb*cell, where b is the site within the cell. The
// bonds of the named kinds come from unit-cell offset tables, not from a
// distance search, so small and periodic sizes behave exactly as written;
// a periodic size that would create a double or a self bond is refused
// with the smallest size that works.
//
// The interaction graph — nearest-neighbour bonds, plus next-nearest ones
// when Spec.Shells is 2 — decides which site sets are connected. Every
// term of a model must have a connected support in it, because the
// linked-cluster identity holds only for such terms.
//
//	l, err := lattice.Open("square:4x4")
//	if err != nil {
//		return err
//	}
//	zz, _ := lattice.NewTerm("ZZ", []int{1, 0}, 0.5) // ZZ on [0 1]
//	if _, _, err := l.CanonicalTerm(zz.Pauli, zz.Sites); err != nil {
//		return err // not connected, or off the lattice
//	}
//	counts := l.CountClusters(6) // connected clusters of 1..6 sites
//
// # Terms
//
// A Term is a Pauli string (letters X, Y, Z, no identities) on a list of
// sites with a coefficient: H = sum_k Coeff_k P_k. Canonical is the one
// place where a term's form is checked: sites strictly increasing with
// their letters permuted along, so "XZ" on [3 1] is "ZX" on [1 3].
// CanonicalWithin adds a range check on n qubits, (*Lattice).CanonicalTerm
// a check against a lattice (range and connectivity), and CheckTerms the
// same for a whole list. Their errors are *TermError values that name the
// field at fault, so that file readers can point at it. Term.Key ("ZZ 0
// 1") identifies a canonical term in maps and in messages.
//
// # Clusters
//
// EachCluster, EachClusterFrom and ClustersContaining enumerate connected
// clusters (connected induced subgraphs of the interaction graph), each
// exactly once, by anchored extension: a cluster is reached only from its
// smallest site, extended by neighbours exclusive to the last added site.
// The order of the visit is deterministic. CountClusters counts in
// parallel; AnchorBlocks is the fixed split of anchor sites into units of
// parallel work that every parallel pass over clusters in the project
// uses, so sums come out bit-identical for any number of workers.
// EstimateClusterSizes estimates the counts cheaply (exact counts around
// 64 sample anchors, extrapolated growth ratios beyond a work budget); it
// is the basis of every cost estimate and refusal. The per-site counts on
// large tori are the fixed lattice animals of OEIS A001168 (square),
// A001207 (triangular), A001420 (honeycomb) and A001931 (simple cubic),
// which the tests check.
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
//
// # Invariants, aliasing and panics
//
// A Lattice's exported fields are for reading: changing them after
// construction leaves the interaction graph stale. All methods are safe
// for concurrent use, and enumerations may be nested. The slice handed to
// a visit function is reused for the next cluster: copy it to keep it.
// Lattices have at most MaxSites sites. Bad specifications, files and
// terms are errors; methods panic only on programmer misuse, such as a
// repeated or out-of-range site in the support given to
// ClustersContaining.
//
// Models — a Hamiltonian on a lattice with its inverse temperature,
// presets, and the model file format — live in the sub-package
// lattice/model.
package lattice
