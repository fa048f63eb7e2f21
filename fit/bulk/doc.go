// Package bulk is the materials mode of warmfit: it fits the few uniform
// couplings of a spin-1/2 model (J, an XXZ anisotropy Delta, a
// next-nearest J2, the g-factor) and the extra terms a practitioner adds
// (a temperature-independent chi0, a fraction rho of free spin-1/2
// impurities, a lattice heat capacity a T^3 + b T^5) to measured bulk
// curves of a magnetic material: the molar susceptibility chi(T), the
// specific heat C(T) and the magnetisation M(H) at fixed T.
//
// # Overview
//
// A fit has four parts, each in its own file:
//
//   - Curves: ReadFile and ParseCSV read CSV files whose header names
//     every column and its unit (T [K], chi [emu/mol] or [m^3/mol],
//     C [J/(mol K)], M [mu_B/f.u.], H [T]) and converts the values to the
//     internal units of Quantity.Unit. Every quantity needs its standard
//     error column NAME_err; errors that are not known are declared with
//     the header "NAME_err [unknown]" (or ReadOptions.UnknownStderr), and
//     the fit then estimates one error per series from the residual
//     scatter and says that no goodness-of-fit test was possible.
//   - Forward model: a ForwardModel turns couplings into per-site curves
//     (log Z, E, S, C, m, chi) on a temperature grid, with their
//     derivatives along requested directions in coupling space and the
//     lowest temperature it trusts each curve at. ExpansionModel, the
//     production model, sums the linked-cluster expansion of the infinite
//     lattice (cluster.UniformExpansion; isotropic models by total spin)
//     and trusts a curve where its last orders or resummations agree, on a
//     grid reaching 50 J; it evaluates every field of the M(H) points in
//     one diagonalisation (MultiFieldModel). PeriodicClusterModel computes
//     the curves by exact diagonalisation of a 12-site periodic cluster
//     and trusts a curve where it agrees with a smaller cluster.
//   - Candidate: NewCandidate joins a forward model, the parameters that
//     the data can determine and their start values; it predicts molar
//     curves with their parameter Jacobian (see Candidate for the
//     formulas).
//   - Fit: FitCandidate minimises the weighted chi^2 by Levenberg–Marquardt
//     over the points the forward model trusts; Compare fits several
//     candidates, tests each on its own trusted range and ranks the
//     survivors by AIC on the points all of them trust; FitCurieWeiss is
//     the first look at the high-temperature tail.
//
// # Conventions
//
// The spin model is written in the materials convention, with S = sigma/2
// and energies in kelvin (E/k_B):
//
//	H = J sum_<ij> (S^x S^x + S^y S^y + Delta S^z S^z) + J2 sum_<<ij>> S_i.S_j
//	    - g mu_B B sum_i S^z_i ,
//
// each bond counted once, J > 0 antiferromagnetic. In Pauli strings a
// bond term J S_i.S_j is (J/4)(X_i X_j + Y_i Y_j + Z_i Z_j) and the Zeeman
// term is -(h/2) Z_i with h = g mu_B B/k_B; the periodic-cluster spectrum
// is checked against cluster.Diagonalize of exactly those strings. Molar
// quantities are per mole of formula units with Candidate.SitesPerFormula
// magnetic sites. The Curie–Weiss form is chi = C/(T + theta), theta > 0
// for antiferromagnetic coupling; for spin 1/2, theta = z J/4 and the
// Curie constant of g = 2 is 0.3751 emu K/mol. Constants are CODATA 2018
// (CODATAEdition): k_B, N_A and e exact, mu_B measured.
//
// # The trusted range
//
// A forward model is an approximation that holds above some temperature,
// and that temperature moves with the couplings. FitCandidate therefore
// fits only the trusted points, recomputes the trusted range from the
// fitted parameters and refits until the set of points no longer changes
// (alternating sets are resolved by fitting the points trusted in both).
// Every point left out, and every move of the range that dropped data, is
// a warning in FitResult.Warnings: the model is never extrapolated. Data
// entirely below the range are refused with a *TrustError that names the
// lowest usable temperature.
//
// # Example
//
//	fwd, _ := bulk.NewPeriodicClusterModel("chain", bulk.PeriodicClusterOptions{})
//	data, _ := bulk.ReadFile("chi.csv", bulk.ReadOptions{})
//	c, _ := bulk.NewCandidate("chain", fwd, data, nil, false, map[string]float64{bulk.ParamJ: 80}, nil)
//	res, err := bulk.FitCandidate(c, data, bulk.FitOptions{})
//	// res.Params, res.Covariance, res.PValue, res.Warnings ...
//
// # Invariants, aliasing and panics
//
// Series are read-only once parsed: fits keep pointers to them and never
// modify them. A FitResult owns its matrices. Forward models are safe for
// concurrent use, and Compare fits candidates in parallel with results
// independent of the number of workers. Numerical failure (no trusted
// point, a singular normal matrix, an eigensolver that does not converge)
// is an error or a warning with a reason, never a NaN passed on silently;
// a NaN standard error always comes with a warning saying why. Panics are
// reserved for programmer mistakes, such as a malformed internal cluster
// table or an unknown coupling name in an operator list.
//
// # References
//
// D. W. Marquardt, J. Soc. Indust. Appl. Math. 11, 431 (1963); J. J. Moré,
// Lecture Notes in Mathematics 630, 105 (1978) for the scaled
// Levenberg–Marquardt step; H. Akaike, IEEE Trans. Autom. Control 19, 716
// (1974) for AIC; G. Schwarz, Ann. Stat. 6, 461 (1978) for BIC; E. Tiesinga
// et al., Rev. Mod. Phys. 93, 025010 (2021) for CODATA 2018.
package bulk
