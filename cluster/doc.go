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
// # Site-resolved expansion
//
// Expansion sums a model with its own coefficient on every term over
// every connected cluster of a finite lattice: each cluster is
// diagonalised and enters every order through its perimeter multiplier
// (expansion.go). Its results are lattice totals.
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
// Blocks are read off the templates at the given values (uniform_
// symmetry.go). When H0 conserves the total S^z the clusters are
// diagonalised sector by sector, once for all fields (the field only
// shifts a level by -h m); with the spin flip also a symmetry, only the
// sectors m >= 0 are diagonalised and m = 0 is split by flip parity.
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
package cluster
