package model_test

import (
	"fmt"
	"log"
	"os"
	"path/filepath"

	"warmfit/lattice"
	"warmfit/lattice/model"
)

func ExampleReadFile() {
	m, err := model.ReadFile(filepath.Join("..", "..", "testdata", "models", "square3x3_tfim.json"))
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(m.Lattice.Spec, m.Lattice.NumSites(), "sites, beta", m.Beta, m.Units)
	for _, t := range m.Terms[:2] {
		fmt.Println(t.Pauli, t.Sites, t.Coeff)
	}
	fmt.Println(len(m.Terms), "terms")
	// Output:
	// square:3x3 9 sites, beta 0.4 kHz
	// ZZ [0 1] 0.93
	// ZZ [1 2] 1.02
	// 21 terms
}

func ExampleWrite() {
	spec, err := lattice.ParseSpec("chain:3")
	if err != nil {
		log.Fatal(err)
	}
	l, err := lattice.Build(spec)
	if err != nil {
		log.Fatal(err)
	}
	terms, err := model.Preset(l, "tfim", map[string]float64{"J": -1, "hx": -0.5})
	if err != nil {
		log.Fatal(err)
	}
	m := &model.Model{Lattice: l, Beta: 2, Terms: terms}
	if err := model.Write(os.Stdout, m); err != nil {
		log.Fatal(err)
	}
	// Output:
	// {
	//   "lattice": {"kind": "chain", "size": [3], "boundary": "open"},
	//   "beta": 2,
	//   "terms": [
	//     {"pauli": "ZZ", "sites": [0, 1], "coeff": -1},
	//     {"pauli": "ZZ", "sites": [1, 2], "coeff": -1},
	//     {"pauli": "X", "sites": [0], "coeff": -0.5},
	//     {"pauli": "X", "sites": [1], "coeff": -0.5},
	//     {"pauli": "X", "sites": [2], "coeff": -0.5}
	//   ]
	// }
}
