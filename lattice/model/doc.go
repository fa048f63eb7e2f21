// Package model holds Hamiltonians laid out on lattices: the Model type
// (a lattice, its Pauli terms H = sum_k coeff_k P_k and an optional
// inverse temperature), the presets of standard model families, seeded
// disorder, and the model file — the JSON document every warmfit command
// reads and the fitter writes.
//
// # Models
//
// A Model is complete when Validate passes: a lattice, a finite
// non-negative Beta (0 meaning "not given"), at least one term, every term
// canonical (lattice.Canonical) with a connected support on the lattice
// ((*lattice.Lattice).CanonicalTerm), no two terms equal, finite
// coefficients and finite non-negative standard errors. Terms sharing a
// non-empty Group share one fitted coefficient. Coefficients are literal:
// no hidden signs or factors of one half, and the operators are Pauli
// matrices, not spin-1/2 operators (S = sigma/2), so a Heisenberg exchange
// J S_i.S_j is the term set (J/4)(XX + YY + ZZ).
//
//	l, _ := lattice.Open("square:4x4")
//	terms, _ := model.Preset(l, "xxz", map[string]float64{"Jxy": 0.2, "Jz": 0.15, "hz": 0.4})
//	model.AddDisorder(terms, 0.05, 4) // seeded, the same on every machine
//	m := &model.Model{Lattice: l, Beta: 0.35, Terms: terms}
//	err := model.Write(os.Stdout, m)
//
// # Files
//
// ReadFile and Parse read the model format (documented in the format
// reference shown by `warmfit help formats`). Parsing keeps the byte
// offset of every value, so each error is a *Error naming the file, the
// line and column (in characters) and the JSON path of the value, such as
// "terms[3].sites". Terms may be written in any site order; they are put
// in canonical form, and two terms equal after that are an error naming
// both lines. Unknown members are ignored, so later versions can add
// fields. Write refuses a model that fails Validate before writing a
// byte, and writes numbers in the shortest form that reads back to the
// same float64, so a model survives any number of round trips unchanged.
//
// # Presets
//
// Presets (tfim, xxz, heisenberg, xy, j1j2, all2local) put a model family
// on the bonds and sites of a lattice from named parameters; PresetTerms
// also returns each term's parameter name so that TieUniform can turn a
// site-resolved model into a uniform one (one group per parameter).
// Template presets (all2local) keep zero coefficients: they describe
// which terms a fit may use. AddDisorder shifts every coefficient by a
// uniform draw from a PCG stream fixed by the seed.
//
// # Panics
//
// AddDisorder panics on a negative or non-finite width and TieUniform on
// mismatched lengths: both are programmer errors. Everything that comes
// from a file or a flag is checked and returned as an error.
package model
