package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"warmfit/lattice/model"
)

// runModelCmd runs warmfit with args and returns exit code, stdout, stderr.
func parseModelOutput(t *testing.T, out string) *model.Model {
	t.Helper()
	m, err := model.Parse(strings.NewReader(out), "stdout")
	if err != nil {
		t.Fatalf("output is not a valid model: %v\n%s", err, out)
	}
	return m
}

// modelTermCount is a "warmfit model" command line (without "model") and
// the number of terms its model must have.
type modelTermCount struct {
	args  []string
	terms int // closed-form count
}

// checkModelTermCounts runs each command line and checks its model's
// number of terms.
func checkModelTermCounts(t *testing.T, tests []modelTermCount) {
	t.Helper()
	for _, tc := range tests {
		code, out, errs := runCmd(append([]string{"model"}, tc.args...)...)
		if code != exitOK {
			t.Fatalf("%v: exit %d: %s", tc.args, code, errs)
		}
		if m := parseModelOutput(t, out); len(m.Terms) != tc.terms {
			t.Errorf("%v: %d terms, want %d", tc.args, len(m.Terms), tc.terms)
		}
	}
}

func TestModelCommandPresets(t *testing.T) {
	tests := []modelTermCount{
		// open 5-chain: 4 ZZ + 5 X (hz = 0 is left out)
		{[]string{"--lattice", "chain:5", "--preset", "tfim"}, 9},
		// hz set: + 5 Z
		{[]string{"--lattice", "chain:5", "--preset", "tfim", "--set", "J=2,hx=0.5", "--set", "hz=0.1"}, 14},
		// 3x3 open square with two shells: 3 x (12 + 8) bonds
		{[]string{"--lattice", "square:3x3", "--preset", "j1j2", "--shells", "2"}, 60},
		// all2local on open 3x3: 9*12 + 3*9
		{[]string{"--lattice", "square:3x3", "--preset", "all2local"}, 135},
	}
	checkModelTermCounts(t, tests)
}

func TestModelCommandLatticeFiles(t *testing.T) {
	dir := t.TempDir()
	graph := filepath.Join(dir, "path4.json")
	// A 4-site path: 3 bonds, and 2 pairs at graph distance 2.
	doc := `{"kind": "graph", "sites": [[0, 0], [1, 0], [2, 0], [3, 0]], "bonds": [[0, 1], [1, 2], [2, 3]]}`
	if err := os.WriteFile(graph, []byte(doc), 0o644); err != nil {
		t.Fatal(err)
	}
	sample := filepath.Join("..", "..", "testdata", "models", "square3x3_tfim.json")
	tests := []modelTermCount{
		{[]string{"--lattice", graph, "--preset", "j1j2", "--shells", "2"}, 3 * (3 + 2)},
		{[]string{"--lattice", graph, "--preset", "tfim"}, 3 + 4},
		// --shells 1 takes the diagonals of a two-shell specification away:
		// all2local on the open 3x3 square, 9*12 + 3*9 terms.
		{[]string{"--lattice", "square:3x3:shells=2", "--shells", "1", "--preset", "all2local"}, 135},
		// The lattice of a model file: open 3x3 square, 12 bonds x 3 + 0 fields.
		{[]string{"--lattice", sample, "--preset", "heisenberg"}, 36},
	}
	checkModelTermCounts(t, tests)
	// A broken lattice file is a failure (exit 1), not a usage error.
	bad := filepath.Join(dir, "bad.json")
	if err := os.WriteFile(bad, []byte(`{"kind": "graph", "sites": [[0, 0]], "bonds": [[0, 5]]}`), 0o644); err != nil {
		t.Fatal(err)
	}
	if code, _, errs := runCmd("model", "--lattice", bad, "--preset", "tfim"); code != exitFailure || !strings.Contains(errs, "bad.json") {
		t.Errorf("bad lattice file: exit %d, %s", code, errs)
	}
}

func TestModelCommandValuesBetaTie(t *testing.T) {
	code, out, errs := runCmd("model", "--lattice", "chain:4", "--preset", "xxz",
		"--set", "Jxy=-1,Jz=2", "--beta", "0.7", "--tie", "--units", "MHz")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	m := parseModelOutput(t, out)
	if m.Beta != 0.7 || m.Units != "MHz" {
		t.Errorf("beta %v units %q", m.Beta, m.Units)
	}
	for _, term := range m.Terms {
		want, group := -1.0, "Jxy"
		if term.Pauli == "ZZ" {
			want, group = 2, "Jz"
		}
		if term.Coeff != want || term.Group != group {
			t.Errorf("%+v: want coeff %v group %s", term, want, group)
		}
	}
}

func TestModelCommandDisorderDeterministic(t *testing.T) {
	args := []string{"model", "--lattice", "square:3x3", "--preset", "heisenberg", "--disorder", "0.2", "--seed", "11"}
	_, a, _ := runCmd(args...)
	_, b, _ := runCmd(args...)
	code, c, errs := runCmd(append(args[:len(args)-1:len(args)-1], "12")...)
	if code != exitOK || a != b || a == c {
		t.Fatalf("exit %d (%s); same seed equal: %v, other seed differs: %v", code, errs, a == b, a != c)
	}
	for _, term := range parseModelOutput(t, a).Terms {
		if term.Coeff < 0.8 || term.Coeff >= 1.2 {
			t.Errorf("coefficient %v outside 1 +- 0.2", term.Coeff)
		}
	}
}

func TestModelCommandUsageErrors(t *testing.T) {
	tests := []struct {
		args []string
		msg  string
	}{
		{[]string{"--preset", "tfim"}, "need --lattice"},
		{[]string{"--lattice", "chain:4"}, "need --lattice and --preset"},
		{[]string{"--lattice", "chain:4", "--preset", "ising"}, "unknown preset"},
		{[]string{"--lattice", "chain:4", "--preset", "tfim", "--set", "K=1"}, "valid: J, hx, hz"},
		{[]string{"--lattice", "chain:4", "--preset", "tfim", "--set", "J"}, "NAME=VALUE"},
		{[]string{"--lattice", "chain:4", "--preset", "tfim", "--set", "J=abc"}, "not a finite number"},
		{[]string{"--lattice", "chain:4", "--preset", "tfim", "--set", "J=1,J=2"}, "twice"},
		{[]string{"--lattice", "chain:4", "--preset", "j1j2"}, "--shells 2"},
		{[]string{"--lattice", "chain:4", "--preset", "tfim", "--disorder", "-1"}, "--disorder"},
		{[]string{"--lattice", "chain:4", "--preset", "tfim", "--disorder", "0.1", "--tie"}, "do not go together"},
		{[]string{"--lattice", "chain:4", "--preset", "tfim", "--beta", "0"}, "--beta"},
		{[]string{"--lattice", "chain:4", "--preset", "tfim", "--beta", "x"}, "not a positive finite number"},
		{[]string{"--lattice", "chain:4", "--preset", "tfim", "--shells", "3"}, "--shells"},
		{[]string{"--lattice", "chain:4", "--preset", "tfim", "--set", "J=0,hx=0"}, "zero"},
		{[]string{"--lattice", "hexagon:4", "--preset", "tfim"}, "--lattice"},
		{[]string{"--lattice", "chain:4", "--preset", "tfim", "extra"}, "unexpected argument"},
		{[]string{"--check", "x.json", "--preset", "tfim"}, "--check takes only --beta"},
		{[]string{"--bogus"}, "unknown flag"},
	}
	for _, tc := range tests {
		code, out, errs := runCmd(append([]string{"model"}, tc.args...)...)
		if code != exitUsage || out != "" || !strings.Contains(errs, tc.msg) {
			t.Errorf("%v: exit %d, stdout %q, stderr %q; want exit 2 mentioning %q", tc.args, code, out, errs, tc.msg)
		}
	}
}

func TestModelCommandOutputFile(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "m.json")
	code, out, errs := runCmd("model", "--lattice", "chain:3", "--preset", "heisenberg", "-o", path)
	if code != exitOK || out != "" {
		t.Fatalf("exit %d, stdout %q, stderr %s", code, out, errs)
	}
	m, err := model.ReadFile(path)
	if err != nil || len(m.Terms) != 6 { // 2 bonds x 3 letters
		t.Fatalf("%v, %v", m, err)
	}
	// Failing runs leave an existing file alone: a usage error, and a
	// lattice file that does not exist (exit 1).
	const old = "precious\n"
	if err := os.WriteFile(path, []byte(old), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{
		{"model", "--lattice", "chain:3", "--preset", "tfim", "--set", "nope=1", "-o", path},
		{"model", "--lattice", filepath.Join(dir, "missing.json"), "--preset", "tfim", "-o", path},
	} {
		code, _, _ := runCmd(args...)
		if code == exitOK {
			t.Errorf("%v: exit 0", args)
		}
		if got, _ := os.ReadFile(path); string(got) != old {
			t.Errorf("%v clobbered the output file: %q", args, got)
		}
	}
	if code, _, _ := runCmd("model", "--lattice", filepath.Join(dir, "missing.json"), "--preset", "tfim"); code != exitFailure {
		t.Errorf("missing lattice file: exit %d, want 1", code)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("temporary files left behind: %v", entries)
	}
}

func TestModelCheck(t *testing.T) {
	sample := filepath.Join("..", "..", "testdata", "models", "square3x3_tfim.json")
	code, out, errs := runCmd("model", "--check", sample)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	// The sample: 9 sites, the 12 bonds of the open 3x3 square, 12 ZZ and
	// 9 X terms, the X terms in one group (12 + 1 free coefficients),
	// coefficients -0.33 ... 1.05, beta 0.4 so beta*max|coeff| = 0.42.
	for _, want := range []string{"valid", "9 sites", "12 interaction bonds", "21 terms: 12 ZZ, 9 X",
		"13 free coefficients", "-0.33 to 1.05 kHz", "beta = 0.4", "= 0.42"} {
		if !strings.Contains(strings.Join(strings.Fields(out), " "), want) {
			t.Errorf("summary lacks %q:\n%s", want, out)
		}
	}
	code, out, _ = runCmd("model", "--check", sample, "--beta", "2")
	if code != exitOK || !strings.Contains(out, "beta = 2,") {
		t.Errorf("--beta did not override: %s", out)
	}

	bad := filepath.Join("..", "..", "testdata", "models", "bad_syntax.json")
	code, out, errs = runCmd("model", "--check", bad)
	if code != exitFailure || out != "" || !strings.Contains(errs, bad+":6:") {
		t.Errorf("bad file: exit %d, stdout %q, stderr %q", code, out, errs)
	}
	code, _, _ = runCmd("model", "--check", filepath.Join(t.TempDir(), "none.json"))
	if code != exitFailure {
		t.Errorf("missing file: exit %d", code)
	}
}

func TestModelHelp(t *testing.T) {
	code, out, _ := runCmd("help", "model")
	if code != exitOK {
		t.Fatalf("exit %d", code)
	}
	for _, p := range model.PresetNames() {
		if !strings.Contains(out, p+":") {
			t.Errorf("help does not describe preset %s", p)
		}
	}
	if code, out, _ := runCmd("model", "--help"); code != exitOK || !strings.Contains(out, "--check") {
		t.Errorf("--help: exit %d", code)
	}
}
