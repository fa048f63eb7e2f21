package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Levenshtein distances of textbook pairs (kitten/sitting 3, flaw/lawn 2;
// from memory) and the edge cases.
func TestEditDistance(t *testing.T) {
	for _, tc := range []struct {
		a, b string
		want int
	}{
		{"kitten", "sitting", 3}, {"flaw", "lawn", 2}, {"", "abc", 3}, {"abc", "", 3}, {"fit", "fit", 0}, {"fti", "fit", 2},
	} {
		if got := editDistance(tc.a, tc.b); got != tc.want {
			t.Errorf("editDistance(%q, %q) = %d, want %d", tc.a, tc.b, got, tc.want)
		}
	}
}

// Mistyped commands and flags get a suggestion within edit distance 2,
// unrelated ones none; a CSV given as the model says so (review finding
// 14).
func TestDidYouMeanAndSwappedInputs(t *testing.T) {
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"fti"}, `unknown command "fti"; did you mean "fit"?`},
		{[]string{"help", "predcit"}, `did you mean "predict"?`},
		{[]string{"fit", "--ordre", "3"}, `unknown flag: --ordre; did you mean "--order"?`},
	} {
		code, _, errs := runCmd(tc.args...)
		if code != exitUsage || !strings.Contains(errs, tc.want) {
			t.Errorf("%q: exit %d, stderr lacks %q:\n%s", tc.args, code, tc.want, errs)
		}
	}
	if _, _, errs := runCmd("fit", "--xyzzy"); strings.Contains(errs, "did you mean") {
		t.Errorf("an unrelated flag got a suggestion:\n%s", errs)
	}
	data := filepath.Join(t.TempDir(), "data.csv")
	if err := os.WriteFile(data, []byte("pauli,sites,value,stderr\nZZ,0 1,0.1,0.01\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errs := runCmd("fit", "--model", data, "--data", fitTemplate)
	if want := "data.csv:1:1: this looks like a CSV table (an expectation table: pauli,sites,value,stderr), not a model file (JSON)"; code != exitFailure || !strings.Contains(errs, want) {
		t.Errorf("swapped inputs: exit %d, stderr lacks %q:\n%s", code, want, errs)
	}
}
