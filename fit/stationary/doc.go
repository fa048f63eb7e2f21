// Package stationary learns the coefficients of a local Hamiltonian from
// the stationarity of its thermal state, without a cluster expansion.
//
// # Method
//
// A Gibbs state rho = exp(-beta H)/Z commutes with H, so for every
// operator A
//
//	Tr(rho [A, H]) = sum_k lambda_k Tr(rho [A, E_k]) = 0.
//
// For Pauli strings A and E_k the commutator is zero or 2 i s P with P a
// Pauli string and s = ±1, so every probe A gives one real linear
// equation sum_k lambda_k s_k <P_k> = 0 whose entries are expectation
// values, estimated from the same product-basis snapshots as everything
// else. The coefficients are the null vector of this sparse constraint
// matrix: exact at every temperature, linear and local (Bairey, Arad,
// Lindner, Phys. Rev. Lett. 122, 020504 (2019); Qi and Ranard, Quantum 3,
// 159 (2019) for the eigenstate version, which is why any stationary
// state, thermal or not, satisfies the constraints).
//
// Probes are every single-site Pauli letter (constraints on 2-local
// correlators) and every pair of letters on two sites that share a term
// (3-local correlators on paths i-j-k). NewSystem lists the rows and the
// strings they need; fit.SchemeBases("covering:3", ...) gives product
// bases that measure all of them, and NewEstimator / EstimateSnapshots /
// EstimatesFromTable turn data into estimates with their covariance.
//
// # What stationarity cannot see
//
// The constraints are homogeneous: lambda is fixed only up to an overall
// scale, and up to any conserved quantity expressible in the terms (the
// uniform Z field in U(1) models: total Z commutes with H, hence with
// rho). Their signal vanishes like beta at high temperature, where the
// expansion of package fit is at its best: the two methods complement
// each other. Solve reports the low end of the constraint spectrum,
// names directions that the data do not resolve, and never fixes them
// silently; it returns ErrNoInformation when nothing is resolved
// (beta -> 0). Scale and invisible directions are fixed by what the user
// has (see Gauge): calibrated coefficients, or a known beta and a thermal
// match through an Evaluator, with tied groups (lattice.Term.Group)
// reducing the unknowns beforehand.
//
// # Invariants, aliasing, panics
//
// Coefficient vectors are aligned with System.Terms, parameter vectors
// with System.Params (tied groups). Results are deterministic for fixed
// input. Functions do not retain or modify caller slices unless stated.
// Length mismatches between vectors and the system are programmer errors
// and panic; numerical failures and lack of information return errors.
package stationary
