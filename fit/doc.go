// Package fit learns the coefficients of a local Hamiltonian from
// measurements of its Gibbs state, with honest error bars, and plans how
// many shots a target precision costs.
//
// # Data
//
// Measurements arrive as an expectation table (header
// pauli,sites,value,stderr; ReadTable, WriteTable) or as a snapshot file of
// product-basis shots (header basis,outcome,count; ScanSnapshots streams
// it, SnapshotWriter writes it). LoadEstimates reads either, tells them
// apart by the header, and returns Estimates aligned with a template's
// terms: values, standard errors, and the covariance of estimates that
// share shots (a cluster.SparseSym; CovarianceOptions says which pairs
// are kept). Exactness is
// never implied: a value is exact only when its stderr says "exact"
// (ExactStderr); a blank or zero stderr is an error naming the file and
// line. Rows that match no template term are an error too, each named by
// its line, so nothing in the data is silently dropped.
//
// # The fit
//
// Learning lambda is the convex maximum-entropy dual problem
//
//	minimise G(lambda) = log Z(lambda) + beta sum_k lambda_k e_k,
//
// whose minimum reproduces the measured expectations e_k (Jaynes 1957).
// Fit evaluates log Z, <E_k> and the response d<E_k>/d lambda_j with the
// linked-cluster expansion of package cluster, takes damped Newton steps
// solved by conjugate gradients on the sparse response projected onto
// the parameters (a cluster.SparseSym, like the response and the data
// covariance; the fitter has no matrix type of its own), and stops when
// every gradient component is below a small fraction of its data noise.
// On large lattices the response of order L costs about four forward
// passes, so the exact order-L gradient is paired with the response of
// order L-1, summed in the same pass over the clusters and kept for the
// order's later steps: each step then shrinks the gradient by a few per
// cent, and a fit started from the order-(L-1) solution converges in two
// or three forward passes. A step that stalls or fails falls back on the
// exact response (Options.Curvature; newton_driver.go is the one loop for
// the dual and for moment matching). A fit that does not converge is not
// an error: the Result says so and why, and commands never write it over
// an existing file. Terms sharing a Group share one coefficient (Params);
// terms without data are fitted through their group by moment matching.
// Without beta the products beta*lambda are fitted, and every output says
// so (Result.CoefficientsAreLambda is false, the report's "coefficients"
// is "beta*lambda"). ScaleEnergy fixes the energy scale after the fact
// from one calibrated coefficient or a known beta (Calibration): beta =
// theta_r/lambda_r with its error bar from the delta method on the fitted
// covariance, every coefficient converted to lambda with error bars that
// include the scale's.
//
// The expansion order is the fit's main approximation. The orders L-4
// to L-1 are fitted first, each from the solution below it, and the
// changes of the coefficients, extrapolated per parity (Truncation),
// estimate each coefficient's truncation error, which the Result
// compares with the statistical error: a WARNING when it exceeds some
// coefficient's standard error, and the automatic order rises until the
// largest estimate is below a tenth of the median one, within
// cluster.OrderPolicy's ceiling and per-evaluation work limit and the
// fit's own limit Options.MaxFitWork on the work of all its evaluations
// (order_work.go): work units and Newton iteration counts, so that the
// same data give the same order on every machine. The wall-clock
// Options.Budget is only a guard; when it stops the rise first,
// Result.StoppedByBudget is set and a Warning says the order depends on
// the machine.
//
// # Error bars and planning
//
// Error bars come from the delta method, Cov(theta) = M Cov(e) M^T with
// M = (A^T R A)^{-1} A^T and R the response at the solution, of order L
// or, where that is costly, L-1 (Result.ResponseOrder says which; the
// two differ by under 1% in the tests, 2% for tied parameters): dense
// Cholesky for small problems, local conjugate-gradient solves with an a
// posteriori bound for large ones (O(n)). With the truth known,
// CompareTruth gives pulls and L2/Linf errors; the honesty tests check
// that pulls have unit variance over hundreds of seeded repetitions and
// that the variance meets the Cramér–Rao bound. NewSignificance flags
// coefficients that are significantly non-zero at a false-discovery rate
// (Benjamini–Hochberg). PlanShots predicts, before any data are taken,
// the shots per basis a target precision needs, from the same delta
// method at a best-guess model; CoveringBases and SchemeBases choose the
// measurement bases.
//
//	est, _, err := fit.LoadEstimates("data.csv", tmpl.Lattice, tmpl.Terms, fit.DefaultCovarianceOptions())
//	if err != nil {
//		return err
//	}
//	res, err := fit.Fit(&fit.Problem{Lattice: tmpl.Lattice, Terms: tmpl.Terms, Data: est, Beta: 0.35}, fit.Options{})
//	// res.Converged, res.Coeffs, res.ThetaStderr, res.Truncation, res.Warnings
//
// # Invariants and panics
//
// Every number written by a writer of this package is finite: writers
// refuse NaN and infinities before writing a byte. Results are
// deterministic for any number of workers. Functions panic only on
// programmer misuse (mismatched slice lengths); everything that comes from
// data is an error naming its source.
//
// Sub-packages: fit/bulk fits uniform couplings to bulk thermodynamic
// curves of materials; fit/stationary learns coefficients from the
// stationarity of the thermal state, where the expansion does not
// converge, and combines them with a converged fit: Result.Propagate
// (the fit's first-order map from data to parameters) gives the
// correlation of the two, and Result.WithParameters writes the
// combination back into a Result.
package fit
