package model_test

import (
	"fmt"
	"log"

	"warmfit/lattice"
	"warmfit/lattice/model"
)

func ExamplePreset() {
	spec, err := lattice.ParseSpec("chain:4:periodic")
	if err != nil {
		log.Fatal(err)
	}
	l, err := lattice.Build(spec)
	if err != nil {
		log.Fatal(err)
	}
	// Transverse-field Ising ring: J on the 4 bonds (in the lattice's
	// sorted bond order), hx on the 4 sites; hz keeps its default 0, so
	// there are no Z terms.
	terms, err := model.Preset(l, "tfim", map[string]float64{"J": -1, "hx": -0.7})
	if err != nil {
		log.Fatal(err)
	}
	for _, t := range terms {
		fmt.Println(t.Key(), t.Coeff)
	}
	// Output:
	// ZZ 0 1 -1
	// ZZ 0 3 -1
	// ZZ 1 2 -1
	// ZZ 2 3 -1
	// X 0 -0.7
	// X 1 -0.7
	// X 2 -0.7
	// X 3 -0.7
}

func ExampleAddDisorder() {
	spec, _ := lattice.ParseSpec("chain:6")
	l, _ := lattice.Build(spec)
	terms, _ := model.Preset(l, "heisenberg", nil)
	model.AddDisorder(terms, 0.1, 1)
	ok := true
	for _, t := range terms {
		ok = ok && t.Coeff >= 0.9 && t.Coeff < 1.1
	}
	fmt.Println(len(terms), "terms, all within 1 ± 0.1:", ok)
	// Output:
	// 15 terms, all within 1 ± 0.1: true
}
