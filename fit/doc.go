// Package fit learns the coefficients of a local Hamiltonian from
// measurements of its Gibbs state: it reads expectation tables and
// snapshot files, minimises the convex maximum-entropy dual
// G(lambda) = log Z(lambda) + beta sum_k lambda_k e_k with log Z from the
// linked-cluster expansion, propagates the data covariance into error bars,
// and plans how many shots a target precision needs.
package fit
