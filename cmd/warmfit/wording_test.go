package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Messages say plainly what happened, once, and name the flag concerned
// (fresh-clone review; common practice for command-line messages). Each
// case runs one command and checks its stdout+stderr for words that must
// and must not be there.
func TestMessagesSayItPlainly(t *testing.T) {
	dir := t.TempDir()
	p := func(name string) string { return filepath.Join(dir, name) }
	for _, s := range [][]string{
		{"model", "--lattice", "chain:6", "--preset", "xxz", "--set", "Jxy=0.3,Jz=0.2,hz=0.3,hx=0.2", "--beta", "0.5", "-o", p("m.json")},
		{"model", "--lattice", "chain:6", "--preset", "xxz", "-o", p("template.json")},
		{"model", "--lattice", "square:4x4", "--preset", "xxz", "--set", "Jxy=0.2,Jz=0.15,hz=0.4,hx=0.2", "--beta", "0.35", "-o", p("square.json")},
		{"sample", "--model", p("m.json"), "--shots", "3000", "-o", p("shots.csv")},
		{"fit", "--model", p("template.json"), "--data", p("shots.csv"), "-o", p("nobeta.json")},
	} {
		if code, _, errs := runCmd(s...); code != exitOK {
			t.Fatalf("warmfit %s: exit %d\n%s", strings.Join(s, " "), code, errs)
		}
	}
	if err := os.WriteFile(p("bad.csv"), []byte("pauli,sites,value,stderr\nZZ,0 1,abc,0.1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		args []string
		code int
		want []string
		not  []string
	}{
		{[]string{"predict", "--model", p("square.json"), "--beta", "1.5", "--order", "4"}, exitOK,
			[]string{"the temperature is too low for order 4 (beta = 1.5 is too large)"}, []string{"too low a temperature"}},
		{[]string{"model", "--check", p("nobeta.json")}, exitOK,
			[]string{"The coefficients are beta*lambda"}, []string{"dimensionless: beta*lambda (fitted"}},
		{[]string{"fit", "--model", p("template.json"), "--data", p("shots.csv"), "--truth", p("shots.csv")}, exitFailure,
			[]string{"--truth takes the true model", "--data"}, []string{"swapped"}},
		{[]string{"fit", "--model", p("m.json"), "--data", p("bad.csv"), "--order", "3"}, exitFailure,
			[]string{`bad.csv:2: field "value"`}, []string{"estimate"}},
		{[]string{"fit", "--model", p("m.json"), "--data", p("shots.csv"), "--order", "4"}, exitOK,
			[]string{"(order given by --order)", "from the final error bars"}, []string{"selection, orders"}},
		{[]string{"fit", "--model", p("m.json"), "--data", p("shots.csv")}, exitOK,
			[]string{"(order chosen automatically; fitted at orders "}, []string{"selection, orders"}},
		{[]string{"crosscheck", "--model", p("m.json"), "--sites", "0-3", "--order", "3"}, exitOK,
			[]string{"crosscheck: 1 patch, orders"}, []string{"1 patches"}},
		{[]string{"model", "--lattice", "chain:6", "--preset", "tfimm"}, exitUsage,
			[]string{`did you mean "tfim"?`}, nil},
		{[]string{"model", "--lattice", "sqare:3x3", "--preset", "tfim"}, exitUsage,
			[]string{`did you mean "square"?`}, nil},
		{[]string{"lattice", "--lattice", "kagme:2x2"}, exitUsage,
			[]string{`did you mean "kagome"?`}, nil},
	} {
		code, out, errs := runCmd(tc.args...)
		all := out + errs
		if code != tc.code {
			t.Errorf("warmfit %s: exit %d, want %d\n%s", strings.Join(tc.args, " "), code, tc.code, errs)
		}
		for _, w := range tc.want {
			if !strings.Contains(all, w) {
				t.Errorf("warmfit %s: no %q in\n%s", strings.Join(tc.args, " "), w, all)
			}
		}
		for _, w := range tc.not {
			if strings.Contains(all, w) {
				t.Errorf("warmfit %s: still says %q in\n%s", strings.Join(tc.args, " "), w, all)
			}
		}
	}
}
