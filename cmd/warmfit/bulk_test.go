package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"warmfit/fit/bulk"
)

func TestBulkUsageAndBadInput(t *testing.T) {
	dir := t.TempDir()
	noErr := filepath.Join(dir, "noerr.csv")
	os.WriteFile(noErr, []byte("T [K], chi [emu/mol]\n10, 0.01\n"), 0o644)
	for _, tc := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"bulk"}, exitUsage, "no input files"},
		{[]string{"bulk", "--model", "kagome", noErr}, exitUsage, "unknown lattice"},
		{[]string{"bulk", "--model", "chain+J3", noErr}, exitUsage, "unknown term"},
		{[]string{"bulk", "--start", "J=5eV", noErr}, exitUsage, "unknown unit"},
		{[]string{"bulk", "--phonon", "T7", noErr}, exitUsage, "--phonon"},
		{[]string{"bulk", "-o", noErr, noErr}, exitUsage, "also an input"},
		{[]string{"bulk", noErr}, exitFailure, "noerr.csv:1: column \"chi [emu/mol]\" has no standard-error column"},
		{[]string{"bulk", filepath.Join(dir, "missing.csv")}, exitFailure, "missing.csv"},
	} {
		code, _, stderr := runCmd(tc.args...)
		if code != tc.code || !strings.Contains(stderr, tc.want) {
			t.Errorf("%v: exit %d, stderr %q; want exit %d and %q", tc.args, code, stderr, tc.code, tc.want)
		}
	}
	code, out, _ := runCmd("help", "bulk")
	if code != exitOK || !strings.Contains(out, "warmfit bulk --demo") || !strings.Contains(out, "CODATA 2018") {
		t.Errorf("help bulk: exit %d\n%s", code, out)
	}
}

// A chain susceptibility written by the fit package's own model and read
// back through the command: the JSON carries the parameters, the
// correlation matrix and the p-value, the CSV has a plain header row, and
// data below the trusted range are refused with the lowest usable T.
func TestBulkFitsFileAndRefusesColdData(t *testing.T) {
	dir := t.TempDir()
	fwd, err := bulk.NewPeriodicClusterModel("chain", bulk.PeriodicClusterOptions{})
	if err != nil {
		t.Fatal(err)
	}
	write := func(name string, lo, hi float64) string {
		s := &bulk.Series{Quantity: bulk.Susceptibility}
		for _, T := range logSpaced(lo, hi, 20) {
			s.Points = append(s.Points, bulk.Point{T: T})
		}
		c, err := bulk.NewCandidate("truth", fwd, []*bulk.Series{s}, nil, false, map[string]float64{bulk.ParamJ: 40, bulk.ParamG: 2.1, bulk.ParamImpurity: 0}, nil)
		if err != nil {
			t.Fatal(err)
		}
		vals, _, err := c.Predict([]*bulk.Series{s})
		if err != nil {
			t.Fatal(err)
		}
		var b strings.Builder
		b.WriteString("T [K],chi [emu/mol],chi_err [emu/mol]\n")
		for i, p := range s.Points {
			fmt.Fprintf(&b, "%g,%.12g,%.4g\n", p.T, vals[0][i], 1e-3*vals[0][i])
		}
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		return path
	}
	warm := write("warm.csv", 30, 300)
	curves := filepath.Join(dir, "curves.csv")
	code, out, stderr := runCmd("bulk", "--order", "10", "--start", "J=3meV", "--fix", "chi0=0", "--fix", "rho=0", "--curves", curves, warm)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var doc struct {
		Constants  string
		Best       string
		Candidates []struct {
			Own struct {
				Parameters []struct {
					Name   string
					Value  float64
					Stderr float64
				}
				Correlation [][]float64
				PValue      float64 `json:"p_value"`
			} `json:"own_range"`
		}
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("JSON: %v\n%s", err, out)
	}
	own := doc.Candidates[0].Own
	if doc.Constants != bulk.CODATAEdition || doc.Best != "chain" || len(own.Correlation) != 2 || own.Parameters[0].Name != "J" {
		t.Errorf("unexpected document: %+v", doc)
	}
	if j := own.Parameters[0]; j.Value < 39.9 || j.Value > 40.1 {
		t.Errorf("J = %g +- %g, want 40", j.Value, j.Stderr)
	}
	head, err := os.ReadFile(curves)
	if err != nil || !strings.HasPrefix(string(head), "candidate,quantity,unit,file,line,T_K,") {
		t.Errorf("curves CSV header: %.80q, %v", head, err)
	}
	if meta := readSidecar(t, curves+".meta.json"); meta["best"] != "chain" || meta["candidates"] == nil {
		t.Errorf("curves sidecar: %v", meta)
	}
	cold := write("cold.csv", 1, 8)
	code, _, stderr = runCmd("bulk", "--order", "10", "--start", "J=40K", cold)
	if code != exitFailure || !strings.Contains(stderr, "lowest usable temperature") {
		t.Errorf("cold data: exit %d, stderr %q", code, stderr)
	}
}
