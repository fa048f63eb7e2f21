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
//
// # Conserved quantities and blocks
//
// Most models conserve something, and a conserved quantity splits the
// Hamiltonian's matrix into blocks that are diagonalised separately, at
// the cost of the sum of the cubes of their dimensions instead of D^3.
// DetectSymmetry decides from the terms and their coefficients (never
// from the model's name) which of these holds:
//
//   - TotalZ: H conserves sum_i Z_i, the number of qubits in state 1.
//     Sector k holds the C(n, k) basis states with k ones, and every
//     level has total Z n - 2k. An XX and a YY term on one bond conserve
//     it only together and with equal coefficients, so the detector
//     evaluates the matrix elements of the terms that flip the same
//     qubits rather than matching letter patterns.
//   - ParityZ, ParityX, ParityY: H commutes with prod_i Z_i, prod_i X_i
//     or prod_i Y_i. The X and Y parities are turned into ParityZ by a
//     fixed relabelling of every qubit's letters (X->Z->Y->X or
//     X->Y->Z->X, rotations of the Bloch sphere, so no signs), after which
//     the sectors are the two popcount parities of 2^(n-1) states each.
//
// Diagonalize and Spectrum.Factorize use the symmetry DetectSymmetry
// finds; Spectrum.FactorizeWith takes one, NoSymmetry for the dense
// decomposition, and refuses a symmetry the Hamiltonian does not have.
// The eigenvectors are kept block-sparse: each lies in one sector.
// Spectrum.Values and Spectrum.Vector still speak of all levels in
// ascending order and of computational basis states; Vector rotates
// eigenvectors of a relabelled frame back.
//
// Thermal works from the block form. Its state is block diagonal, so an
// operator that moves every basis state out of its sector (X_i under
// TotalZ, any string with an odd number of X and Y letters under
// ParityZ) has expectation exactly zero: by the symmetry of the Gibbs
// state, which holds because H has the symmetry. Operators need not have
// it themselves: XX alone does not conserve total Z, yet part of it stays
// within the sectors and its expectation is the sum over those pairs.
// Thermal.Response sums the Kubo–Mori covariance over the pairs of
// sectors an operator connects, so the response of a conserving operator
// to one that leaves every sector is exactly zero, and pairs of
// non-conserving operators (XX and YY under TotalZ) meet in the pairs of
// sectors both connect.
//
// Expansion.Evaluate with Options.Response sums the clusters' responses
// into a SparseSym (Result.Response), the module's one sparse symmetric
// matrix: package fit keeps data covariances and its parameter-space
// Hessians in it too (sparse.go); Options.ResponseOrder takes it
// at a lower order than the expectations in the same pass, which a fitter
// uses as a cheap curvature (the Kubo–Mori sums of the largest clusters
// cost about four times their diagonalisation). The sum runs in a dense
// matrix per worker and block (response_acc.go) in a fixed order, so it is
// bit-identical for any number of workers.
//
// Where no eigenvector is needed, Levels computes the eigenvalues alone,
// sector by sector (tridiagonal reduction without accumulated
// transformations, then a root-free QL), with the label of each level's
// sector; Levels.Gibbs gives log Z, energy, entropy and heat capacity
// and, under TotalZ, the magnetisation sum_i <Z_i> and its variance,
// which need only the labels. Expansion.Thermodynamics uses it, and so
// can any caller that needs thermodynamics of one Hamiltonian.
//
// A symmetry of a whole model holds for every cluster: the expansion
// keeps or drops terms by their support, the parities are properties of
// single terms, and total Z conservation splits into one condition per
// support (see conservesTotalZ). Expansion.Evaluate and
// Expansion.Thermodynamics therefore detect the model's symmetry once
// (Expansion.Symmetry), check it cheaply on every cluster, record it in
// Result.Symmetry and ThermoResult.Symmetry, and count the work of
// Options.MaxWork and EstimateWork in blocks. Options.IgnoreSymmetry
// forces the dense path, for cross-checks and timing; results agree to
// rounding.
//
// Example: the XXZ chain in a Z field conserves total Z.
//
//	h := &cluster.Hamiltonian{NumQubits: 2,
//		Ops:    []cluster.PauliString{xx, yy, zz, z0},
//		Coeffs: []float64{0.5, 0.5, 1, 0.2}}
//	var l cluster.Levels
//	if err := l.Factorize(h); err != nil { ... }
//	// l.Symmetry() == cluster.TotalZ; l.TotalZ(i) labels every level.
//	g, _ := l.Gibbs(0.7) // g.TotalZ, g.TotalZVariance
//
// Invariants: a Spectrum, Levels or Thermal reuses its memory on every
// Factorize or Set, and a Thermal refers to its Spectrum, which must not
// be re-factorised while the Thermal is in use; none of them is safe for
// concurrent modification. Misuse panics (operators outside the qubits,
// short destination slices, coefficient lists of the wrong length);
// numerical failure and a symmetry the Hamiltonian does not have are
// errors.
//
// # Site-resolved expansion
//
// Expansion sums a model with its own coefficient on every term over
// every connected cluster of a finite lattice: each cluster is
// diagonalised and enters every order through its perimeter multiplier
// (expansion.go). Its results are lattice totals.
//
// A cluster's eigendecomposition does not depend on the temperature, so
// a grid of temperatures is one pass (grid.go): Expansion.EvaluateGrid
// diagonalises each cluster once, computes the diagonal elements
// <n|E_k|n> of its terms once (eigen_diagonal.go), and sums every beta as
// Boltzmann weights times those elements; Expansion.Thermodynamics is the
// same pass on eigenvalues alone. Both add their blocks in block order,
// so grids are as deterministic as Evaluate, and equal to Evaluate at
// each beta to rounding.
//
//	res, err := exp.EvaluateGrid(coeffs, []float64{0.1, 0.3, 0.5}, cluster.Options{Order: 6})
//	// res.Expect[i][o][k]: <E_k> at res.Betas[i], order o+1
//
// # Uniform (bulk) expansion
//
// UniformExpansion sums a translation-invariant model on the infinite
// lattice of a built-in kind over classes of identical clusters
// (lattice.ClusterClasses): one diagonalisation per class, weighted by
// its count per site and perimeter. The model is given per bond kind and
// site kind as Pauli-string templates grouped into couplings, whose
// values are supplied at evaluation:
//
//	m := cluster.HeisenbergModel("square") // J sum S_i.S_j: XX, YY, ZZ with weight 1/4
//	u, err := cluster.NewUniformExpansion(m, 10)
//	r, err := u.Evaluate([]float64{1}, cluster.UniformOptions{
//		Temperatures: temps, Fields: []float64{0, 0.5}, Derivatives: true})
//	chi := r.Curve(cluster.QuantitySusceptibility, 0, cluster.TrustOptions{})
//	// chi.Value[i], chi.Trust[i], chi.BareReach, chi.DValue[p][i]
//
// Conventions: coupling weights multiply Pauli strings (not spin
// operators); the field h is an energy coupling to the total spin,
// H = sum_p v_p H_p - h sum_i S^z_i; every curve is per site with
// k_B = 1: ln Z/N (including ln 2), E = <H>/N (Zeeman term included),
// S/N in nats, C/N, M = <S^z>/N and chi = dM/dh, for every order 1..L at
// every (field, temperature) of the grid.
//
// Blocks are read off the templates at the given values
// (uniform_symmetry.go). When H0 conserves the total S^z the clusters are
// diagonalised sector by sector, once for all fields (the field only
// shifts a level by -h m); with the spin flip also a symmetry, only the
// sectors m >= 0 are diagonalised and m = 0 is split by flip parity.
// When every coupling is isotropic exchange (sums of w (XX + YY + ZZ),
// as in HeisenbergModel, J1-J2 models, ladders) the blocks are those of
// total spin instead (uniform_su2.go): the Hamiltonian is a combination
// of transpositions of sites, acting on the irreducible representation of
// the symmetric group of each two-row shape (n/2 + S, n/2 - S), written in
// Young's orthogonal form, and each eigenvalue is a multiplet of 2S+1
// levels. At 16 sites the largest block has 3640 states where the largest
// S^z block has 11440; the blocks of all classes of a chunk are solved as
// parallel tasks, largest first, so one big cluster does not leave the
// other workers idle (the chain has one class per size).
// Classical (diagonal) models need no diagonalisation. Where only
// eigenvalues are needed (no derivatives, or a single coupling, whose
// Hellmann–Feynman element is E_n/v) only eigenvalues are computed
// (Householder tridiagonalisation and root-free QL); several couplings
// with derivatives need eigenvectors for <n|H_p|n>. A model that does not
// conserve S^z is diagonalised in the full space with eigenvectors, at
// every field, and its chi and dM/dv come from Kubo–Mori sums; its
// d chi/dv is not computed (Derivative says so).
//
// Derivatives of every curve with respect to every coupling are
// analytic: the Hellmann–Feynman elements D_n = <n|H_p|n> are exact
// derivatives of the levels for trace functions, degeneracies included
// (uniform_thermo.go lists the formulas).
//
// # Resummation and trust
//
// EulerSum (the Euler transform of the tail of the series from a chosen
// order) and WynnCycles (Wynn's epsilon with a fixed number of cycles)
// accelerate partial sums in the forms used for linked-cluster series.
// UniformResult.Curve resums a curve and judges each grid point: bare
// sums trusted where the last orders agree within a tolerance (default
// 1e-3 per site in the quantity's unit), resummations where Wynn and
// Euler agree with each other and between the last two orders; the
// reaches are the lower ends of the trusted ranges contiguous with the
// highest temperature. A caller writing curves must pass the Trust marks
// on: untrusted points carry the bare sum only as a placeholder.
//
// Site-resolved series (Result.TermConvergence, and every command's
// trunc_error and trusted columns) are judged by Converge: its truncation
// estimate extrapolates the last three or four steps of the series from
// the quantity's first order on, skipping orders that add nothing, with
// coefficients per sign pattern of the steps fitted to exact references
// (free-fermion chains, dense patches) so that it bounds about 95% of true
// errors while sitting about 3 times above them; guards keep it at least
// the geometric tail of a steady ratio and at least the last step of a
// series that stalls. README.md "Truncation estimates against exact
// results" has the measured table.
package cluster
