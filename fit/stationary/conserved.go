package stationary

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/floats"
)

// conservedDirection is a uniform field whose constraints vanish.
type conservedDirection struct {
	name   string
	vector []float64
	chi2   float64
	dof    int
}

// findConserved tests every uniform-field direction u the terms can
// express (conservedCandidates): when the constraint residuals along it,
// M u, are consistent with their noise (chi² = sum_a (M_a u)²/Var within
// five standard deviations of its degrees of freedom), u commutes with
// the state's Hamiltonian, as total Z does in U(1) models, and the
// constraints cannot see it.
func findConserved(sys *System, ws *weighted) []conservedDirection {
	names, vecs := conservedCandidates(sys)
	var out []conservedDirection
	for c, u := range vecs {
		var chi2 float64
		dof := 0
		for a := range ws.rows() {
			lo, hi, _ := ws.block(a)
			var r float64
			touches := false
			for e := lo; e < hi; e++ {
				if x := u[ws.param[e]]; x != 0 {
					r += ws.val[e] * x
					touches = true
				}
			}
			if !touches {
				continue
			}
			v := ws.noiseOf(a, u)
			if v <= 0 {
				continue
			}
			chi2 += r * r / v
			dof++
		}
		if dof > 0 && chi2 < float64(dof)+5*math.Sqrt(2*float64(dof)) {
			out = append(out, conservedDirection{name: names[c] + ": its constraints vanish within noise (a conserved quantity, or too little signal)", vector: u, chi2: chi2, dof: dof})
		}
	}
	return out
}

// penaltyScale is the factor of the largest diagonal entry of X given to
// a conserved direction, which moves it far above the low spectrum.
const penaltyScale = 10

// addPenalty adds s u u^T (v) for each conserved direction.
func (ws *weighted) addPenalty(dst, v []float64, s float64) {
	for _, c := range ws.penalty {
		floats.AddScaled(dst, s*floats.Dot(c.vector, v), c.vector)
	}
}

func (c conservedDirection) String() string {
	return fmt.Sprintf("%s (constraint chi2 %.3g for %d dof)", c.name, c.chi2, c.dof)
}
