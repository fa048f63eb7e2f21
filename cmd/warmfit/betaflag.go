package main

import (
	"fmt"
	"math"
	"strconv"

	"github.com/spf13/pflag"
)

// betaFlag is an optional inverse temperature: it remembers whether it
// was given, so that "--beta 0" is an error rather than "not given".
type betaFlag struct {
	value float64
	set   bool
}

func (b *betaFlag) String() string {
	if !b.set {
		return ""
	}
	return strconv.FormatFloat(b.value, 'g', -1, 64)
}

func (b *betaFlag) Set(s string) error {
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) || v <= 0 {
		return fmt.Errorf("%q is not a positive finite number", s)
	}
	b.value, b.set = v, true
	return nil
}

func (b *betaFlag) Type() string { return "B" }

// addBetaFlag registers --beta with the given usage (default: it
// overrides the model file's beta). It clears b first: the command runner
// registers flags afresh for every run, and a value left from an earlier
// run in the same process must not leak into the next.
func addBetaFlag(fs *pflag.FlagSet, b *betaFlag, usage ...string) {
	*b = betaFlag{}
	u := "inverse temperature (overrides the model's beta)"
	if len(usage) > 0 {
		u = usage[0]
	}
	fs.Var(b, "beta", u)
}
