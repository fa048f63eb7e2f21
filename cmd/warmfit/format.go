package main

import (
	"math"
	"strconv"
)

// The command package's one number formatter: every number a person
// reads (summaries, reports, tables written by commands) goes through
// it, and nothing non-finite is ever printed as a number.

// formatG writes v with the given significant digits ('g' format), or
// "n/a" when v is not finite.
func formatG(v float64, digits int) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "n/a"
	}
	return strconv.FormatFloat(v, 'g', digits, 64)
}

// fmtExact writes v in the shortest form that reads back to the same
// float64 (formats.md's rule for numbers in output files), or "n/a".
func fmtExact(v float64) string { return formatG(v, -1) }

// fmtFloat is formatG with 6 digits, for parameters and diagnostics.
func fmtFloat(v float64) string { return formatG(v, 6) }

// fmtG3 is formatG with 3 digits, for summaries.
func fmtG3(v float64) string { return formatG(v, 3) }
