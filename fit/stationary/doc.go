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
// (3-local correlators on paths i-j-k), plus pairs at distance two for
// real models (every term with an even number of Y; SystemOptions.FarPairs
// forces them, NearOnly turns them off). A real Hamiltonian has a real
// Gibbs state, every string with an odd number of Y has zero expectation,
// and only probes with an odd number of Y carry signal: on a 3x3 XXZ
// lattice nearest probes give 57 such rows for 54 parameters, the second
// singular value of the exact constraint matrix is 7e-4 of the largest,
// and 2x10^5 shots per basis return couplings wrong by 0.5 with error
// bars of 0.1; the far pairs raise it to 2e-2 (largest error 0.1, pull
// rms near 1). NewSystem lists the
// rows and the strings they need; fit.SchemeBases("covering:3", ...) gives
// product bases that measure all of them, and NewEstimator /
// EstimateSnapshots / EstimatesFromTable turn data into estimates with
// their covariance.
//
// # Solver
//
// Solve minimises the noise-weighted residual sum_a r_a²/Var(r_a) over
// unit parameter vectors: reweighted total least squares whose every step
// takes the lowest eigenvector of X = sum_a w_a M_a M_a^T - sum_a w_a²
// r_a² C_a (the fundamental numerical scheme of Chojnacki et al., IEEE
// TPAMI 22, 1294 (2000), with r_a²/Var capped at 4), dense up to
// Options.DenseLimit parameters and by thick-restart Lanczos beyond
// (matrix-free; cost per product about the number of row entries squared).
// Uniform fields whose constraints vanish within noise (total Z in U(1)
// models) are found first, named and lifted out of the eigenproblem.
// Up to 1500 rows the weights are the inverse of the full covariance of
// the residuals (rows share strings and shots; generalised least
// squares, weighted_full.go), by a pseudo-inverse: the rows of the terms'
// own probes combine into Tr(rho [H, H]) = 0 for any data. On fixed seeds
// this lowers the direction error of a disordered TFIM chain by 10-20%
// against per-row variances (TestWeightingEffect).
// Delta-method error bars (Fix) sandwich the string covariance between
// the influence of each string on the stationarity conditions and the
// inverse normal matrix; with full weights both are the normal matrix
// less its expected noise inflation, without which the error bars of a
// weakly resolved system come out too small (3x3 XXZ at beta 1, 2x10^5
// shots: pull rms 2.4 before, 1.4 after).
// Beyond DenseLimit the sandwich's diagonal comes from deflated conjugate
// gradients and probing (uncertainty_sparse.go; within 1% rms of the
// dense one at 739 parameters), and Lanczos multiplies by X assembled as
// a sparse matrix (assembled.go). The direction's noise is then not
// propagated through a thermal match, and a warning says so.
//
// Solve refuses (ErrNoInformation) rather than return a direction when
// the correlators are consistent with zero (infinite temperature), when
// no low direction is resolved, when the reweighting does not settle (the
// noise correction dominates, or the data fit no stationary state), or
// when the direction switches regions off (weak signal makes rows where
// the direction vanishes free). At beta x max|coeff| of a few tenths
// this needs of order 10^5 shots per basis on 2D XXZ models.
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
// # Example
//
//	sys, _ := stationary.NewSystem(n, terms)
//	est, _ := stationary.EstimateSnapshots(file, "shots.csv", sys, fit.DefaultCovarianceOptions())
//	d, err := stationary.Solve(sys, est, stationary.Options{})   // direction, spectrum, invisible directions
//	res, err := stationary.Fix(sys, est, d, stationary.Gauge{Beta: beta, Evaluate: eval}, stationary.Options{})
//	// res.Lambda, res.StdErr, res.Fixed (how the scale was fixed)
//
// CheckThermal is the maximum-entropy consistency test: a stationary
// state that is not a Gibbs state gives the right direction but fails it.
// Its chi² (ThermalMatch.Chi2Direction) counts the noise of the learned
// direction, propagated through the Gibbs state along every error
// direction (from one linear-response evaluation when Gauge.Response is
// given; otherwise two evaluations each, within a time budget, and
// Inconclusive when the budget cut it short; not beyond DenseLimit, with
// a warning), as well as that of the data: a direction
// off by its own error bars moves the term expectations by much more than
// their shot noise. The same propagation gives the matched scale its
// share of the direction's noise in the error bars.
//
// # Combined with the expansion
//
// Where the expansion of package fit converges, Combine merges its
// estimate with the constraints: the expansion's components off the
// learned direction (which vanish for the true coefficients) are its
// regression variables, with the joint covariance of both estimators,
// their correlation through the shared shots included, from the delta
// method (the expansion's fit.Result.Propagate and the constraints'
// influence matrix). The scale stays the expansion's, so no thermal
// match is needed. Its chi² (Combination.Chi2, shot noise only) tests
// whether the two agree; Choose keeps a trusted expansion, or drops an
// untrusted one as biased for stationarity alone, when they do not.
// An untrusted expansion that agrees enters with its truncation errors
// (ExpansionEstimate.Systematic). On exact snapshots of a disordered
// 8-site TFIM chain the combination is never worse than the better of
// the two (combined_test.go).
//
//	fr, _ := fit.Fit(problem, fit.Options{})
//	c, err := stationary.Combine(sys, est, d, stationary.ExpansionEstimate{Theta: fr.Theta, Propagate: fr.Propagate}, stationary.CombineOptions{})
//	use, why := c.Choose(fr.Truncation.Exact || fr.Truncation.OK)
//	// use == stationary.UseCombined: c.Theta, c.Cov (fr.WithParameters writes them into a fit.Result)
//
// # Planning
//
// PlanShots predicts, before any data, the shots per basis that reach a
// target direction error (the coefficient error once the scale is fixed
// to the model's norm) and, with a known beta, a target error of the
// scale. Predict turns the model's outcome distribution in every basis
// (validate.Sampler.Distribution exactly, validate.TypicalSampler by
// typicality) into the mean of every string and their covariance for one
// shot per basis; Solve and Fix on those estimates give the delta-method
// error bars of this package, scaled by 1/shots. The plan never asks for
// fewer shots than the linear regime needs (every resolved direction to
// 0.1 of the unit direction), refuses with ErrNoInformation when the
// signal is too weak at any number of shots, and names the directions
// no shots fix. Seeded repetitions reach the planned rms direction error
// within 7% on chain:8 TFIM and 3x3 XXZ (plan_test.go).
//
//	pl, err := stationary.PlanShots(n, terms, bases, sampler.Distribution, stationary.PlanOptions{Target: 0.02, Beta: beta})
//	// pl.ShotsPerBasis, pl.DirectionStderr, pl.Invisible, pl.Warnings
//
// # Invariants, aliasing, panics
//
// Coefficient vectors are aligned with System.Terms, parameter vectors
// with System.Params (tied groups). Results are deterministic for fixed
// input. Functions do not retain or modify caller slices unless stated.
// Length mismatches between vectors and the system are programmer errors
// and panic; numerical failures and lack of information return errors.
package stationary
