package lattice

import "math"

// offset is one bond of a neighbour shell in a unit-cell table: site From
// of cell c is joined to site To of cell c+D. Each bond of the infinite
// lattice appears once per cell, so a table lists half the neighbours.
type offset struct {
	From, To int
	D        [3]int
}

// unitCell describes a lattice kind: its Bravais vectors, the sites in one
// cell, and the bonds of the nearest and next-nearest neighbour shells.
// Bonds are built from these tables rather than from distance searches so
// that periodic wrapping and small sizes behave exactly as intended; the
// tests check the tables against distances.
type unitCell struct {
	Kind    string
	Axes    int         // number of size components
	Dim     int         // coordinate components per site
	A       [][]float64 // Bravais vectors, one per axis
	Basis   [][]float64 // site positions within a cell
	NN      []offset    // shortest distance
	NNN     []offset    // second-shortest distance
	Example string      // a valid size, for messages
}

var sqrt3 = math.Sqrt(3)

// kinds lists the built-in lattices in the order they are documented.
var kinds = []string{"chain", "ladder", "square", "triangular", "honeycomb", "kagome", "cubic"}

var unitCells = map[string]*unitCell{
	// Sites on the x axis, spacing 1.
	"chain": {
		Kind: "chain", Axes: 1, Dim: 2, Example: "12",
		A:     [][]float64{{1, 0}},
		Basis: [][]float64{{0, 0}},
		NN:    []offset{{0, 0, [3]int{1}}},
		NNN:   []offset{{0, 0, [3]int{2}}},
	},
	// Two legs at y = 0 and y = 1; a cell is one rung (site 2x on the
	// lower leg, 2x+1 on the upper). NNN are the rung diagonals.
	"ladder": {
		Kind: "ladder", Axes: 1, Dim: 2, Example: "8",
		A:     [][]float64{{1, 0}},
		Basis: [][]float64{{0, 0}, {0, 1}},
		NN:    []offset{{0, 1, [3]int{0}}, {0, 0, [3]int{1}}, {1, 1, [3]int{1}}},
		NNN:   []offset{{0, 1, [3]int{1}}, {1, 0, [3]int{1}}},
	},
	// NNN are the plaquette diagonals.
	"square": {
		Kind: "square", Axes: 2, Dim: 2, Example: "4x4",
		A:     [][]float64{{1, 0}, {0, 1}},
		Basis: [][]float64{{0, 0}},
		NN:    []offset{{0, 0, [3]int{1, 0}}, {0, 0, [3]int{0, 1}}},
		NNN:   []offset{{0, 0, [3]int{1, 1}}, {0, 0, [3]int{1, -1}}},
	},
	// a1 = (1, 0), a2 = (1/2, sqrt3/2): a rhombic patch. NNN at sqrt3.
	"triangular": {
		Kind: "triangular", Axes: 2, Dim: 2, Example: "5x4",
		A:     [][]float64{{1, 0}, {0.5, sqrt3 / 2}},
		Basis: [][]float64{{0, 0}},
		NN:    []offset{{0, 0, [3]int{1, 0}}, {0, 0, [3]int{0, 1}}, {0, 0, [3]int{-1, 1}}},
		NNN:   []offset{{0, 0, [3]int{1, 1}}, {0, 0, [3]int{-1, 2}}, {0, 0, [3]int{2, -1}}},
	},
	// Bond length 1; a cell is a vertical bond (site 0 below site 1).
	// NNN join equal sublattices at distance sqrt3.
	"honeycomb": {
		Kind: "honeycomb", Axes: 2, Dim: 2, Example: "3x3",
		A:     [][]float64{{sqrt3, 0}, {sqrt3 / 2, 1.5}},
		Basis: [][]float64{{0, 0}, {0, 1}},
		NN:    []offset{{0, 1, [3]int{0, 0}}, {0, 1, [3]int{0, -1}}, {0, 1, [3]int{1, -1}}},
		NNN: []offset{
			{0, 0, [3]int{1, 0}}, {0, 0, [3]int{0, 1}}, {0, 0, [3]int{-1, 1}},
			{1, 1, [3]int{1, 0}}, {1, 1, [3]int{0, 1}}, {1, 1, [3]int{-1, 1}},
		},
	},
	// Bond length 1; a cell is an up-pointing triangle (sites 0, 1 on its
	// base, 2 at its apex). NNN at distance sqrt3 across the hexagons.
	"kagome": {
		Kind: "kagome", Axes: 2, Dim: 2, Example: "2x3",
		A:     [][]float64{{2, 0}, {1, sqrt3}},
		Basis: [][]float64{{0, 0}, {1, 0}, {0.5, sqrt3 / 2}},
		NN: []offset{
			{0, 1, [3]int{0, 0}}, {0, 2, [3]int{0, 0}}, {1, 2, [3]int{0, 0}},
			{1, 0, [3]int{1, 0}}, {2, 0, [3]int{0, 1}}, {2, 1, [3]int{-1, 1}},
		},
		NNN: []offset{
			{0, 2, [3]int{-1, 0}}, {0, 2, [3]int{1, -1}},
			{0, 1, [3]int{0, -1}}, {0, 1, [3]int{-1, 1}},
			{1, 2, [3]int{1, 0}}, {1, 2, [3]int{0, -1}},
		},
	},
	// NNN are the face diagonals.
	"cubic": {
		Kind: "cubic", Axes: 3, Dim: 3, Example: "3x3x3",
		A:     [][]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}},
		Basis: [][]float64{{0, 0, 0}},
		NN:    []offset{{0, 0, [3]int{1, 0, 0}}, {0, 0, [3]int{0, 1, 0}}, {0, 0, [3]int{0, 0, 1}}},
		NNN: []offset{
			{0, 0, [3]int{1, 1, 0}}, {0, 0, [3]int{1, -1, 0}},
			{0, 0, [3]int{1, 0, 1}}, {0, 0, [3]int{1, 0, -1}},
			{0, 0, [3]int{0, 1, 1}}, {0, 0, [3]int{0, 1, -1}},
		},
	},
}

// axisName names axis a in messages.
func axisName(a int) string { return [...]string{"x", "y", "z"}[a] }
