package stationary

import (
	"fmt"

	"warmfit/fit"
)

// CheckThermal is the maximum-entropy consistency test of a learned
// direction: it matches the Gibbs states exp(-s H_theta) of the learned
// direction (one free multiplier s = beta times the scale, plus any
// invisible direction) to the measured term expectations and returns the
// match, whose Chi2/DOF is near one when the state is thermal. A
// stationary state that is not a Gibbs state (any other function of H,
// for example a mixture of temperatures) satisfies the constraints just
// as well, so the direction is still right, but no s reproduces its
// expectations and Chi2/DOF is large. The chi² counts only the noise of
// the term expectations, not that of the direction, so thermal data give
// values of a few at moderate shot numbers; NotThermal uses a threshold
// that allows for it.
func CheckThermal(sys *System, est *fit.Estimates, d *Direction, evaluate Evaluator) (*ThermalMatch, error) {
	res, err := Fix(sys, est, d, Gauge{Beta: 1, Evaluate: evaluate}, Options{DenseLimit: 1})
	if err != nil {
		return nil, fmt.Errorf("stationary: thermal consistency: %w", err)
	}
	return res.Match, nil
}

// NotThermalChi2PerDOF is the chi²/dof above which CheckThermal's match
// counts as failed: well above what the direction's own noise adds for
// thermal data (measured in consistency_test.go).
const NotThermalChi2PerDOF = 30

// NotThermal reports whether the match rejects a Gibbs state.
func (m *ThermalMatch) NotThermal() bool {
	return m.Chi2 > NotThermalChi2PerDOF*float64(max(m.DOF, 1))
}
