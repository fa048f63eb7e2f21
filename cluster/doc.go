// Package cluster computes exact thermal properties of small sets of
// qubits and combines them into the numerical linked-cluster expansion of
// a lattice model.
//
// Pauli strings are bit masks (PauliString). A cluster Hamiltonian is
// diagonalised densely, on a real symmetric fast path when every term has
// an even number of Y letters and on a Hermitian path otherwise; from the
// spectrum come log Z, expectations, energy, entropy, heat capacity and the
// Kubo–Mori response of expectations to coefficients, all evaluated with
// log-sum-exp so that large beta stays finite.
package cluster
