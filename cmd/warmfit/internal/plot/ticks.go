package plot

import "math"

// The one nice-number routine of the package: steps of 1, 2, 2.5 or 5
// times a power of ten, the usual choice for readable tick labels
// (common practice), and the ticks and ranges built on them.

// niceSteps are the mantissas of a step; integer axes leave out 2.5.
var (
	niceSteps    = []float64{1, 2, 2.5, 5, 10}
	integerSteps = []float64{1, 2, 5, 10}
)

// NiceStep returns the smallest step of 1, 2, 2.5 or 5 times a power of
// ten that divides span into at most intervals parts: for a histogram's
// bin width, or a tick step two axes should share (Axis.Step). A span
// that is not positive and finite gets 1.
func NiceStep(span float64, intervals int) float64 { return niceStep(span, intervals, false) }

// niceStep returns the smallest nice step at least span/target; integer
// axes get steps of at least 1.
func niceStep(span float64, target int, integer bool) float64 {
	if !(span > 0) || math.IsInf(span, 0) {
		return 1
	}
	raw := span / float64(max(target, 1))
	mantissas := niceSteps
	if integer {
		mantissas = integerSteps
		raw = math.Max(raw, 1)
	}
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, m := range mantissas {
		if raw <= m*mag*(1+1e-9) {
			return m * mag
		}
	}
	return 10 * mag
}

// maxTicks bounds the ticks of one axis, whatever the caller's range.
const maxTicks = 60

// linearTicks returns the multiples of step inside [lo, hi], each
// snapped to the grid so that zero prints as 0 and not 1e-17.
func linearTicks(lo, hi, step float64) []float64 {
	first := math.Ceil(lo/step - 1e-9)
	var ticks []float64
	for k := first; k*step <= hi+step*1e-9 && len(ticks) < maxTicks; k++ {
		ticks = append(ticks, multiple(k, step))
	}
	return ticks
}

// multiple returns k times step, dividing by 1/step when that is a
// whole number so that 28 x 0.2 comes out as 5.6 and not
// 5.6000000000000005.
func multiple(k, step float64) float64 {
	if step < 1 {
		if inv := math.Round(1 / step); math.Abs(inv*step-1) < 1e-12 {
			return k / inv
		}
	}
	return k * step
}

// widen returns [lo, hi] widened outward to multiples of a nice step for
// about target intervals; an empty or one-point range first gets a width
// of its own (10% of its value, or 1 about zero).
func widen(lo, hi float64, target int, integer bool) (float64, float64) {
	if !(hi > lo) {
		d := math.Abs(lo) * 0.1
		if d == 0 {
			d = 1
		}
		lo, hi = lo-d, hi+d
	}
	step := niceStep(hi-lo, target, integer)
	return multiple(math.Floor(lo/step+1e-9), step), multiple(math.Ceil(hi/step-1e-9), step)
}

// logTicks returns the decades 10^k inside [lo, hi] (lo > 0) as major
// ticks (on a long axis only every second or third power, the others
// becoming minor ticks) and, when the range spans few decades, the minor
// ticks 2..9 times them. A range inside one decade gets linear nice
// ticks as majors instead.
func logTicks(lo, hi float64) (major, minor []float64, decades bool) {
	k0 := int(math.Ceil(math.Log10(lo) - 1e-9))
	k1 := int(math.Floor(math.Log10(hi) + 1e-9))
	if k1 < k0 {
		step := niceStep(hi-lo, 4, false)
		return linearTicks(lo, hi, step), nil, false
	}
	every := max(1, (k1-k0+1+7)/8) // at most about 8 labelled decades
	for k := k0; k <= k1; k++ {
		if k%every == 0 {
			major = append(major, math.Pow(10, float64(k)))
		} else {
			minor = append(minor, math.Pow(10, float64(k)))
		}
	}
	if k1-k0 <= 6 {
		for k := k0 - 1; k <= k1; k++ {
			for m := 2; m <= 9; m++ {
				v := float64(m) * math.Pow(10, float64(k))
				if v >= lo*(1-1e-9) && v <= hi*(1+1e-9) {
					minor = append(minor, v)
				}
			}
		}
	}
	return major, minor, true
}

// widenLog returns [lo, hi] widened outward to whole decades.
func widenLog(lo, hi float64) (float64, float64) {
	if !(hi > lo) {
		lo, hi = lo/2, hi*2
	}
	return math.Pow(10, math.Floor(math.Log10(lo)+1e-9)), math.Pow(10, math.Ceil(math.Log10(hi)-1e-9))
}
