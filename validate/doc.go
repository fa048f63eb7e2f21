// Package validate computes exact reference answers for whole small
// systems, against which every approximation in warmfit is judged: the
// linked-cluster expansion, the fitted coefficients and their error bars.
//
// # Methods
//
// ExactThermal diagonalises the whole Hamiltonian densely (through
// package cluster, with its conserved-quantity blocks) and returns its
// Gibbs state; it refuses more than cluster.MaxDenseQubits qubits before
// allocating. Eleven qubits take seconds, twelve minutes.
//
// Past dense sizes, Typical and TypicalThermal estimate log Z and any
// expectations by thermal typicality: random vectors are propagated by a
// Chebyshev expansion of exp(-beta H / 2) (spectral bounds from Lanczos,
// with a rigorous fallback), and the error bars come from a jackknife
// over the vectors. The operator is matrix-free (NewOperator), so memory
// is a few state vectors; TypicalityMemory says how much before anything
// is allocated, and requests over TypicalityOptions.MaxMemory are
// refused.
//
// Free-fermion chains are exact at any length: NewFreeFermionChain solves
// transverse-field Ising and XX chains (open, or periodic with both
// fermion-parity sectors) through Majorana bilinears and Pfaffians, and
// TFIMInfinite and XXInfinite integrate the infinite-chain dispersion
// (Pfeuty 1970; Lieb, Schultz, Mattis 1961). They are the references of
// the long-chain checks, where no dense method reaches.
//
// Crosscheck compares the expansion, order by order, with these exact
// references on patches cut from a model (CutPatch, PatchesOfShape). A
// value agrees when |expansion - exact| <= Tol + 2 stderr of its own
// reference; an order whose misses all lie within the largest noise
// excursion expected among its values (Student t, Bonferroni) is "noisy":
// the typicality references cannot judge it, and the result says about
// how many vectors would. The expansion's own truncation estimates are
// judged only where the reference noise lies below them.
//
// Sampler draws exact snapshots of a Gibbs state (or of any mixture of
// eigenstates) in product bases, seeded and deterministic: the synthetic
// data of the honesty tests, whose outcome distribution is exactly the one
// the Cramér–Rao bound speaks of.
//
//	th, err := validate.ExactThermal(9, terms, 0.4)
//	if err != nil {
//		return err
//	}
//	ops, _ := cluster.TermPaulis(terms)
//	exact := make([]float64, len(ops))
//	th.ExpectAll(ops, exact) // the reference for the expansion on the same patch
//
// # Invariants and panics
//
// Terms are the model's own lattice.Term values on qubits 0..n-1 in
// canonical form (cluster.NewHamiltonian checks them); everything that
// depends on input is returned as an error, never a panic. Random streams
// are seeded explicitly, so a given seed gives the same numbers on every
// machine and for any number of workers. No method returns a non-finite
// value without an error.
//
// Package validate may use lattice, cluster and fit; nothing in the
// library imports it, only tests, the demo and the commands.
package validate
