package main

import (
	"fmt"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"warmfit/cluster"
	"warmfit/lattice"
)

// TestLimitsRefuseBeforeAllocating sends every oversized request of
// issue 8 through the runner: each must be refused quickly (no work, no
// allocation: the test would crash or time out otherwise), with the exit
// code of its source (2 for a flag, 1 for a file) and a message that
// names the limit and the flag. Sizes are from the issue; the limits are
// the program's own (common practice: refuse before allocating).
func TestLimitsRefuseBeforeAllocating(t *testing.T) {
	dir := t.TempDir()
	chain10 := filepath.Join(dir, "chain10.json")
	chain26 := filepath.Join(dir, "chain26.json")
	square := filepath.Join(dir, "square20.json")
	for path, spec := range map[string]string{chain10: "chain:10", chain26: "chain:26", square: "square:20x20"} {
		if code, _, stderr := runCmd("model", "--lattice", spec, "--preset", "tfim", "--beta", "0.5", "-o", path); code != 0 {
			t.Fatalf("model %s: %s", spec, stderr)
		}
	}
	tests := []struct {
		name string
		args []string
		code int
		want []string // every one must appear in stderr
	}{
		{"typicality vectors", []string{"predict", "--model", chain26, "--method", "exact", "--vectors", "1000000000"}, exitUsage, []string{"--vectors", "GiB"}},
		{"typicality 26 qubits", []string{"predict", "--model", chain26, "--method", "exact"}, exitUsage, []string{"26 qubits", "--budget"}},
		{"random bases", []string{"sample", "--model", chain10, "--shots", "10", "--bases", "random:1000000000"}, exitUsage, []string{"--bases", "at most"}},
		{"random bases plan", []string{"plan", "--model", chain10, "--target", "0.1", "--bases", "random:1000000000"}, exitUsage, []string{"--bases", "at most"}},
		{"exact shots", []string{"sample", "--model", chain10, "--shots", "1000000000000"}, exitUsage, []string{"--shots", "--budget"}},
		{"model from /dev/zero", []string{"predict", "--model", "/dev/zero"}, exitFailure, []string{"/dev/zero", "MaxFileBytes"}},
		{"lattice from /dev/zero", []string{"lattice", "--lattice", "/dev/zero"}, exitFailure, []string{"/dev/zero", "MaxFileBytes"}},
		{"huge spec", []string{"lattice", "--lattice", "square:4096x4096"}, exitUsage, []string{"--lattice", "MaxSites"}},
		{"huge spec model", []string{"model", "--lattice", "square:4096x4096", "--preset", "tfim"}, exitUsage, []string{"--lattice", "MaxSites"}},
		{"many clusters", []string{"lattice", "--lattice", "square:20x20", "--clusters", "16"}, exitUsage, []string{"--clusters", "--budget"}},
		{"astronomic clusters", []string{"lattice", "--lattice", "square:20x20", "--clusters", "40"}, exitUsage, []string{"--clusters", "--max-clusters"}},
		{"expansion order", []string{"predict", "--model", square, "--order", "10"}, exitUsage, []string{"--order", "--budget"}},
		{"binomial order", []string{"sample", "--model", square, "--shots", "100", "--order", "10"}, exitUsage, []string{"--order", "--budget"}},
		{"sweep order", []string{"sweep", "--model", square, "--beta-grid", "from=0.1,to=0.5,points=5", "--order", "10"}, exitUsage, []string{"--order", "--budget"}},
		{"fit order", []string{"fit", "--model", square, "--data", square, "--order", "10"}, exitUsage, []string{"--order", "--budget"}},
		{"plan order", []string{"plan", "--model", square, "--target", "0.1", "--order", "10"}, exitUsage, []string{"--order", "--budget"}},
		{"zero budget", []string{"predict", "--model", chain10, "--budget", "0s"}, exitUsage, []string{"--budget"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			start := time.Now()
			code, _, stderr := runCmd(tc.args...)
			if code != tc.code {
				t.Errorf("exit %d, want %d; stderr:\n%s", code, tc.code, stderr)
			}
			for _, w := range tc.want {
				if !strings.Contains(stderr, w) {
					t.Errorf("stderr does not name %q:\n%s", w, stderr)
				}
			}
			if d := time.Since(start); d > 20*time.Second {
				t.Errorf("the refusal took %v: the work ran", d)
			}
		})
	}
}

// TestLimitsEstimateOnStderr checks that a long-capable command says its
// estimate before it starts, and that a small request is admitted.
func TestLimitsEstimateOnStderr(t *testing.T) {
	dir := t.TempDir()
	m := filepath.Join(dir, "m.json")
	writeChainModel(t, m)
	for _, args := range [][]string{
		{"predict", "--model", m, "--order", "3"},
		{"predict", "--model", m, "--method", "exact"},
		{"sample", "--model", m, "--shots", "100"},
		{"sweep", "--model", m, "--beta-grid", "from=0.1,to=0.2,points=2", "--order", "3"},
		{"plan", "--model", m, "--target", "0.1", "--order", "3"},
		{"lattice", "--lattice", "chain:4", "--clusters", "3"},
	} {
		code, _, stderr := runCmd(args...)
		if code != 0 || !strings.Contains(stderr, ": estimate: ") {
			t.Errorf("%v: exit %d, want 0 with an estimate line; stderr:\n%s", args, code, stderr)
		}
	}
}

func TestSuggestBudget(t *testing.T) {
	// The suggestion must admit the prediction it answers (common practice).
	for _, d := range []time.Duration{3 * time.Second, 59 * time.Second, 61 * time.Second, 12 * time.Minute, 5 * time.Hour, 5000 * time.Hour} {
		if s := suggestBudget(d); s < d && d < 1000*time.Hour {
			t.Errorf("suggestBudget(%v) = %v, below the prediction", d, s)
		}
	}
}

// The help of fit states the automatic order ceiling of the one order
// policy (review finding: it said "8 in two dimensions" while --max-order
// said "at most 12"); the numbers come from cluster.NewOrderPolicy.
func TestAutoCeilingTextMatchesPolicy(t *testing.T) {
	for _, tc := range []struct {
		spec, words string
	}{
		{"chain:40", "12 on a chain"},
		{"ladder:20", "9 on a ladder"},
		{"square:10x10", "8 in 2D"},
		{"triangular:10x10", "8 in 2D"},
		{"cubic:5x5x5", "6 in 3D"},
	} {
		lat, err := lattice.Open(tc.spec)
		if err != nil {
			t.Fatal(err)
		}
		p := cluster.NewOrderPolicy(lat, nil)
		if want := fmt.Sprintf("%d ", p.Ceiling); !strings.Contains(autoCeilingText, tc.words) || !strings.HasPrefix(tc.words, want) {
			t.Errorf("%s: the policy's ceiling is %d; autoCeilingText says %q", tc.spec, p.Ceiling, autoCeilingText)
		}
	}
	_, help, _ := runCmd("help", "fit")
	if strings.Count(help, autoCeilingText) != 2 {
		t.Errorf("help fit does not quote the ceiling in the text and at --max-order")
	}
	if strings.Contains(help, "Without beta (neither") {
		t.Errorf("help fit says the unknown-temperature rule twice")
	}
}
