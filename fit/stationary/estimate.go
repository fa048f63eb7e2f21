package stationary

import (
	"fmt"
	"io"

	"warmfit/fit"
)

// NewEstimator returns a snapshot estimator of every string of sys
// (fit.SnapshotEstimator: means and covariances from the same shots).
// Strings no shot serves are allowed to be missing; rows that use them
// are left out by Solve.
func NewEstimator(sys *System, opt fit.CovarianceOptions) (*fit.SnapshotEstimator, error) {
	opt.AllowMissing = make([]int, len(sys.Strings))
	for j := range opt.AllowMissing {
		opt.AllowMissing[j] = j
	}
	return fit.NewSnapshotEstimator(sys.n, sys.Strings, opt)
}

// EstimateSnapshots streams a snapshot file (fit.ScanSnapshots) into
// estimates of every string of sys.
func EstimateSnapshots(r io.Reader, name string, sys *System, opt fit.CovarianceOptions) (*fit.Estimates, error) {
	e, err := NewEstimator(sys, opt)
	if err != nil {
		return nil, err
	}
	if err := fit.ScanSnapshots(r, name, sys.n, e.Add); err != nil {
		return nil, err
	}
	return e.Result()
}

// EstimatesFromTable takes the strings of sys from an expectation table
// (variances only: a table carries no covariances). Strings the table
// lacks are missing.
func EstimatesFromTable(t *fit.Table, sys *System) (*fit.Estimates, error) {
	all := make([]int, len(sys.Strings))
	for j := range all {
		all[j] = j
	}
	est, _, err := fit.EstimatesFromTable(t, sys.Strings, all)
	if err != nil {
		return nil, fmt.Errorf("stationary: %w", err)
	}
	return est, nil
}
