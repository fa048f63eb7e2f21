package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func runLatticeCmd(args ...string) (code int, stdout, stderr string) {
	return runCmd(append([]string{"lattice"}, args...)...)
}

func TestLatticeClustersCSV(t *testing.T) {
	tests := []struct {
		args []string
		want string
	}{
		// Open chain of 5 sites: 5-n+1 intervals of n sites (closed form).
		{[]string{"--lattice", "chain:5", "--clusters", "3"}, "size,count\n1,5\n2,4\n3,3\n"},
		// 2x2 square plaquette by hand: 4 sites, 4 bonds, 4 corners of 3, the whole.
		{[]string{"--lattice", "square:2x2", "--clusters", "4"}, "size,count\n1,4\n2,4\n3,4\n4,1\n"},
		// 3x3 square with diagonals: 12 NN + 8 NNN pairs (closed forms
		// Lx(Ly-1)+Ly(Lx-1) and 2(Lx-1)(Ly-1)).
		{[]string{"--lattice", "square:3x3", "--shells", "2", "--clusters", "2"}, "size,count\n1,9\n2,20\n"},
		// Large torus: fixed polyominoes per site, OEIS A001168 (1, 2, 6, 19) x 81 sites.
		{[]string{"--lattice", "square:9x9:periodic", "--clusters", "4"}, "size,count\n1,81\n2,162\n3,486\n4,1539\n"},
		// Custom graph: two disjoint triangles, each K3 with 2^3-1 = 7 clusters.
		{[]string{"--lattice", "../../testdata/graphs/two_triangles.json", "--clusters", "3"}, "size,count\n1,6\n2,6\n3,2\n"},
	}
	for _, tt := range tests {
		code, out, errs := runLatticeCmd(tt.args...)
		if code != exitOK || out != tt.want {
			t.Errorf("%v: exit %d, stdout %q, stderr %q; want 0 and %q", tt.args, code, out, errs, tt.want)
		}
	}
}

func TestLatticeExitCodes(t *testing.T) {
	tests := []struct {
		args []string
		code int
		want string // in stderr
	}{
		{[]string{"--lattice", "square:4x0"}, exitUsage, "square:4x0: size 0 must be positive"},
		{[]string{"--lattice", "hexagon:3x3"}, exitUsage, "unknown lattice kind"},
		{[]string{"--lattice", "square:2x2:periodic"}, exitUsage, "too small"},
		{[]string{"--lattice", "triangular:3x3:periodic", "--shells", "2"}, exitUsage, "too small"},
		{[]string{"--lattice", "square:4x4", "--clusters", "0"}, exitUsage, "at least 1"},
		{[]string{"--lattice", "square:4x4", "--clusters", "-3"}, exitUsage, "at least 1"},
		{[]string{"--lattice", "square:4x4", "--shells", "3"}, exitUsage, "want 1 or 2"},
		{[]string{"--lattice", "square:4x4", "--format", "xml"}, exitUsage, "text or json"},
		{[]string{"--lattice", "square:4x4", "--clusters", "3", "--format", "json"}, exitUsage, "does not combine"},
		{[]string{"--clusters", "3"}, exitUsage, "--lattice is required"},
		{[]string{"--lattice", "square:4x4", "extra"}, exitUsage, "unexpected argument"},
		{[]string{"--lattice", "square:4x4", "--bogus"}, exitUsage, "unknown flag"},
		{[]string{"--lattice", "../../testdata/graphs/bad_bond_out_of_range.json"}, exitFailure, "bonds[3]: site 17 out of range [0,12)"},
		{[]string{"--lattice", "no-such-file.json"}, exitFailure, "no-such-file.json"},
		{[]string{"--lattice", "square:100x100", "--clusters", "12", "--max-clusters", "1000"}, exitUsage, "more than --max-clusters 1000"},
	}
	for _, tt := range tests {
		code, _, errs := runLatticeCmd(tt.args...)
		if code != tt.code || !strings.Contains(errs, tt.want) {
			t.Errorf("%v: exit %d, stderr %q; want exit %d mentioning %q", tt.args, code, errs, tt.code, tt.want)
		}
	}
}

func TestLatticeSummaryAndJSON(t *testing.T) {
	code, out, _ := runLatticeCmd("--lattice", "square:4x4")
	// Open 4x4 square: 24 NN bonds, 18 diagonals; 4 corners of degree 2,
	// 8 edge sites of degree 3, 4 inner sites of degree 4 (by hand).
	for _, w := range []string{"square:4x4", "sites        16", "NN bonds     24", "NNN bonds    18",
		"2 on 4 sites, 3 on 8 sites, 4 on 4 sites", "components   1"} {
		if code != exitOK || !strings.Contains(out, w) {
			t.Errorf("summary of square:4x4 lacks %q:\n%s", w, out)
		}
	}
	code, _, errs := runLatticeCmd("--lattice", "../../testdata/graphs/two_triangles.json")
	if code != exitOK || !strings.Contains(errs, "2 disconnected components") {
		t.Errorf("two triangles: exit %d, stderr %q; want a warning", code, errs)
	}

	code, out, _ = runLatticeCmd("--lattice", "honeycomb:2x2:periodic", "--format", "json")
	var obj struct {
		Kind     string      `json:"kind"`
		Size     []int       `json:"size"`
		Boundary string      `json:"boundary"`
		Sites    [][]float64 `json:"sites"`
		Bonds    [][2]int    `json:"bonds"`
	}
	if err := json.Unmarshal([]byte(out), &obj); code != exitOK || err != nil {
		t.Fatalf("--format json: exit %d, %v\n%s", code, err, out)
	}
	// Periodic honeycomb: 2 sites per cell, 3N/2 NN bonds (coordination 3).
	if obj.Kind != "honeycomb" || obj.Boundary != "periodic" || len(obj.Sites) != 8 || len(obj.Bonds) != 12 {
		t.Errorf("--format json: %+v", obj)
	}
}

func TestLatticeSVGAndOutputFiles(t *testing.T) {
	dir := t.TempDir()
	svg := filepath.Join(dir, "k.svg")
	csv := filepath.Join(dir, "counts.csv")
	code, out, errs := runLatticeCmd("--lattice", "kagome:2x2", "--svg", svg, "--clusters", "1", "-o", csv)
	if code != exitOK || out != "" {
		t.Fatalf("exit %d, stdout %q, stderr %q", code, out, errs)
	}
	data, err := os.ReadFile(svg)
	// 12 sites and one legend swatch per sublattice: the three site fills
	// of kagome are explained (review finding 9).
	if err != nil || !bytes.HasPrefix(data, []byte("<svg")) || bytes.Count(data, []byte("<circle")) != 12+3 ||
		!bytes.Contains(data, []byte("sublattice")) || !bytes.Contains(data, []byte("C: sites 2, 5, 8")) {
		t.Errorf("SVG file: %v, %d circles, sublattice legend %v", err, bytes.Count(data, []byte("<circle")), bytes.Contains(data, []byte("sublattice")))
	}
	if data, err := os.ReadFile(csv); err != nil || string(data) != "size,count\n1,12\n" {
		t.Errorf("CSV file: %q, %v", data, err)
	}
	// An unwritable SVG path is refused before the work, naming the directory.
	bad := filepath.Join(dir, "missing", "x.svg")
	if code, _, errs := runLatticeCmd("--lattice", "chain:3", "--svg", bad); code != exitUsage || !strings.Contains(errs, filepath.Join(dir, "missing")) {
		t.Errorf("unwritable --svg: exit %d, want %d; stderr %q", code, exitUsage, errs)
	}
}

func TestLatticeHelp(t *testing.T) {
	code, out, _ := runLatticeCmd("--help")
	for _, w := range []string{"warmfit lattice — ", "--clusters", "Example:", "warmfit lattice --lattice square:20x20 --clusters 8"} {
		if code != exitOK || !strings.Contains(out, w) {
			t.Errorf("help lacks %q", w)
		}
	}
}
