// Package validate computes exact reference answers for whole small
// systems: dense exact diagonalisation up to about 11 qubits, matrix-free
// thermal typicality with statistical error bars up to about 22 qubits,
// and exact snapshot sampling from the Gibbs state in product bases. Every
// approximation in warmfit is judged against these.
package validate
