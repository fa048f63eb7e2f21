package main

import (
	"errors"
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/spf13/pflag"

	"warmfit/lattice/model"
)

// --set as a user types it (pflag splits it at commas like a CSV line):
// a usage error naming --set, or finite values for parameters the preset
// has, each once, which written back as NAME=VALUE parse to the same map
// (round trip: common practice for parsers).
func FuzzParseSetFlags(f *testing.F) {
	for _, s := range []string{"J=1,hx=0.7", "hz=-0.1", "J=1,J=2", "Q=1", "J=", "=1", "J=NaN", "J=1e400", " J = 2 ", `"J=1,hx=2"`} {
		f.Add(s)
	}
	info, err := model.LookupPreset("tfim")
	if err != nil {
		f.Fatal(err)
	}
	f.Fuzz(func(t *testing.T, s string) {
		fs := pflag.NewFlagSet("fuzz", pflag.ContinueOnError)
		var pairs []string
		fs.StringSliceVar(&pairs, "set", nil, "")
		if fs.Parse([]string{"--set=" + s}) != nil {
			return // pflag's own CSV errors come before ours
		}
		values, err := parseSetFlags(pairs, info)
		if err != nil {
			var ue *usageError
			if !errors.As(err, &ue) || !strings.Contains(err.Error(), "--set") {
				t.Fatalf("error is not a usage error naming --set: %v", err)
			}
			return
		}
		valid := map[string]bool{}
		for _, p := range info.Params {
			valid[p.Name] = true
		}
		var again []string
		for name, v := range values {
			if !valid[name] || math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("accepted %s=%v", name, v)
			}
			again = append(again, name+"="+strconv.FormatFloat(v, 'g', -1, 64))
		}
		back, err := parseSetFlags(again, info)
		if err != nil || len(back) != len(values) {
			t.Fatalf("%v does not parse back: %v", again, err)
		}
		for name, v := range values {
			if back[name] != v {
				t.Fatalf("%s: %v became %v", name, v, back[name])
			}
		}
	})
}

// --beta-grid of any spelling: a usage error naming --beta-grid, or
// 1..maxGridPoints finite positive inverse temperatures, evenly spaced and
// increasing from "from" to "to" (both included).
func FuzzParseBetaGrid(f *testing.F) {
	for _, s := range []string{"from=0.05,to=1,points=20", "points=1,from=2,to=2", "from=1,to=0.5,points=3", "0.1:1:10", "from=1,to=2", "from=1,to=2,points=100001", "from=1e-300,to=1e300,points=7", "from=1,to=2,points=3,from=1"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		betas, err := parseBetaGrid(s)
		if err != nil {
			var ue *usageError
			if !errors.As(err, &ue) || !strings.Contains(err.Error(), "--beta-grid") {
				t.Fatalf("error is not a usage error naming --beta-grid: %v", err)
			}
			return
		}
		if len(betas) < 1 || len(betas) > maxGridPoints {
			t.Fatalf("%d points", len(betas))
		}
		for i, b := range betas {
			if !(b > 0) || math.IsInf(b, 0) {
				t.Fatalf("beta[%d] = %v", i, b)
			}
			if i > 0 && b < betas[i-1] {
				t.Fatalf("beta[%d] = %v below beta[%d] = %v", i, b, i-1, betas[i-1])
			}
		}
	})
}
