package lattice

// Model is a Hamiltonian on a lattice: H = sum_k Terms[k].Coeff P_k, with
// an optional inverse temperature.
type Model struct {
	Lattice *Lattice
	Beta    float64 // 0 when the file gives none
	Terms   []Term
}
