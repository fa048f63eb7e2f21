package fit

import (
	"fmt"
	"slices"
)

// Curvature chooses the response that Newton steps and error bars use
// (see "Curvature at a lower order" in newton.go).
type Curvature int

const (
	// CurvatureAuto uses the order-L response when its evaluation is
	// cheap (estimated work at most exactResponseWork); otherwise Newton
	// steps take the response of order L-1 (when that order holds every
	// term) with the exact gradient of order L, and the error bars the
	// order-(L-1) response at the solution.
	CurvatureAuto Curvature = iota
	// CurvatureExact uses the order-L response everywhere: exact
	// Newton, several times slower on large lattices; the reference.
	CurvatureExact
	// CurvatureLower uses the order-(L-1) response everywhere, error
	// bars included, whatever the cost of the exact one.
	CurvatureLower
)

// String names the choice.
func (c Curvature) String() string {
	switch c {
	case CurvatureAuto:
		return "auto"
	case CurvatureExact:
		return "exact"
	case CurvatureLower:
		return "lower"
	}
	return fmt.Sprintf("Curvature(%d)", int(c))
}

// exactResponseWork is the largest estimated work (cluster.EstimateWork
// units; on a 20x20 square lattice order 3 is below, order 4 above) at
// which CurvatureAuto keeps the exact response: below it the saving is
// not worth a slower convergence.
const exactResponseWork = 1e7

// curvatureOrder returns the order of the response Newton steps at order
// L start with: L-1, unless that order cannot hold every term or the
// exact response is asked for; CurvatureAuto also keeps the exact one
// when it is cheap or when L-1 is the smallest order holding every term
// (that response misses every correlation beyond the terms' own
// supports: a poor curvature, measured to contract the gradient by only
// 0.43 per step on a 100x100 lattice).
func (f *fitter) curvatureOrder(L int) int {
	switch {
	case f.opt.Curvature == CurvatureExact || L-1 < f.minL:
		return L
	case f.opt.Curvature == CurvatureAuto && (L-1 == f.minL || f.cheapResponse(L)):
		return L
	}
	return L - 1
}

// cheapResponse reports whether the order-L evaluation is cheap enough
// that its exact response costs nothing worth saving.
func (f *fitter) cheapResponse(L int) bool {
	_, work := f.exp.EstimateWork(L)
	return work <= exactResponseWork
}

// errorBarCurvature makes the Hessian of an order's outcome the response
// at its solution: a response reused from an earlier iterate is evaluated
// again there, at its own order (the expectations of that order come
// along at little cost).
func (f *fitter) errorBarCurvature(of *orderFit) error {
	out := of.out
	if !out.converged || out.hessian == nil || slices.Equal(out.curvatureTheta, out.state.theta) {
		return nil
	}
	c := out.responseOrder
	ev, err := f.evaluator(c, c)(out.state.lambda, true)
	f.evaluations++
	if err != nil {
		return fmt.Errorf("order %d: the response at the solution: %v", c, err)
	}
	out.hessian = f.params.project(ev.response, -1)
	out.curvatureTheta = out.state.theta
	return nil
}
