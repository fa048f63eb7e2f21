package model

import (
	"fmt"
	"math"
	"math/rand/v2"

	"warmfit/lattice"
)

// disorderStream is the PCG stream used by AddDisorder; with the seed it
// fixes the shifts completely.
const disorderStream = 0x9e3779b97f4a7c15

// AddDisorder adds to every coefficient an independent shift drawn
// uniformly from [-width, width), in term order, from a PCG generator
// (math/rand/v2) seeded with (seed, a fixed stream constant): the same
// terms, width and seed always give the same shifts, on every machine.
// Terms that share a Group get different shifts, so disorder and
// TieUniform do not belong together. A negative or non-finite width is a
// programming error and panics.
func AddDisorder(terms []lattice.Term, width float64, seed uint64) {
	if !(width >= 0) || math.IsInf(width, 0) {
		panic(fmt.Sprintf("lattice: AddDisorder width %v, want finite and >= 0", width))
	}
	rng := rand.New(rand.NewPCG(seed, disorderStream))
	for i := range terms {
		terms[i].Coeff += width * (2*rng.Float64() - 1)
	}
}
