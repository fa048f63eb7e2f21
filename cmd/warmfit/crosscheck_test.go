package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"warmfit/lattice/model"
)

// crosscheckDoc reads the JSON output of crosscheck.
func crosscheckDoc(t *testing.T, text string) crosscheckJSON {
	t.Helper()
	var doc crosscheckJSON
	if err := json.Unmarshal([]byte(text), &doc); err != nil {
		t.Fatalf("crosscheck JSON: %v\n%s", err, text)
	}
	return doc
}

// crosscheckRows reads the CSV output of crosscheck: its comment lines
// and its rows by column name.
func crosscheckRows(t *testing.T, text string) (comments []string, rows []map[string]string) {
	t.Helper()
	var header []string
	for _, line := range strings.Split(strings.TrimSpace(text), "\n") {
		if strings.HasPrefix(line, "#") {
			comments = append(comments, line)
			continue
		}
		fields := strings.Split(line, ",")
		if header == nil {
			header = fields
			continue
		}
		if len(fields) != len(header) {
			t.Fatalf("row %q has %d fields, header %d", line, len(fields), len(header))
		}
		row := map[string]string{}
		for i, h := range header {
			row[h] = fields[i]
		}
		rows = append(rows, row)
	}
	if strings.Join(header, ",") != crosscheckCSVHeader {
		t.Fatalf("header %q, want %q", strings.Join(header, ","), crosscheckCSVHeader)
	}
	return comments, rows
}

// The command the demo records for its exact check, run on the demo's
// device model written to a file, reproduces the demo's own table order
// by order (the same patch, tolerance and work limit; JSON round-trips
// float64 exactly, so the numbers must be identical).
func TestCrosscheckEqualsDemoTable(t *testing.T) {
	sc := quickDemoScenario()
	device, err := sc.buildDevice()
	if err != nil {
		t.Fatal(err)
	}
	sites, err := sc.patchSites(device.Lattice)
	if err != nil {
		t.Fatal(err)
	}
	want, err := sc.crosscheck(device, sites, nil)
	if err != nil {
		t.Fatal(err)
	}
	truth := filepath.Join(t.TempDir(), "truth.json")
	f, err := os.Create(truth)
	if err != nil {
		t.Fatal(err)
	}
	if err := model.Write(f, device); err != nil {
		t.Fatal(err)
	}
	f.Close()
	code, out, stderr := runCmd(append(sc.crosscheckArgs(truth, sites), "--format", "json")...)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	got := crosscheckDoc(t, out)
	if len(got.Orders) != len(want.Orders) || got.AgreeOrder != want.AgreeOrder || got.Trusted != want.Trusted {
		t.Fatalf("%d orders, agree from %d, trusted %v; the demo has %d, %d, %v",
			len(got.Orders), got.AgreeOrder, got.Trusted, len(want.Orders), want.AgreeOrder, want.Trusted)
	}
	for i, w := range want.Orders {
		g := got.Orders[i]
		if g.MaxDiff != w.MaxDiff || g.RMSDiff != w.RMSDiff || g.Agrees != w.Agrees || g.Status != w.Status || g.WholePatch != w.Exact || g.Bounded != w.Covered {
			t.Errorf("order %d: max %g rms %g agrees %v; the demo has %g, %g, %v", w.Order, g.MaxDiff, g.RMSDiff, g.Agrees, w.MaxDiff, w.RMSDiff, w.Agrees)
		}
	}
	if strings.Join(got.Verdict, "\n") != strings.Join(want.Verdict, "\n") {
		t.Errorf("verdict %q, the demo's %q", got.Verdict, want.Verdict)
	}
}

// Every 3x2 patch of a 4x3 model: the CSV table has a row per order, the
// last covers whole patches and equals exact diagonalisation to rounding
// (a linked-cluster expansion of a finite cluster terminates at its size;
// Rigol, Bryant, Singh, arXiv 0706.3254), the differences shrink with
// every second order at this high temperature, the verdict is "trusted", and the
// figure is a well-formed SVG.
func TestCrosscheckShapeCSVAndFigure(t *testing.T) {
	dir := t.TempDir()
	modelPath := filepath.Join(dir, "m.json")
	if code, _, stderr := runCmd("model", "--lattice", "square:4x3", "--preset", "xxz",
		"--set", "Jxy=0.4,Jz=0.9,hz=0.3,hx=0.2", "--disorder", "0.1", "--seed", "5", "--beta", "0.2", "-o", modelPath); code != 0 {
		t.Fatalf("model: exit %d: %s", code, stderr)
	}
	out, svg := filepath.Join(dir, "cc.csv"), filepath.Join(dir, "cc.svg")
	code, stdout, stderr := runCmd("crosscheck", "--model", modelPath, "--shape", "3x2", "-o", out, "--svg", svg)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if stdout != "" {
		t.Errorf("stdout not empty with -o: %q", stdout)
	}
	if !strings.Contains(stderr, "all 4 patches of shape 3x2") || !strings.Contains(stderr, "trusted:") {
		t.Errorf("stderr lacks the patches or the verdict:\n%s", stderr)
	}
	data, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	comments, rows := crosscheckRows(t, string(data))
	if len(rows) != 6 || len(comments) != 0 {
		t.Fatalf("%d rows (want orders 1..6), %d comment lines (want none: the header comes first)", len(rows), len(comments))
	}
	// The verdict is in the metadata sidecar.
	meta := readSidecar(t, out+".meta.json")
	if lines, _ := json.Marshal(meta["comments"]); !strings.Contains(string(lines), "verdict: trusted:") || meta["trusted"] != true {
		t.Errorf("the sidecar lacks the verdict: %v", meta)
	}
	diffs := make([]float64, len(rows))
	for i, r := range rows {
		d, err := strconv.ParseFloat(r["max_diff"], 64)
		if err != nil || r["order"] != strconv.Itoa(i+1) || r["values"] == "0" {
			t.Fatalf("row %d: %v (%v)", i, r, err)
		}
		if whole := r["whole_patch"] == "true"; whole != (i == 5) {
			t.Errorf("order %d: whole_patch %s", i+1, r["whole_patch"])
		}
		if i == 5 && d > 1e-10 {
			t.Errorf("order 6 on 3x2 patches differs from exact by %g", d)
		}
		// On a bipartite lattice odd and even orders contribute unequally:
		// compare pairs of orders.
		if i >= 2 && i < 5 && d >= diffs[i-2] {
			t.Errorf("order %d: max difference %g did not shrink from %g at order %d", i+1, d, diffs[i-2], i-1)
		}
		diffs[i] = d
	}
	checkWellFormedSVG(t, svg)
}

// At a temperature far too low for the orders a patch can check, the
// verdict warns on stderr and in the file; the references come from
// thermal typicality when --dense-qubits is below the patch size, and
// agree with dense diagonalisation of the same patch within their error
// bars (4 sigma plus rounding; an independent method).
func TestCrosscheckWarnsAndTypicality(t *testing.T) {
	dir := t.TempDir()
	modelPath := filepath.Join(dir, "m.json")
	if code, _, stderr := runCmd("model", "--lattice", "square:4x2", "--preset", "xxz",
		"--set", "Jxy=0.5,Jz=1,hz=0.3,hx=0.2", "--beta", "3", "-o", modelPath); code != 0 {
		t.Fatalf("model: exit %d: %s", code, stderr)
	}
	code, out, stderr := runCmd("crosscheck", "--model", modelPath, "--order", "5", "--csv-comments")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if !strings.Contains(stderr, "WARNING") || !strings.Contains(out, "# WARNING") {
		t.Errorf("no warning at beta 3:\nstdout:\n%s\nstderr:\n%s", out, stderr)
	}
	code, dense, stderr := runCmd("crosscheck", "--model", modelPath, "--beta", "0.5", "--order", "3", "--format", "json")
	if code != exitOK {
		t.Fatalf("dense: exit %d: %s", code, stderr)
	}
	code, typical, stderr := runCmd("crosscheck", "--model", modelPath, "--beta", "0.5", "--order", "3", "--format", "json",
		"--dense-qubits", "6", "--vectors", "8", "--seed", "3")
	if code != exitOK {
		t.Fatalf("typicality: exit %d: %s", code, stderr)
	}
	a, b := crosscheckDoc(t, dense), crosscheckDoc(t, typical)
	if a.Patch[0].Method != "dense" || b.Patch[0].Method != "typicality" {
		t.Fatalf("methods %s and %s", a.Patch[0].Method, b.Patch[0].Method)
	}
	if b.Orders[0].MaxStderr == 0 {
		t.Error("typicality references without error bars")
	}
	for i, v := range b.Patch[0].Values {
		ref := a.Patch[0].Values[i]
		if v.Term != ref.Term || math.Abs(v.Exact-ref.Exact) > 4*v.Stderr+1e-12 {
			t.Errorf("%s: typicality %g +- %g, dense %g", v.Term, v.Exact, v.Stderr, ref.Exact)
		}
	}
}

// Mistakes in the call exit 2 with a message naming the flag; nothing is
// written.
func TestCrosscheckUsageErrors(t *testing.T) {
	dir := t.TempDir()
	small := writeTestModel(t, dir)
	big := filepath.Join(dir, "big.json")
	if code, _, stderr := runCmd("model", "--lattice", "square:6x6", "--preset", "tfim", "--beta", "0.3", "-o", big); code != 0 {
		t.Fatalf("model: exit %d: %s", code, stderr)
	}
	out := filepath.Join(dir, "never.csv")
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{}, "--model is required"},
		{[]string{"--model", small, "extra"}, "unexpected argument"},
		{[]string{"--model", small, "--shape", "2x2", "--sites", "0,1"}, "not both"},
		{[]string{"--model", small, "--shape", "2y2"}, "--shape"},
		{[]string{"--model", small, "--shape", "2x2x2"}, "--shape"},
		{[]string{"--model", small, "--shape", "9x1"}, "--shape"},
		{[]string{"--model", small, "--sites", "0,7"}, "out of range"},
		{[]string{"--model", small, "--sites", "0,4"}, "not connected"},
		{[]string{"--model", small, "--sites", "2-1"}, "range"},
		{[]string{"--model", small, "--sites", "0,1", "--max-patches", "1"}, "--max-patches"},
		{[]string{"--model", small, "--tol", "0"}, "--tol"},
		{[]string{"--model", small, "--order", "0"}, "--order"},
		{[]string{"--model", small, "--dense-qubits", "40"}, "--dense-qubits"},
		{[]string{"--model", small, "--vectors", "1"}, "--vectors"},
		{[]string{"--model", small, "--format", "xml"}, "--format"},
		{[]string{"--model", big}, "give --shape"},
		{[]string{"--model", big, "--shape", "6x5"}, "30 sites"},
		{[]string{"--model", big, "--shape", "5x5"}, "--budget"},
	} {
		args := append([]string{"crosscheck"}, c.args...)
		code, _, stderr := runCmd(append(args, "-o", out)...)
		if code != exitUsage || !strings.Contains(stderr, c.want) {
			t.Errorf("%v: exit %d, want %d with %q:\n%s", c.args, code, exitUsage, c.want, stderr)
		}
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("a refused call wrote %s", out)
	}
	if code, stdout, _ := runCmd("help", "crosscheck"); code != exitOK || !strings.Contains(stdout, "Example:") || !strings.Contains(stdout, "model --check") {
		t.Errorf("help: exit %d\n%s", code, stdout)
	}
}

// --max-patches keeps patches spread over the lattice, and a listed
// patch is checked as given.
func TestCrosscheckPatchSelection(t *testing.T) {
	sets := [][]int{{0}, {1}, {2}, {3}, {4}, {5}, {6}, {7}}
	got := spreadPatches(sets, 3)
	if len(got) != 3 || got[0][0] != 0 || got[1][0] != 2 || got[2][0] != 5 {
		t.Errorf("spreadPatches: %v", got)
	}
	if len(spreadPatches(sets, 0)) != 8 || len(spreadPatches(sets, 20)) != 8 {
		t.Error("spreadPatches with no limit dropped patches")
	}
	s, err := parseSiteSet("0-2, 6,7", 9)
	if err != nil || len(s) != 5 || s[3] != 6 {
		t.Errorf("parseSiteSet: %v %v", s, err)
	}
	modelPath := writeTestModel(t, t.TempDir())
	code, out, stderr := runCmd("crosscheck", "--model", modelPath, "--sites", "0-2", "--sites", "1,2,4,5", "--format", "json")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	doc := crosscheckDoc(t, out)
	if len(doc.Patch) != 2 || len(doc.Patch[1].Sites) != 4 || doc.Patches != "2 listed patches" {
		t.Errorf("patches %q: %+v", doc.Patches, doc.Patch)
	}
}
