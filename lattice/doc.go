// Package lattice holds the geometry warmfit works on: lattices built from
// a short specification or read from a custom graph file, their neighbour
// shells, the layout of Hamiltonian terms on them (models and presets), and
// the enumeration of connected site clusters that the linked-cluster
// expansion sums over.
//
// Sites are numbered with x fastest, then y, then z; with a multi-site unit
// cell, site = b + nb*cell, where b is the site within the cell.
package lattice
