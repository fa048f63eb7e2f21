package fit

import (
	"fmt"
	"math"

	"warmfit/lattice"
)

// TruthComparison compares fitted coefficients with known true ones (a
// simulation's input model).
type TruthComparison struct {
	// True[k] is the true coefficient compared with term k (0 for a
	// template term the truth lacks), after the scale.
	True []float64
	// Z[k] = (fit_k - truth_k) / stderr_k, the pull; NaN where the
	// stderr is zero.
	Z []float64
	// Errors over the template terms: L2 = sqrt(sum (fit - truth)^2),
	// Linf = max |fit - truth|. LargestErrorTerm is the term of Linf (the
	// largest |fit - truth|), LargestPullTerm the term of MaxAbsZ (the
	// largest |pull|, -1 without error bars): the two differ whenever the
	// error bars differ.
	L2, Linf         float64
	LargestErrorTerm int
	LargestPullTerm  int
	// MaxAbsZ and RMSZ summarise the z-scores over terms with a stderr;
	// for honest error bars RMSZ is near 1.
	MaxAbsZ, RMSZ float64
	// Missing counts true terms with a non-zero coefficient that the
	// template lacks; MissingL2 is the L2 norm of their coefficients
	// (included in L2, and MissingLinf in Linf).
	Missing                int
	MissingL2, MissingLinf float64
	// Scale is the factor the true coefficients were multiplied by.
	Scale float64
}

// CompareTruth compares the fit with the true terms. Template terms the
// truth does not list have true coefficient 0. The true coefficients are
// multiplied by scale first (pass the true beta when the fit determined
// beta*lambda because beta was unknown, 1 otherwise).
func CompareTruth(res *Result, truth []lattice.Term, scale float64) (*TruthComparison, error) {
	if math.IsNaN(scale) || math.IsInf(scale, 0) || scale <= 0 {
		return nil, fmt.Errorf("truth scale %v: must be a positive finite number", scale)
	}
	want := make(map[string]float64, len(truth))
	for _, t := range truth {
		want[t.Key()] = scale * t.Coeff
	}
	c := &TruthComparison{True: make([]float64, len(res.Terms)), Z: make([]float64, len(res.Terms)), LargestErrorTerm: -1, LargestPullTerm: -1, Scale: scale}
	var sum2, z2 float64
	nz := 0
	for k, t := range res.Terms {
		tv := want[t.Key()]
		delete(want, t.Key())
		c.True[k] = tv
		d := t.Coeff - tv
		sum2 += d * d
		if ad := math.Abs(d); c.LargestErrorTerm < 0 || ad > c.Linf {
			c.Linf, c.LargestErrorTerm = ad, k
		}
		c.Z[k] = math.NaN()
		if t.HasStderr && t.Stderr > 0 {
			z := d / t.Stderr
			c.Z[k] = z
			z2 += z * z
			nz++
			if az := math.Abs(z); c.LargestPullTerm < 0 || az > c.MaxAbsZ {
				c.MaxAbsZ, c.LargestPullTerm = az, k
			}
		}
	}
	for _, v := range want {
		if v == 0 {
			continue
		}
		c.Missing++
		c.MissingL2 += v * v
		c.MissingLinf = math.Max(c.MissingLinf, math.Abs(v))
	}
	c.MissingL2 = math.Sqrt(c.MissingL2)
	c.L2 = math.Sqrt(sum2 + c.MissingL2*c.MissingL2)
	c.Linf = math.Max(c.Linf, c.MissingLinf)
	if nz > 0 {
		c.RMSZ = math.Sqrt(z2 / float64(nz))
	}
	return c, nil
}
