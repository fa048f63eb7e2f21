package fit

import (
	"math"
	"math/rand/v2"
)

// binomial draws an exact Binomial(n, p) variate.
//
// For n·min(p, 1-p) < 10 it inverts the distribution function by
// sequential search from 0 (expected cost n·p + 1 steps). Otherwise it
// uses Hörmann's BTRD, transformed rejection with decomposition
// (W. Hörmann, "The generation of binomial random variates", J. Statist.
// Comput. Simul. 46 (1993) 101–110): most variates come from the cheap
// central part; the rest pass an exact acceptance test against the
// binomial probabilities (by recursion near the mode, by Stirling's
// series with its correction terms far from it), so the output follows
// the binomial law exactly up to floating-point rounding. The normal
// approximation is never used. (gonum's distuv.Binomial, v0.17, follows
// Numerical Recipes, whose branch for n ≥ 25, n·p < 1 accepts with a
// Padé approximation of log(1+x) and a tuned constant, so it is not
// exact there; hence this implementation.)
func binomial(rng *rand.Rand, n int64, p float64) int64 {
	switch {
	case n <= 0 || p <= 0:
		return 0
	case p >= 1:
		return n
	case p > 0.5:
		return n - binomial(rng, n, 1-p)
	}
	if float64(n)*p < 10 {
		return binomialInversion(rng, n, p)
	}
	return binomialBTRD(rng, n, p)
}

// binomialInversion needs p ≤ 1/2 and n·p small: q^n then cannot
// underflow (it is at least e^-20).
func binomialInversion(rng *rand.Rand, n int64, p float64) int64 {
	q := 1 - p
	s := p / q
	f0 := math.Exp(float64(n) * math.Log1p(-p))
	for {
		u := rng.Float64()
		f := f0
		k := int64(0)
		for u > f {
			u -= f
			k++
			if k > n {
				break // rounding left mass beyond n; draw again
			}
			f *= s * float64(n-k+1) / float64(k)
		}
		if k <= n {
			return k
		}
	}
}

// binomialBTRD is algorithm BTRD for p ≤ 1/2 and n·p ≥ 10; the step
// labels follow the paper.
func binomialBTRD(rng *rand.Rand, n int64, p float64) int64 {
	nf := float64(n)
	// Step 0: set-up.
	m := math.Floor((nf + 1) * p)
	r := p / (1 - p)
	nr := (nf + 1) * r
	npq := nf * p * (1 - p)
	sq := math.Sqrt(npq)
	b := 1.15 + 2.53*sq
	a := -0.0873 + 0.0248*b + 0.01*p
	c := nf*p + 0.5
	alpha := (2.83 + 5.1/b) * sq
	vr := 0.92 - 4.2/b
	urvr := 0.86 * vr
	for {
		// Step 1: the central region, accepted without a test.
		v := rng.Float64()
		if v <= urvr {
			u := v/vr - 0.43
			return int64(math.Floor((2*a/(0.5-math.Abs(u))+b)*u + c))
		}
		// Step 2: a point of the hat outside the box.
		var u float64
		if v >= vr {
			u = rng.Float64() - 0.5
		} else {
			u = v/vr - 0.93
			u = math.Copysign(0.5, u) - u
			v = rng.Float64() * vr
		}
		// Step 3.0.
		us := 0.5 - math.Abs(u)
		kf := math.Floor((2*a/us+b)*u + c)
		if kf < 0 || kf > nf {
			continue
		}
		k := int64(kf)
		v = v * alpha / (a/(us*us) + b)
		km := math.Abs(kf - m)
		if km <= 15 {
			// Step 3.1: f(k)/f(m) by the recursion of the probabilities.
			f := 1.0
			mi := int64(m)
			if mi < k {
				for i := mi + 1; i <= k; i++ {
					f *= nr/float64(i) - r
				}
			} else if mi > k {
				for i := k + 1; i <= mi; i++ {
					v *= nr/float64(i) - r
				}
			}
			if v <= f {
				return k
			}
			continue
		}
		// Step 3.2: squeeze on log v.
		v = math.Log(v)
		rho := (km / npq) * (((km/3+0.625)*km+1.0/6)/npq + 0.5)
		t := -km * km / (2 * npq)
		if v < t-rho {
			return k
		}
		if v > t+rho {
			continue
		}
		// Steps 3.3–3.4: the exact test with Stirling corrections.
		nm := nf - m + 1
		h := (m+0.5)*math.Log((m+1)/(r*nm)) + stirlingTail(m) + stirlingTail(nf-m)
		nk := nf - kf + 1
		if v <= h+(nf+1)*math.Log(nm/nk)+(kf+0.5)*math.Log(nk*r/(kf+1))-stirlingTail(kf)-stirlingTail(nf-kf) {
			return k
		}
	}
}

// stirlingTail is log k! - [log sqrt(2π) + (k + 1/2) log(k + 1) - (k + 1)],
// the remainder of Stirling's formula for (k+1)!/(k+1). Small k use
// math.Lgamma directly; larger k the asymptotic series
// 1/(12 x) - 1/(360 x³) + 1/(1260 x⁵), x = k + 1, whose error is below
// 1/(1680 x⁷) < 1e-10 for k ≥ 10 (the terms alternate and decrease).
func stirlingTail(k float64) float64 {
	if k < 10 {
		lg, _ := math.Lgamma(k + 1)
		return lg - (0.5*math.Log(2*math.Pi) + (k+0.5)*math.Log(k+1) - (k + 1))
	}
	x := k + 1
	x2 := x * x
	return (1.0/12 - (1.0/360-1.0/(1260*x2))/x2) / x
}
