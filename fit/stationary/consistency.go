package stationary

import (
	"fmt"
	"math"

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
// expectations and Chi2/DOF is large. Chi2 counts only the noise of the
// term expectations; Chi2Direction adds that of the learned direction,
// propagated through the Gibbs state along its largest error directions
// (a direction off by its own error bars moves the expectations by much
// more than their shot noise: exact snapshots of the 3x3 XXZ model at
// beta 1, 2x10^5 shots per basis, give Chi2/DOF 200-400 and
// Chi2Direction/DOF about 2; the tests' 8-chain gives 12 and 0.5).
// NotThermal uses Chi2Direction when it was computed.
func CheckThermal(sys *System, est *fit.Estimates, d *Direction, evaluate Evaluator) (*ThermalMatch, error) {
	// Fix's error bars propagate the direction's noise into the match
	// (Chi2Direction), which the test needs: without it a direction off
	// by its own error bars fails thermal data.
	res, err := Fix(sys, est, d, Gauge{Beta: 1, Evaluate: evaluate}, Options{})
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
	if m.DirectionRank > 0 {
		dof := float64(max(m.DOF, 1))
		return m.Chi2Direction > max(NotThermalDirectionChi2PerDOF*dof, dof+5*math.Sqrt(2*dof))
	}
	return m.Chi2 > NotThermalChi2PerDOF*float64(max(m.DOF, 1))
}

// Inconclusive reports whether the consistency test could not count all
// of the direction's noise (more error directions than the time budget
// allows, directionNoiseBudget): a large Chi2Direction then does not
// prove the state non-thermal.
func (m *ThermalMatch) Inconclusive() bool {
	return !m.directionComplete
}

// NotThermalDirectionChi2PerDOF is the threshold on Chi2Direction/DOF:
// with the direction's noise counted, thermal data give about one; the
// margin allows for the error directions not propagated (measured in
// consistency_test.go).
const NotThermalDirectionChi2PerDOF = 3
