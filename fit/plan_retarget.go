package fit

import (
	"errors"
	"fmt"
	"math"
	"slices"
)

// Retarget returns the plan for another target precision with the same
// model, scheme, norm and confidence. Shots scale as 1/target^2 because
// the variances per shot do not depend on the target, so no expansion is
// evaluated again: planning a ladder of targets costs one PlanShots.
func (p *Plan) Retarget(target float64) (*Plan, error) {
	if !(target > 0) || math.IsInf(target, 0) {
		return nil, fmt.Errorf("plan: target %v must be positive and finite", target)
	}
	if len(p.VarPerShot) == 0 || len(p.Bases) == 0 {
		return nil, errors.New("plan: Retarget needs a plan made by PlanShots")
	}
	q := *p
	q.Target = target
	if err := q.setShots(target); err != nil {
		return nil, err
	}
	q.Notes = slices.Clone(p.Notes)
	q.Warnings = slices.Clone(p.Warnings)
	return &q, nil
}
