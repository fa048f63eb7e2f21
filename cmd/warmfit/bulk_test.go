package main

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"html"
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
	figures := filepath.Join(dir, "figures")
	sweeps := writeRingSweeps(t, dir, fwd)
	code, out, stderr := runCmd("bulk", "--order", "10", "--start", "J=3meV", "--fix", "chi0=0", "--fix", "rho=0", "--curves", curves, "--figures", figures, warm, sweeps)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	checkBulkFigureText(t, filepath.Join(figures, "bulk_chi.svg"), "trusted (chain): T ≥", "data", "chain: χ² = ", "over 20 chi points", "over all curves")
	if d := os.Getenv("WARMFIT_KEEP_FIGURES"); d != "" {
		for _, f := range []string{"bulk_chi.svg", "bulk_M.svg"} {
			b, _ := os.ReadFile(filepath.Join(figures, f))
			os.WriteFile(filepath.Join(d, f), b, 0o644)
		}
	}
	checkBulkFigureText(t, filepath.Join(figures, "bulk_M.svg"), "chain: χ² = ", "over 16 M points", "T = 60 K", "T = 150 K", "over all curves")
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
	// Outside the trusted range the model is not extrapolated (formats.md, bulk).
	rows, err := csv.NewReader(strings.NewReader(string(head))).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	for _, row := range rows[1:] {
		trusted, model, pull := row[12] == "true", row[10], row[11]
		if trusted == (model == "") || trusted == (pull == "") {
			t.Errorf("curves row %v: model %q and pull %q with trusted=%v", row, model, pull, trusted)
		}
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

// writeRingSweeps writes M(H) sweeps at 60 K and 150 K of the chain of
// TestBulkFitsFileAndRefusesColdData, 8 fields each.
func writeRingSweeps(t *testing.T, dir string, fwd bulk.ForwardModel) string {
	t.Helper()
	s := &bulk.Series{Quantity: bulk.Magnetization}
	for _, T := range []float64{60, 150} {
		for _, h := range linSpaced(0.5, 7, 8) {
			s.Points = append(s.Points, bulk.Point{T: T, H: h})
		}
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
	b.WriteString("T [K],H [T],M [mu_B/f.u.],M_err [mu_B/f.u.]\n")
	for i, p := range s.Points {
		fmt.Fprintf(&b, "%g,%g,%.12g,%.4g\n", p.T, p.H, vals[0][i], 1e-3*vals[0][i])
	}
	path := filepath.Join(dir, "sweeps.csv")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// checkBulkFigureText checks that the SVG figure says each of want: the
// legend entries (trusted band, data, each candidate's own chi^2 over
// the quantity shown), the global chi^2/dof in the heading, and the
// temperature of each M(H) sweep.
func checkBulkFigureText(t *testing.T, path string, want ...string) {
	t.Helper()
	svg, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	text := html.UnescapeString(string(svg))
	for _, w := range want {
		if !strings.Contains(text, w) {
			t.Errorf("%s does not say %q", filepath.Base(path), w)
		}
	}
	if strings.Contains(text, "χ²/dof = ") && strings.Count(text, "χ²/dof = ") > 1 {
		t.Errorf("%s repeats the global χ²/dof %d times", filepath.Base(path), strings.Count(text, "χ²/dof = "))
	}
}
