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
	var shots float64
	switch p.Norm {
	case NormLinf:
		shots = p.Z * p.Z * slices.Max(p.VarPerShot) / (target * target)
	case NormL2:
		var sum float64
		for _, v := range p.VarPerShot {
			sum += v
		}
		shots = sum / (target * target)
	default:
		return nil, fmt.Errorf("plan: norm %q: want %s or %s", p.Norm, NormLinf, NormL2)
	}
	if shots > math.MaxInt64/float64(len(p.Bases)+1) {
		return nil, fmt.Errorf("plan: about %.3g shots per basis needed: beyond any experiment", shots)
	}
	q := *p
	q.Target = target
	q.ShotsPerBasis = max(int64(math.Ceil(shots)), 2)
	q.TotalShots = q.ShotsPerBasis * int64(len(p.Bases))
	q.Stderr = make([]float64, len(p.VarPerShot))
	for k, v := range p.VarPerShot {
		q.Stderr[k] = math.Sqrt(v / float64(q.ShotsPerBasis))
	}
	q.Notes = slices.Clone(p.Notes)
	q.Warnings = slices.Clone(p.Warnings)
	return &q, nil
}
