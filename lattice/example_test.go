package lattice_test

import (
	"fmt"

	"warmfit/lattice"
)

func ExampleLattice_EachCluster() {
	l, err := lattice.Open("square:2x2")
	if err != nil {
		panic(err)
	}
	// Sites 0 1 / 2 3: four single sites, four bonds, four corners of
	// three sites and the whole plaquette, 13 in all, anchor by anchor
	// (the order within an anchor is the enumeration's own). The slice
	// is reused, so copy it to keep it.
	l.EachCluster(4, func(sites []int) bool {
		fmt.Println(sites)
		return true
	})
	// Output:
	// [0]
	// [0 2]
	// [0 2 3]
	// [0 1 2 3]
	// [0 1 2]
	// [0 1]
	// [0 1 3]
	// [1]
	// [1 3]
	// [1 2 3]
	// [2]
	// [2 3]
	// [3]
}

func ExampleLattice_CountClusters() {
	// Per-site counts on a torus large enough to avoid wrap-around are
	// the fixed polyominoes of OEIS A001168: 1, 2, 6, 19, 63.
	l, err := lattice.Open("square:11x11:periodic")
	if err != nil {
		panic(err)
	}
	for n, c := range l.CountClusters(5) {
		fmt.Println(n+1, c/int64(l.NumSites()))
	}
	// Output:
	// 1 1
	// 2 2
	// 3 6
	// 4 19
	// 5 63
}

func ExampleParseSpec() {
	spec, err := lattice.ParseSpec("kagome:2x3:periodic")
	if err != nil {
		panic(err)
	}
	l, err := lattice.Build(spec)
	if err != nil {
		panic(err)
	}
	fmt.Println(spec, spec.Kind, spec.Size, spec.Boundary)
	fmt.Println(l.NumSites(), "sites,", len(l.NN), "NN bonds,", len(l.NNN), "NNN bonds")
	_, err = lattice.ParseSpec("square:4x0")
	fmt.Println(err)
	// Output:
	// kagome:2x3:periodic kagome [2 3] periodic
	// 18 sites, 36 NN bonds, 36 NNN bonds
	// square:4x0: size 0 must be positive
}

func ExampleFromGraph() {
	// A triangle with a tail: 0-1-2-0 and 2-3.
	coords := [][]float64{{0, 0}, {1, 0}, {0.5, 0.9}, {0.5, 2}}
	l, err := lattice.FromGraph(coords, []lattice.Bond{{0, 1}, {1, 2}, {2, 0}, {2, 3}}, 1)
	if err != nil {
		panic(err)
	}
	fmt.Println("pairs at graph distance 2:", l.NNN)
	fmt.Println("connected clusters by size:", l.CountClusters(4))
	// Output:
	// pairs at graph distance 2: [{0 3} {1 3}]
	// connected clusters by size: [4 4 3 1]
}
