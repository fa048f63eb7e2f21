package main

import (
	"bytes"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"warmfit/lattice"
	"warmfit/lattice/model"
	"warmfit/validate"
)

// TestDemoQuick runs the whole demo in its quick form and checks the
// files it promises, their well-formedness, that the recovered
// coefficients are statistically consistent with the truth, that the
// expansion agrees with exact diagonalisation on the patch, that the
// planner predicts the error bars the fit got, and that the commands the
// report lists write the same data.
func TestDemoQuick(t *testing.T) {
	dir := t.TempDir()
	var stdout, stderr bytes.Buffer
	env := &runEnv{Stdout: &stdout, Stderr: &stderr, Stdin: strings.NewReader("")}
	d, err := runDemoScenario(env, quickDemoScenario(), dir)
	if err != nil {
		t.Fatalf("%v\nstdout:\n%s\nstderr:\n%s", err, stdout.String(), stderr.String())
	}
	checkDemoFiles(t, dir)
	checkDemoReport(t, dir, stdout.String(), stderr.String())
	checkDemoPulls(t, dir, "truth.json", "fitted.json", 104)
	// A 3x3 open square patch has 2*3*2 = 12 bonds: 12*3 + 9*2 = 54 terms.
	checkDemoPulls(t, dir, "patch-truth.json", "patch-fitted.json", 54)

	// With clusters as large as the patch the linked-cluster expansion
	// is exact (derived: every connected cluster of the patch is
	// included); at the array's order it must be within the data
	// tolerance of dense exact diagonalisation.
	c := d.patch.Check
	if full := c.Orders[len(c.Orders)-1]; full.Order != 9 || full.MaxDiff > 1e-9 {
		t.Errorf("expansion at order %d differs from exact by %g, want order 9 within 1e-9", full.Order, full.MaxDiff)
	}
	if o := d.array.Result.Order; c.Orders[o-1].MaxDiff > d.sc.dataTol() {
		t.Errorf("expansion at the array's order %d differs from exact by %g, more than %g", o, c.Orders[o-1].MaxDiff, d.sc.dataTol())
	}
	// The planner predicts the fit's error bars from the fitted model by
	// the same delta method, with the covariances between estimates
	// left out (the binomial data have none): the largest stderr should
	// agree closely (common practice: within 20%).
	if ratio := d.planAtRun / d.array.Recovery.MaxStderr; ratio < 0.8 || ratio > 1.25 {
		t.Errorf("planner predicts a largest stderr of %g at the shots used, the fit got %g", d.planAtRun, d.array.Recovery.MaxStderr)
	}
	t.Run("commands", func(t *testing.T) { checkDemoCommands(t, dir) })
	t.Run("crosscheck", func(t *testing.T) {
		// The crosscheck command the report records, run on the demo's
		// truth.json, gives the demo's own table (to the last bit: JSON
		// round-trips float64).
		args := append(d.sc.crosscheckArgs(filepath.Join(dir, "truth.json"), d.patch.Sites), "--format", "json")
		code, out, stderr := runCmd(args...)
		if code != exitOK {
			t.Fatalf("exit %d: %s", code, stderr)
		}
		got := crosscheckDoc(t, out)
		if len(got.Orders) != len(c.Orders) || got.AgreeOrder != c.AgreeOrder {
			t.Fatalf("%d orders agreeing from %d; the demo has %d from %d", len(got.Orders), got.AgreeOrder, len(c.Orders), c.AgreeOrder)
		}
		for i, w := range c.Orders {
			if g := got.Orders[i]; g.MaxDiff != w.MaxDiff || g.RMSDiff != w.RMSDiff || g.Agrees != w.Agrees {
				t.Errorf("order %d: max %g rms %g; the demo has %g, %g", w.Order, g.MaxDiff, g.RMSDiff, w.MaxDiff, w.RMSDiff)
			}
		}
	})
	t.Run("deterministic", func(t *testing.T) {
		if testing.Short() {
			t.Skip("runs the demo a second time")
		}
		again := t.TempDir()
		if _, err := runDemoScenario(&runEnv{Stdout: io.Discard, Stderr: io.Discard}, quickDemoScenario(), again); err != nil {
			t.Fatal(err)
		}
		for _, name := range []string{"data.csv", "patch-shots.csv", "sweep.csv", "fig-coefficients.svg", "fig-pulls.svg", "fig-lattice.svg", "fig-sweep.svg"} {
			a, errA := os.ReadFile(filepath.Join(dir, name))
			b, errB := os.ReadFile(filepath.Join(again, name))
			if errA != nil || errB != nil || !bytes.Equal(a, b) {
				t.Errorf("%s differs between two runs (%v, %v)", name, errA, errB)
			}
		}
	})
}

// demoFiles are the files the quick demo promises.
var demoFiles = []string{
	"report.md", "truth.json", "template.json", "data.csv", "fitted.json",
	"patch-truth.json", "patch-template.json", "patch-shots.csv", "patch-fitted.json", "sweep.csv",
	"fig-coefficients.svg", "fig-pulls.svg", "fig-lattice.svg", "fig-sweep.svg",
}

func checkDemoFiles(t *testing.T, dir string) {
	t.Helper()
	for _, name := range demoFiles {
		fi, err := os.Stat(filepath.Join(dir, name))
		if err != nil {
			t.Errorf("missing output %s: %v", name, err)
			continue
		}
		if fi.Size() == 0 {
			t.Errorf("%s is empty", name)
		}
	}
	// Atomic writes leave no temporary files behind.
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		if strings.HasPrefix(e.Name(), ".") {
			t.Errorf("leftover temporary file %s", e.Name())
		}
	}
	for _, f := range demoFigureList {
		checkWellFormedSVG(t, filepath.Join(dir, f.File))
	}
}

// checkMarkdownTables: every row of a table has as many cells as the
// table's header, so no bare '|' inside a cell splits it (cells escape it
// as &#124;; GitHub-flavoured Markdown tables, from memory).
func checkMarkdownTables(t *testing.T, name, doc string) {
	t.Helper()
	cells := func(line string) int { return strings.Count(line, "|") - 1 }
	want := 0
	for i, line := range strings.Split(doc, "\n") {
		if !strings.HasPrefix(line, "|") {
			want = 0
			continue
		}
		if want == 0 {
			want = cells(line)
			continue
		}
		if got := cells(line); got != want {
			t.Errorf("%s:%d: %d table cells, the header has %d (unescaped '|'?): %s", name, i+1, got, want, line)
		}
	}
}

func checkDemoReport(t *testing.T, dir, stdout, stderr string) {
	t.Helper()
	report, err := os.ReadFile(filepath.Join(dir, "report.md"))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{
		"## Verdicts", "Array fit: converged", "consistent with honest error bars", "Exact check:",
		"Temperature:", "## Reproduce with the warmfit command line", "warmfit fit --model template.json",
		"warmfit sweep --model fitted.json --beta-grid ", "warmfit crosscheck --model truth.json --sites ",
		"cross-term correlations",
	} {
		if !bytes.Contains(report, []byte(want)) {
			t.Errorf("report.md lacks %q", want)
		}
	}
	for _, bad := range []string{"NaN", "+Inf", "-Inf", "WARNING"} {
		if bytes.Contains(report, []byte(bad)) {
			t.Errorf("report.md contains %q", bad)
		}
	}
	checkMarkdownTables(t, "report.md", string(report))
	if !strings.Contains(stdout, "array fit") || !strings.Contains(stdout, "report.md") || !strings.Contains(stdout, "every check passed") {
		t.Errorf("stdout summary lacks the key lines:\n%s", stdout)
	}
	for step := 1; step <= demoSteps; step++ {
		if !strings.Contains(stderr, fmt.Sprintf("[%d/%d]", step, demoSteps)) {
			t.Errorf("stderr lacks the header of step %d", step)
		}
	}
}

// checkDemoPulls reads a fit and its truth back from the files and checks
// that the pulls are consistent with standard normal.
func checkDemoPulls(t *testing.T, dir, truthFile, fittedFile string, terms int) {
	t.Helper()
	truth, err := model.ReadFile(filepath.Join(dir, truthFile))
	if err != nil {
		t.Fatal(err)
	}
	fitted, err := model.ReadFile(filepath.Join(dir, fittedFile))
	if err != nil {
		t.Fatalf("%s does not read back: %v", fittedFile, err)
	}
	if len(fitted.Terms) != terms || len(truth.Terms) != terms {
		t.Fatalf("%s: %d fitted and %d true terms, want %d", fittedFile, len(fitted.Terms), len(truth.Terms), terms)
	}
	want := map[string]float64{}
	for _, tm := range truth.Terms {
		want[tm.Key()] = tm.Coeff
	}
	var z2 float64
	for _, tm := range fitted.Terms {
		tv, ok := want[tm.Key()]
		if !ok || !tm.HasStderr || !(tm.Stderr > 0) {
			t.Fatalf("%s: term %s: in truth %v, stderr %v", fittedFile, tm.Key(), ok, tm.Stderr)
		}
		z := (tm.Coeff - tv) / tm.Stderr
		z2 += z * z
	}
	rms := math.Sqrt(z2 / float64(terms))
	// Pulls of honest error bars are standard normal, so their rms is
	// near 1 (its spread over 104 terms is about 1/sqrt(2*104) = 0.07,
	// over 54 about 0.1). The band [0.5, 2] is the usual loose
	// consistency check (common practice): error bars off by a factor of
	// two either way fail it, chance never does.
	if rms < 0.5 || rms > 2 {
		t.Errorf("%s: pull rms %.3f outside [0.5, 2]: error bars inconsistent with the actual errors", fittedFile, rms)
	}
}

// checkDemoCommands runs the model and sample commands of the report's
// script in the output directory, each writing beside the demo's file,
// and compares the data (comment lines aside): the demo computed them
// through the library, the commands must write the same.
func checkDemoCommands(t *testing.T, dir string) {
	report, err := os.ReadFile(filepath.Join(dir, "report.md"))
	if err != nil {
		t.Fatal(err)
	}
	t.Chdir(dir)
	checked := 0
	for _, line := range strings.Split(string(report), "\n") {
		args := strings.Fields(line)
		if len(args) < 2 || args[0] != "warmfit" || (args[1] != "model" && args[1] != "sample") {
			continue
		}
		args = args[1:]
		out := ""
		for i := range args {
			if args[i] == "-o" && i+1 < len(args) {
				out = args[i+1]
				args[i+1] = "again-" + out
			}
		}
		var stderr bytes.Buffer
		if code := run(&runEnv{Stdout: io.Discard, Stderr: &stderr}, args); code != exitOK {
			t.Errorf("warmfit %s: exit %d\n%s", strings.Join(args, " "), code, stderr.String())
			continue
		}
		if a, b := dataLines(t, out), dataLines(t, "again-"+out); a != b {
			t.Errorf("warmfit %s does not write what the demo wrote into %s", strings.Join(args, " "), out)
		}
		checked++
	}
	// truth.json, template.json, data.csv and patch-shots.csv.
	if checked != 4 {
		t.Errorf("%d model and sample commands in the report, want 4", checked)
	}
}

// dataLines returns a file without its comment lines.
func dataLines(t *testing.T, path string) string {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var keep []string
	for _, l := range strings.Split(string(data), "\n") {
		if !strings.HasPrefix(l, "#") {
			keep = append(keep, l)
		}
	}
	return strings.Join(keep, "\n")
}

// checkWellFormedSVG decodes the whole document with encoding/xml and
// checks that the root is an <svg> element.
func checkWellFormedSVG(t *testing.T, path string) {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Error(err)
		return
	}
	dec := xml.NewDecoder(bytes.NewReader(data))
	root := ""
	for {
		tok, err := dec.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Errorf("%s: not well-formed XML: %v", filepath.Base(path), err)
			return
		}
		if se, ok := tok.(xml.StartElement); ok && root == "" {
			root = se.Name.Local
		}
	}
	if root != "svg" {
		t.Errorf("%s: root element %q, want svg", filepath.Base(path), root)
	}
	if bytes.Contains(data, []byte("NaN")) || bytes.Contains(data, []byte("Inf")) {
		t.Errorf("%s contains a non-finite number", filepath.Base(path))
	}
}

func TestDemoUsageErrors(t *testing.T) {
	tests := []struct {
		name string
		args []string
	}{
		{"size too small", []string{"--size", "2x2"}},
		{"size not a number", []string{"--size", "sixbysix"}},
		{"no shots", []string{"--shots", "1"}},
		{"order below the terms", []string{"--order", "1"}},
		{"order not a number", []string{"--order", "high"}},
		{"negative beta", []string{"--beta", "-1"}},
		{"stray argument", []string{"extra"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var out, errb bytes.Buffer
			env := &runEnv{Stdout: &out, Stderr: &errb}
			args := append([]string{"demo", "--out", t.TempDir()}, tc.args...)
			if code := run(env, args); code != exitUsage {
				t.Errorf("exit %d, want %d; stderr:\n%s", code, exitUsage, errb.String())
			}
		})
	}
}

// TestDemoOutIsFile: an output path that cannot be a directory is a
// failure (exit 1) with a clear message, not a usage error.
func TestDemoOutIsFile(t *testing.T) {
	file := filepath.Join(t.TempDir(), "taken")
	if err := os.WriteFile(file, []byte("x"), 0o644); err != nil {
		t.Fatal(err)
	}
	var out, errb bytes.Buffer
	env := &runEnv{Stdout: &out, Stderr: &errb}
	if code := run(env, []string{"demo", "--quick", "--out", file}); code != exitFailure {
		t.Errorf("exit %d, want %d; stderr:\n%s", code, exitFailure, errb.String())
	}
	if !strings.Contains(errb.String(), "output directory") {
		t.Errorf("stderr does not name the output directory:\n%s", errb.String())
	}
}

// The quick flag gives the quick scenario.
func TestDemoFlagsScenario(t *testing.T) {
	o := demoFlags{quick: true, shots: 20000, seed: 1, order: "auto"}
	sc, err := o.scenario()
	if err != nil {
		t.Fatal(err)
	}
	if q := quickDemoScenario(); sc.Width != q.Width || sc.Beta != q.Beta || sc.Order != 0 || !sc.Quick {
		t.Errorf("--quick gives %+v, want %+v", sc, q)
	}
	o.order, o.size = "5", "5x4"
	if sc, err = o.scenario(); err != nil || sc.Order != 5 || sc.Width != 5 || sc.Height != 4 {
		t.Errorf("--order 5 --size 5x4 gives order %d, %dx%d (%v)", sc.Order, sc.Width, sc.Height, err)
	}
}

// The sweep's grid: a round step (1, 2, 2.5 or 5 times a power of ten,
// common practice) from one step to about four times beta; expected
// values worked out by hand.
func TestDemoSweepGrid(t *testing.T) {
	tests := []struct {
		beta   float64
		points int
		lo, hi float64
		n      int
	}{
		{0.35, 60, 0.025, 1.4, 56},  // 1.4/60 = 0.0233 -> step 0.025
		{0.25, 50, 0.02, 1, 50},     // 1/50 = 0.02
		{0.55, 60, 0.05, 2.2, 44},   // 2.2/60 = 0.0367 -> 0.05
		{0.123, 20, 0.025, 0.5, 20}, // 0.492/20 = 0.0246 -> 0.025; 19.68 -> 20 steps
	}
	for _, tc := range tests {
		sc := defaultDemoScenario()
		sc.Beta, sc.SweepPoints = tc.beta, tc.points
		lo, hi, n := sc.sweepGrid()
		if lo != tc.lo || hi != tc.hi || n != tc.n {
			t.Errorf("beta %g, %d points: grid %g..%g, %d points; want %g..%g, %d", tc.beta, tc.points, lo, hi, n, tc.lo, tc.hi, tc.n)
		}
		if b := sc.sweepBetas(); len(b) != n || b[0] != lo || math.Abs(b[n-1]-hi) > 1e-15 || math.Abs(b[1]-b[0]-lo) > 1e-12 {
			t.Errorf("beta %g: sweep %v", tc.beta, b)
		}
	}
}

// The patch is the 3x3 box nearest the middle of the array, cut from the
// device with its coefficients.
func TestDemoPatch(t *testing.T) {
	sc := defaultDemoScenario()
	m, err := sc.buildDevice()
	if err != nil {
		t.Fatal(err)
	}
	sites, err := sc.patchSites(m.Lattice)
	if err != nil {
		t.Fatal(err)
	}
	// On 6x6 the boxes starting at x, y = 1 and 2 are equally near the
	// middle; the first is at (1, 1): sites x + 6 y for x, y = 1..3.
	if want := []int{7, 8, 9, 13, 14, 15, 19, 20, 21}; !slices.Equal(sites, want) {
		t.Fatalf("patch sites %v, want %v", sites, want)
	}
	p, err := validate.CutPatch(m, sites)
	if err != nil {
		t.Fatal(err)
	}
	if len(p.Model.Terms) != 54 {
		t.Fatalf("patch has %d terms, want 54", len(p.Model.Terms))
	}
	coeff := map[string]float64{}
	for _, tm := range m.Terms {
		coeff[tm.Key()] = tm.Coeff
	}
	// Patch site 4 (the centre) is array site 14, patch sites 0 and 1 are
	// array sites 7 and 8.
	for _, tm := range p.Model.Terms {
		if len(tm.Sites) == 1 && tm.Sites[0] == 4 {
			if want := coeff[lattice.TermKey(tm.Pauli, []int{14})]; tm.Coeff != want {
				t.Errorf("patch %s = %v, want the array's %v", tm.Key(), tm.Coeff, want)
			}
		}
		if tm.Pauli == "ZZ" && tm.Sites[0] == 0 && tm.Sites[1] == 1 {
			if want := coeff[lattice.TermKey("ZZ", []int{7, 8})]; tm.Coeff != want {
				t.Errorf("patch ZZ 0 1 = %v, want the array's ZZ 7 8 = %v", tm.Coeff, want)
			}
		}
	}
}

func TestPullBands(t *testing.T) {
	// Closed forms: sd of the mean of n unit normals 1/sqrt(n); of the
	// sample rms about 1/sqrt(2n).
	m, r := pullBands(100)
	if math.Abs(m-0.3) > 1e-12 || math.Abs(r-3/math.Sqrt(200)) > 1e-12 {
		t.Errorf("pullBands(100) = %v, %v", m, r)
	}
}

func TestMaxPullChance(t *testing.T) {
	// One normal pull: P(|z| >= 1.96) = 0.05 (two-sided 95% quantile, from
	// memory). n pulls: 1 - (1 - q)^n, checked against the direct power.
	if p := maxPullChance(1.959963984540054, 1); math.Abs(p-0.05) > 1e-9 {
		t.Errorf("maxPullChance(1.96, 1) = %v, want 0.05", p)
	}
	q := math.Erfc(3 / math.Sqrt2)
	if p, want := maxPullChance(3, 252), 1-math.Pow(1-q, 252); math.Abs(p-want) > 1e-12 {
		t.Errorf("maxPullChance(3, 252) = %v, want %v", p, want)
	}
}

func TestShellQuote(t *testing.T) {
	for in, want := range map[string]string{
		"square:6x6":   "square:6x6",
		"Jxy=0.2,Jz=1": "Jxy=0.2,Jz=1",
		"my dir":       "'my dir'",
		"it's":         `'it'\''s'`,
		"":             "''",
	} {
		if got := shellQuote(in); got != want {
			t.Errorf("shellQuote(%q) = %q, want %q", in, got, want)
		}
	}
}
