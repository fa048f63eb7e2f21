package plot

import (
	"math"
	"strconv"
	"strings"
)

// formatNumber writes a coordinate or length for an attribute: rounded to
// 1/100 pixel, without exponent, and never NaN or Inf (ok is false then,
// and the caller records an error instead of writing).
func formatNumber(v float64) (s string, ok bool) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "", false
	}
	r := math.Round(v*100) / 100
	if r == 0 {
		return "0", true // also for -0
	}
	return strconv.FormatFloat(r, 'f', -1, 64), true
}

// span is a piece of a label: plain text, or a superscript.
type span struct {
	text  string
	super bool
}

// richText is a label that may hold superscripts (powers of ten).
type richText []span

func plain(s string) richText { return richText{{text: s}} }

func (r richText) String() string {
	var b strings.Builder
	for _, s := range r {
		if s.super {
			b.WriteString("^")
		}
		b.WriteString(s.text)
	}
	return b.String()
}

// minus is the typographic minus sign, wider than a hyphen.
const minus = "\u2212"

func withMinus(s string) string { return strings.Replace(s, "-", minus, 1) }

// tickLabels prints the values of one axis's ticks: with as many
// decimals as the step needs, or, when the step is below 1e-4 or a
// value reaches 1e5, each as a mantissa times a power of ten with the
// digits the step needs at that power.
func tickLabels(ticks []float64, step float64) []richText {
	top := step
	for _, v := range ticks {
		top = math.Max(top, math.Abs(v))
	}
	out := make([]richText, len(ticks))
	for i, v := range ticks {
		if step >= 1e-4 && top < 1e5 {
			out[i] = plain(fixed(v, decimals(step)))
		} else {
			out[i] = scientific(v, step)
		}
	}
	return out
}

// scientific writes v as m×10^k with 1 <= |m| < 10, m without trailing
// zeros; a mantissa of 1 is left out.
func scientific(v, step float64) richText {
	if v == 0 {
		return plain("0")
	}
	k := int(math.Floor(math.Log10(math.Abs(v)) + 1e-9))
	scale := math.Pow(10, float64(k))
	m := fixed(v/scale, decimals(step/scale))
	if strings.Contains(m, ".") {
		m = strings.TrimRight(strings.TrimRight(m, "0"), ".")
	}
	switch m {
	case "1":
		return power(k, false)
	case minus + "1":
		return power(k, true)
	}
	return append(plain(m+"×10"), span{text: withMinus(strconv.Itoa(k)), super: true})
}

// fixed prints v with dec decimals, zero without sign.
func fixed(v float64, dec int) string {
	s := strconv.FormatFloat(v, 'f', dec, 64)
	if strings.Trim(s, "-0.") == "" {
		return "0"
	}
	return withMinus(s)
}

// decimals returns the digits after the point that multiples of step
// need: one more than its magnitude for steps like 0.25 or 2.5.
func decimals(step float64) int {
	dec := 0
	for dec < 12 {
		scaled := step * math.Pow(10, float64(dec))
		if math.Abs(scaled-math.Round(scaled)) <= 1e-6*scaled {
			break
		}
		dec++
	}
	return dec
}

// power writes 10^k, with a leading minus sign when negative.
func power(k int, negative bool) richText {
	base := "10"
	if negative {
		base = minus + "10"
	}
	return richText{{text: base}, {text: withMinus(strconv.Itoa(k)), super: true}}
}

// decadeLabel writes the label of 10^k on a log axis: plain numbers
// when every decade of the axis lies between 0.01 and 1000, powers of
// ten otherwise.
func decadeLabel(k int, plainDecades bool) richText {
	if !plainDecades {
		return power(k, false)
	}
	if k >= 0 {
		return plain("1" + strings.Repeat("0", k))
	}
	return plain("0." + strings.Repeat("0", -k-1) + "1")
}
