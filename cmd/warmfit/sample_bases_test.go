package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestSampleCovering3RefusesBinomial: covering:3 exists for the
// stationarity constraints, which need the 2- and 3-local correlators of
// whole snapshots; the binomial generator writes only the model's own
// terms, so sample refuses (exit 2) instead of writing a table that fit
// --method stationary cannot use (review finding 5; common practice: refuse
// a combination that cannot give the promised output).
func TestSampleCovering3RefusesBinomial(t *testing.T) {
	dir := t.TempDir()
	m := filepath.Join(dir, "m.json")
	if code, _, stderr := runCmd("model", "--lattice", "square:4x4", "--preset", "xxz", "--set", "Jxy=0.4,Jz=0.3,hz=0.2", "--beta", "0.5", "-o", m); code != 0 {
		t.Fatal(stderr)
	}
	small := filepath.Join(dir, "s.json")
	if code, _, stderr := runCmd("model", "--lattice", "chain:4", "--preset", "tfim", "--set", "J=1,hx=0.7", "--beta", "0.5", "-o", small); code != 0 {
		t.Fatal(stderr)
	}
	cases := []struct {
		model string
		args  []string
		want  string
	}{
		{m, nil, "default generator is binomial"},
		{small, []string{"--generator", "binomial"}, "--generator binomial"},
	}
	for _, c := range cases {
		out := filepath.Join(dir, "out.csv")
		args := append([]string{"sample", "--model", c.model, "--shots", "1000", "--bases", "covering:3", "-o", out}, c.args...)
		code, _, stderr := runCmd(args...)
		if code != 2 {
			t.Errorf("%v: exit %d, want 2\n%s", c.args, code, stderr)
		}
		for _, want := range []string{c.want, "--generator exact", "2- and 3-local correlators"} {
			if !strings.Contains(stderr, want) {
				t.Errorf("%v: stderr lacks %q:\n%s", c.args, want, stderr)
			}
		}
		if _, err := os.Stat(out); err == nil {
			t.Errorf("%v: wrote %s despite refusing", c.args, out)
		}
	}
}
