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
	// omitted says what leaving --beta out does, for the error of a
	// zero or non-numeric value ("auto", "unknown").
	omitted string
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
		omitted := b.omitted
		if omitted == "" {
			omitted = "leave --beta out to use the model file's beta"
		}
		if err != nil || v == 0 {
			// "0", "auto", "unknown": a way of saying "I do not know beta".
			return fmt.Errorf("%q is not a positive finite number, so not an inverse temperature; %s", s, omitted)
		}
		return fmt.Errorf("%q is not a positive finite number; %s", s, omitted)
	}
	b.value, b.set = v, true
	return nil
}

func (b *betaFlag) Type() string { return "B" }

func (b *betaFlag) reset() { *b = betaFlag{} }

// addBetaFlag registers --beta with the given usage (default: it
// overrides the model file's beta), fresh (see addFreshVar).
func addBetaFlag(fs *pflag.FlagSet, b *betaFlag, usage ...string) {
	u := "inverse temperature (overrides the model's beta)"
	if len(usage) > 0 {
		u = usage[0]
	}
	addFreshVar(fs, b, "beta", u)
}

// betaOmittedFits is what omitting --beta means to fit.
const betaOmittedFits = "to fit at unknown temperature, leave --beta out (and give no beta in the template): the fit then learns the products beta*lambda, and --scale-from TERM=VALUE or --scale-from beta=B fixes the energy scale afterwards"
