package validate

import (
	"errors"
	"fmt"
	"math"
)

// Thermal vectors exp(-tau H)|r> are computed by a Chebyshev expansion
// rather than a Lanczos (Krylov) approximation. Both converge in about
// tau*(Emax-Emin)/2 + O(sqrt) matrix-vector products, but the Chebyshev
// recurrence needs three vectors of memory whatever the number of terms
// (Lanczos stores its whole basis or runs twice), its error has an a-priori
// bound (the tail of the coefficient series, since |T_k| <= 1 on the
// spectrum) that is checked as it goes, and its coefficients do not depend
// on the start vector, so one set serves all random vectors. Its one need,
// bounds on the spectrum, comes from a short Lanczos run (lanczos.go) and
// is verified during the recurrence: Chebyshev vectors must not grow.
//
// Expansion (Abramowitz & Stegun 9.6.34, e^{x cos t} = I_0(x) + 2 sum_k
// I_k(x) cos kt): with H = a Hs + b and the spectrum of Hs in [-1, 1],
//
//	exp(-tau H) = e^{-tau Eref} sum_k c_k T_k(Hs),
//	c_0 = s_0, c_k = 2 s_k (-1)^k (tau > 0) or 2 s_k (tau < 0),
//	s_k = e^{-x} I_k(x), x = |tau| a,
//
// with Eref = b - a (the lower bound) for tau > 0 and b + a for tau < 0.
// The scaled coefficients satisfy s_0 + 2 sum s_k = 1, so the series never
// overflows whatever beta is: the large factor e^{-tau Eref} is carried as
// a logarithm.

// scaledBesselI returns s_k = e^{-x} I_k(x) for k = 0..K (x >= 0), where K
// is large enough that the terms beyond it are below the float64 range
// relative to the sum. It uses Miller's backward recurrence
// I_{k-1} = (2k/x) I_k + I_{k+1} (A&S 9.6.26), which is stable for the
// decreasing solution, normalised by the identity e^x = I_0 + 2 sum I_k
// (A&S 9.6.37).
func scaledBesselI(x float64) []float64 {
	if x < 0 || math.IsNaN(x) || math.IsInf(x, 0) {
		panic(fmt.Sprintf("validate: scaledBesselI(%v)", x))
	}
	if x == 0 {
		return []float64{1}
	}
	// Start far enough that I_M / I_0 ~ exp(-(M-x)^2/(2x)) underflows for
	// large x, and (x/2)^M / M! does for small x.
	m := int(x+40*math.Sqrt(x)) + 60
	f := make([]float64, m+2)
	f[m] = 1e-300
	for k := m; k >= 1; k-- {
		f[k-1] = (2*float64(k)/x)*f[k] + f[k+1]
		if f[k-1] > 1e250 {
			for j := k - 1; j <= m; j++ {
				f[j] *= 1e-250
			}
		}
	}
	sum := f[0]
	for k := 1; k <= m; k++ {
		sum += 2 * f[k]
	}
	last := 0
	for k := 0; k <= m; k++ {
		f[k] /= sum
		if f[k] > 0 {
			last = k
		}
	}
	return f[:last+1]
}

// chebyshevExp holds the expansion of exp(-tau H) for spectral bounds
// [lo, hi].
type chebyshevExp struct {
	tau, lo, hi float64
	a, b        float64   // H = a Hs + b
	coef        []float64 // c_k
	tail        []float64 // tail[k] = sum_{j>k} |c_j|
	logScale    float64   // -tau Eref
}

func newChebyshevExp(tau, lo, hi float64) *chebyshevExp {
	e := &chebyshevExp{tau: tau, lo: lo, hi: hi, a: (hi - lo) / 2, b: (hi + lo) / 2}
	s := scaledBesselI(math.Abs(tau) * e.a)
	e.coef = make([]float64, len(s))
	for k, v := range s {
		c := v
		if k > 0 {
			c *= 2
			if tau > 0 && k%2 == 1 {
				c = -c
			}
		}
		e.coef[k] = c
	}
	e.tail = make([]float64, len(s))
	for k := len(s) - 2; k >= 0; k-- {
		e.tail[k] = e.tail[k+1] + math.Abs(e.coef[k+1])
	}
	if tau > 0 {
		e.logScale = -tau * lo
	} else {
		e.logScale = -tau * hi
	}
	return e
}

// errSpectrumEscape reports that a Chebyshev vector grew, so the spectrum
// of H is not inside the bounds used.
var errSpectrumEscape = errors.New("validate: spectrum outside the Chebyshev bounds")

// propagate sets psi = exp(-tau H) r exp(-logScale) to relative accuracy
// tol (in the 2-norm, given that the spectrum lies within the bounds).
// It overwrites r and uses w as scratch; psi must differ from both. It
// returns the number of terms used and |psi|^2.
func (e *chebyshevExp) propagate(o *vecOps, psi, r, w stateVec, tol float64) (terms int, npsi float64, err error) {
	_, nr := o.dot(r, r)
	npsi = o.scaleTo(psi, e.coef[0], r)
	rnorm := math.Sqrt(nr)
	if e.done(0, rnorm, npsi, tol) {
		return 1, npsi, nil
	}
	// growth allows for rounding in the recurrence; a genuine escape of
	// the spectrum makes the vectors grow without bound.
	const growth = 1 + 1e-6
	// v1 = Hs v0 into w, psi += c_1 v1.
	nv, npsi := o.step(w, r, psi, 1/e.a, -e.b/e.a, 0, e.coef[1])
	if nv > growth*nr {
		return 0, 0, errSpectrumEscape
	}
	prev, cur := r, w
	for k := 1; ; k++ {
		if e.done(k, rnorm, npsi, tol) {
			return k + 1, npsi, nil
		}
		if k+1 >= len(e.coef) {
			return 0, 0, fmt.Errorf("validate: Chebyshev series exhausted after %d terms (|psi|^2 = %g)", k+1, npsi)
		}
		// v_{k+1} = 2 Hs v_k - v_{k-1}, written over v_{k-1}.
		nv, npsi = o.step(prev, cur, psi, 2/e.a, -2*e.b/e.a, -1, e.coef[k+1])
		if nv > growth*nr || math.IsNaN(nv) {
			return 0, 0, errSpectrumEscape
		}
		prev, cur = cur, prev
	}
}

// done reports whether the coefficients after k are negligible: their sum
// bounds the norm of the remaining series relative to |r|.
func (e *chebyshevExp) done(k int, rnorm, npsi, tol float64) bool {
	return e.tail[k]*rnorm <= tol*math.Sqrt(npsi)
}
