package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestPlanStationary: plan --method stationary writes a plan whose
// shots, direction errors and comparison are consistent, warns when the
// expansion is cheaper (high temperature, or a lattice its order covers
// exactly: the expansion is then exact), refuses at beta -> 0 (the
// constraints vanish like beta; Bairey, Arad, Lindner 2019) and rejects
// stationary-only flags on the expansion plan.
func TestPlanStationary(t *testing.T) {
	dir := t.TempDir()
	p := func(name string) string { return filepath.Join(dir, name) }
	for _, args := range [][]string{
		{"model", "--lattice", "chain:6", "--preset", "tfim", "--set", "J=1,hx=0.8,hz=0.3", "--beta", "0.7", "-o", p("m.json")},
		{"model", "--lattice", "chain:6", "--preset", "tfim", "--set", "J=1,hx=0.8,hz=0.3", "--beta", "1e-7", "-o", p("hot.json")},
	} {
		if code, _, stderr := runCmd(args...); code != exitOK {
			t.Fatalf("%v: exit %d\n%s", args, code, stderr)
		}
	}
	code, _, stderr := runCmd("plan", "--model", p("m.json"), "--method", "stationary", "--bases", "covering:3", "--target", "0.02", "--scale-target", "0.01", "--format", "json", "-o", p("plan.json"))
	if code != exitOK {
		t.Fatalf("plan --method stationary: exit %d\n%s", code, stderr)
	}
	raw, err := os.ReadFile(p("plan.json"))
	if err != nil {
		t.Fatal(err)
	}
	var pl planStationaryJSON
	if err := json.Unmarshal(raw, &pl); err != nil {
		t.Fatal(err)
	}
	if pl.Method != "stationary" || pl.Norm != "rms" || pl.ShotsPerBasis < max(pl.ShotsDirection, pl.ShotsScale, pl.ShotsLinear) || pl.TotalShots != pl.ShotsPerBasis*int64(len(pl.Bases)) {
		t.Errorf("plan: method %q norm %q, shots %d (direction %d, scale %d, linear %d), total %d for %d bases",
			pl.Method, pl.Norm, pl.ShotsPerBasis, pl.ShotsDirection, pl.ShotsScale, pl.ShotsLinear, pl.TotalShots, len(pl.Bases))
	}
	// The plan reaches both targets (ceil of the shots: at most them).
	if pl.DirectionRMS > 0.02*(1+1e-9) || pl.ScaleStderr > 0.01*(1+1e-9) || pl.ScaleStderr == 0 {
		t.Errorf("predicted direction rms %g (target 0.02), scale %g (target 0.01)", pl.DirectionRMS, pl.ScaleStderr)
	}
	if !strings.Contains(pl.Expectations, "exact") || pl.Compare == nil || pl.Compare.ExpansionShots <= 0 {
		t.Errorf("expectations %q, comparison %+v", pl.Expectations, pl.Compare)
	}
	// chain:6 is covered exactly by the expansion, which is then cheaper:
	// the plan says so on stderr and in the file.
	if pl.Compare.Cheaper == "expansion" {
		if !strings.Contains(stderr, "WARNING: ") || len(pl.Warnings) == 0 {
			t.Errorf("expansion cheaper but no WARNING:\n%s", stderr)
		}
	}
	code, out, _ := runCmd("plan", "--model", p("m.json"), "--method", "stationary", "--bases", "covering:3", "--target", "0.05", "--compare=false")
	if code != exitOK || !strings.Contains(out, "shots per basis") || strings.Contains(out, "compare ") {
		t.Errorf("text plan without comparison: exit %d\n%s", code, out)
	}
	code, _, stderr = runCmd("plan", "--model", p("hot.json"), "--method", "stationary", "--bases", "covering:3", "--target", "0.05", "--compare=false")
	if code != exitFailure || !strings.Contains(stderr, "refuses") || !strings.Contains(stderr, "beta") {
		t.Errorf("beta 1e-7: exit %d, want 1 with a refusal that names beta\n%s", code, stderr)
	}
	for _, args := range [][]string{
		{"plan", "--model", p("m.json"), "--target", "0.05", "--scale-target", "0.1"},
		{"plan", "--model", p("m.json"), "--target", "0.05", "--norm", "rms"},
		{"plan", "--model", p("m.json"), "--target", "0.05", "--method", "nosuch"},
	} {
		if code, _, _ := runCmd(args...); code != exitUsage {
			t.Errorf("%v: exit %d, want 2", args, code)
		}
	}
}
