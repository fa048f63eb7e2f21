package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestWarningCounterCountsLinesStartingWithWarning(t *testing.T) {
	var sb strings.Builder
	c := &warningCounter{w: &sb}
	// Written in pieces, as fmt does; only line starts count.
	for _, p := range []string{"fit: ok\nWARN", "ING: one\n", "note: a WARNING inside\n", "WARNING: two\r\nWARNING", "\n", "WARNIN\n", "      WARNING: indented\n"} {
		c.Write([]byte(p))
	}
	if c.count != 4 {
		t.Errorf("counted %d WARNING lines, want 4", c.count)
	}
	if !strings.Contains(sb.String(), "note: a WARNING inside") {
		t.Errorf("the counter changed what it passed on: %q", sb.String())
	}
}

// writeXXZChain8 writes an XXZ chain of 8 sites at beta 0.3 by the model command.
func writeXXZChain8(t *testing.T, dir string) string {
	t.Helper()
	m := filepath.Join(dir, "m.json")
	if code, _, errs := runCmd("model", "--lattice", "chain:8", "--preset", "xxz", "--set", "Jxy=1,Jz=1,hz=0.5", "--beta", "0.3", "-o", m); code != exitOK {
		t.Fatalf("model: exit %d: %s", code, errs)
	}
	return m
}

// TestOrderOneIsAUsageError: --order 1 holds single sites only; every
// command that takes --order refuses it with exit 2 (the exit rule).
func TestOrderOneIsAUsageError(t *testing.T) {
	dir := t.TempDir()
	m := writeXXZChain8(t, dir)
	data := filepath.Join(dir, "data.csv")
	if code, _, errs := runCmd("predict", "--model", m, "--order", "4", "-o", data); code != exitOK {
		t.Fatalf("predict: exit %d: %s", code, errs)
	}
	for _, args := range [][]string{
		{"predict", "--model", m, "--order", "1"},
		{"sample", "--model", m, "--shots", "10", "--generator", "binomial", "--order", "1"},
		{"sweep", "--model", m, "--beta-grid", "from=0.1,to=0.2,points=2", "--order", "1"},
		{"fit", "--model", m, "--data", data, "--order", "1"},
		{"plan", "--model", m, "--target", "0.1", "--order", "1"},
		{"crosscheck", "--model", m, "--order", "1"},
		{"predict", "--model", m, "--order", "13"},
	} {
		code, stdout, errs := runCmd(args...)
		if code != exitUsage || !strings.Contains(errs, "--order") || stdout != "" {
			t.Errorf("warmfit %s: exit %d, stderr %q; want 2 naming --order and no output", strings.Join(args, " "), code, errs)
		}
	}
}

// TestUntrustedResultExitsZeroWithWarningUnlessStrict: a result that is
// computed but not trusted (predict far too cold) is written with WARNING
// lines on stderr and in the file and exits 0; --strict makes it exit 1
// (the file is still written). A trusted result exits 0 under --strict.
func TestUntrustedResultExitsZeroWithWarningUnlessStrict(t *testing.T) {
	dir := t.TempDir()
	m := writeXXZChain8(t, dir)
	cold := filepath.Join(dir, "cold.csv")
	for _, strict := range []bool{false, true} {
		os.Remove(cold)
		args := []string{"predict", "--model", m, "--beta", "4", "--order", "4", "-o", cold}
		want := exitOK
		if strict {
			args, want = append(args, "--strict"), exitFailure
		}
		code, _, errs := runCmd(args...)
		if code != want || !strings.Contains(errs, "WARNING:") {
			t.Errorf("strict %t: exit %d, stderr %q; want %d and a WARNING", strict, code, errs, want)
		}
		if strict && !strings.Contains(errs, "--strict") {
			t.Errorf("strict: stderr does not say why the run failed: %q", errs)
		}
		if _, err := os.Stat(cold); err != nil {
			t.Errorf("strict %t: the output was not written: %v", strict, err)
		}
		if w := recordedWarnings(cold); w == "" {
			t.Errorf("strict %t: neither %s nor its sidecar records the warning", strict, cold)
		}
	}
	if code, _, errs := runCmd("predict", "--model", m, "--order", "8", "--strict", "-o", filepath.Join(dir, "warm.csv")); code != exitOK {
		t.Errorf("a trusted prediction under --strict: exit %d: %s", code, errs)
	}
}

// TestEveryWarningGoesToStderr: the commands whose results can mislead
// print their WARNING lines on stderr and record them in the output file.
func TestEveryWarningGoesToStderr(t *testing.T) {
	dir := t.TempDir()
	m := writeXXZChain8(t, dir)
	p := func(name string) string { return filepath.Join(dir, name) }
	tests := []struct {
		args []string
		file string
	}{
		{[]string{"predict", "--model", m, "--beta", "4", "--order", "4", "-o", p("cold.csv")}, p("cold.csv")},
		{[]string{"sweep", "--model", m, "--beta-grid", "from=0.2,to=4,points=4", "--order", "4", "-o", p("sweep.csv")}, p("sweep.csv")},
		{[]string{"sample", "--model", m, "--beta", "4", "--shots", "100", "--generator", "binomial", "--order", "4", "-o", p("b.csv")}, p("b.csv")},
		{[]string{"plan", "--model", m, "--beta", "0.6", "--order", "4", "--target", "0.1", "-o", p("plan.txt")}, p("plan.txt")},
		{[]string{"plan", "--model", m, "--beta", "0.6", "--order", "4", "--target", "0.1", "--format", "csv", "-o", p("plan.csv")}, p("plan.csv")},
		{[]string{"plan", "--model", m, "--beta", "0.6", "--order", "4", "--target", "0.1", "--format", "json", "-o", p("plan.json")}, p("plan.json")},
	}
	for _, tt := range tests {
		code, stdout, errs := runCmd(tt.args...)
		name := strings.Join(tt.args[:1], " ")
		if code != exitOK || !strings.Contains(errs, "\nWARNING: ") && !strings.HasPrefix(errs, "WARNING: ") {
			t.Errorf("%s: exit %d, stderr %q; want 0 and a WARNING line", name, code, errs)
		}
		if stdout != "" {
			t.Errorf("%s: wrote %q to stdout although -o was given", name, stdout)
		}
		if recordedWarnings(tt.file) == "" {
			t.Errorf("%s: neither %s nor its sidecar records the warning", name, tt.file)
		}
	}
}

// recordedWarnings returns the first warning recorded in a result file or
// its sidecar (a WARNING line, or a non-empty "warnings" array), or "".
func recordedWarnings(path string) string {
	for _, f := range []string{path, path + ".meta.json"} {
		b, err := os.ReadFile(f)
		if err != nil {
			continue
		}
		if i := strings.Index(string(b), "WARNING"); i >= 0 {
			return string(b[i:min(len(b), i+80)])
		}
		var doc struct {
			Warnings []string `json:"warnings"`
		}
		if json.Unmarshal(b, &doc) == nil && len(doc.Warnings) > 0 {
			return doc.Warnings[0]
		}
	}
	return ""
}

// TestExitRuleStatedInReadmeAndHelp: the one exit rule is in "warmfit
// help" and, word for word, in README.md.
func TestExitRuleStatedInReadmeAndHelp(t *testing.T) {
	_, out, _ := runCmd("help")
	if !strings.Contains(out, exitRule) {
		t.Errorf("warmfit help does not state the exit rule")
	}
	readme, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	squash := func(s string) string { return strings.Join(strings.Fields(s), " ") }
	if !strings.Contains(squash(string(readme)), squash(exitRule)) {
		t.Errorf("README.md does not state the exit rule of exitrule.go:\n%s", exitRule)
	}
	if code, out, _ := runCmd("--version"); code != exitOK || !strings.HasPrefix(out, "warmfit "+version) {
		t.Errorf("warmfit --version: exit %d, %q", code, out)
	}
}

// TestSweepVerdictNamesTheLastTrustedBeta: sweep and the demo state a
// trusted range in one wording, by the last trusted grid point ("up to
// beta 0.625") and the first untrusted one, never by a bound in between.
func TestSweepVerdictNamesTheLastTrustedBeta(t *testing.T) {
	tr := &sweepTrust{LastGood: 0.625, Edge: 0.65, Tol: 1e-3}
	v := tr.sweepVerdict()
	for _, want := range []string{"WARNING: ", "up to beta 0.625", "from beta 0.65 on", "trusted=false"} {
		if !strings.Contains(v, want) {
			t.Errorf("verdict %q lacks %q", v, want)
		}
	}
	if !strings.Contains(v, tr.rangeText()) {
		t.Errorf("verdict %q does not use rangeText, the demo's wording", v)
	}
	if v := (&sweepTrust{Tol: 1e-3}).sweepVerdict(); strings.Contains(v, "WARNING") {
		t.Errorf("a fully trusted sweep warns: %q", v)
	}
}

// TestRefusedRequestsAreUsageErrors: a request the flags make that is
// refused before any work starts (a method past its size limit, a run
// over --budget) exits 2, like every other usage error (exitRule), and
// is refused before the command prints what it is about to do.
func TestRefusedRequestsAreUsageErrors(t *testing.T) {
	dir := t.TempDir()
	big := filepath.Join(dir, "big.json")
	if code, _, errs := runCmd("model", "--lattice", "square:6x6", "--preset", "xxz", "--set", "Jxy=0.2,Jz=0.15,hz=0.4,hx=0.2", "--beta", "0.35", "-o", big); code != exitOK {
		t.Fatalf("model: exit %d: %s", code, errs)
	}
	chain := filepath.Join(dir, "chain.json")
	if code, _, errs := runCmd("model", "--lattice", "chain:10", "--preset", "tfim", "--beta", "0.5", "-o", chain); code != exitOK {
		t.Fatalf("model: exit %d: %s", code, errs)
	}
	for _, tc := range []struct {
		args    []string
		want    string // in the message
		notSaid string // a plan line that must not come first
	}{
		{[]string{"sample", "--model", chain, "--shots", "1000000000", "--generator", "exact"}, "--budget", "sample: 10 qubits"},
		{[]string{"sample", "--model", big, "--shots", "100", "--generator", "exact"}, "--generator exact", "sample: 36 qubits"},
		{[]string{"sample", "--model", big, "--shots", "100", "--bases", "covering:3", "--generator", "binomial"}, "covering:3", "sample: 36 qubits"},
		{[]string{"predict", "--model", big, "--method", "exact"}, "--method exact", "exact:"},
		{[]string{"predict", "--model", big, "--order", "9", "--budget", "1s"}, "--budget", "predict: linked-cluster"},
	} {
		code, out, errs := runCmd(tc.args...)
		if code != exitUsage || !strings.Contains(errs, tc.want) || out != "" {
			t.Errorf("warmfit %s: exit %d, want %d naming %s\n%s", strings.Join(tc.args, " "), code, exitUsage, tc.want, errs)
		}
		if strings.Contains(errs, tc.notSaid) {
			t.Errorf("warmfit %s: printed %q before refusing\n%s", strings.Join(tc.args, " "), tc.notSaid, errs)
		}
	}
}
