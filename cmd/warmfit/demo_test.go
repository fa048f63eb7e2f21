package main

import (
	"bytes"
	"encoding/xml"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"warmfit/lattice"
	"warmfit/lattice/model"
)

// TestDemoQuick runs the whole demo in its quick form and checks the
// files it promises, their well-formedness, and that the recovered
// coefficients are statistically consistent with the truth.
func TestDemoQuick(t *testing.T) {
	dir := t.TempDir()
	var stdout, stderr bytes.Buffer
	env := &runEnv{Stdout: &stdout, Stderr: &stderr, Stdin: strings.NewReader("")}
	if code := run(env, []string{"demo", "--quick", "--out", dir}); code != exitOK {
		t.Fatalf("exit %d\nstdout:\n%s\nstderr:\n%s", code, stdout.String(), stderr.String())
	}

	for _, name := range []string{
		"report.md", "truth.json", "template.json", "data.csv", "fitted.json",
		"patch-truth.json", "patch-template.json", "patch-shots.csv", "patch-fitted.json", "thermo.csv",
		"fig-coefficients.svg", "fig-pulls.svg", "fig-lattice.svg", "fig-thermo.svg",
	} {
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

	report, err := os.ReadFile(filepath.Join(dir, "report.md"))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{
		"## Verdicts", "Array fit: converged", "the error bars are honest", "Exact check:",
		"Temperature:", "## Reproduce with the warmfit command line", "warmfit fit --model template.json",
		"cross-term correlations",
	} {
		if !bytes.Contains(report, []byte(want)) {
			t.Errorf("report.md lacks %q", want)
		}
	}
	for _, bad := range []string{"NaN", "+Inf", "-Inf"} {
		if bytes.Contains(report, []byte(bad)) {
			t.Errorf("report.md contains %q", bad)
		}
	}
	if !strings.Contains(stdout.String(), "array fit") || !strings.Contains(stdout.String(), "report.md") {
		t.Errorf("stdout summary lacks the key lines:\n%s", stdout.String())
	}
	for step := 1; step <= demoSteps; step++ {
		if !strings.Contains(stderr.String(), "["+string(rune('0'+step))+"/6]") {
			t.Errorf("stderr lacks the header of step %d", step)
		}
	}

	truth, err := model.ReadFile(filepath.Join(dir, "truth.json"))
	if err != nil {
		t.Fatal(err)
	}
	fitted, err := model.ReadFile(filepath.Join(dir, "fitted.json"))
	if err != nil {
		t.Fatalf("fitted.json does not read back: %v", err)
	}
	// A 4x4 open square lattice has 2*4*3 = 24 bonds (closed form
	// 2 L (L-1)); xxz with both fields puts 3 terms on a bond and 2 on a
	// site: 24*3 + 16*2 = 104.
	if len(fitted.Terms) != 104 || len(truth.Terms) != 104 {
		t.Fatalf("%d fitted and %d true terms, want 104", len(fitted.Terms), len(truth.Terms))
	}
	want := map[string]float64{}
	for _, tm := range truth.Terms {
		want[tm.Key()] = tm.Coeff
	}
	var z2 float64
	for _, tm := range fitted.Terms {
		tv, ok := want[tm.Key()]
		if !ok || !tm.HasStderr || !(tm.Stderr > 0) {
			t.Fatalf("fitted term %s: in truth %v, stderr %v", tm.Key(), ok, tm.Stderr)
		}
		z := (tm.Coeff - tv) / tm.Stderr
		z2 += z * z
	}
	rms := math.Sqrt(z2 / float64(len(fitted.Terms)))
	// Pulls of honest error bars are standard normal, so their rms is
	// near 1 (its spread over 104 terms is about 1/sqrt(2*104) = 0.07).
	// The band [0.5, 2] is the usual loose consistency check (common
	// practice): error bars off by a factor of two either way fail it,
	// chance never does.
	if rms < 0.5 || rms > 2 {
		t.Errorf("pull rms %.3f outside [0.5, 2]: error bars inconsistent with the actual errors", rms)
	}
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

func TestNiceTicks(t *testing.T) {
	// Expected ticks follow the 1-2-2.5-5 x 10^k rule for readable axes
	// (common practice), worked out by hand.
	tests := []struct {
		lo, hi float64
		target int
		want   []float64
	}{
		{0, 1, 5, []float64{0, 0.2, 0.4, 0.6, 0.8, 1}},
		{-0.1, 0.1, 4, []float64{-0.1, -0.05, 0, 0.05, 0.1}},
		{0, 1.2, 6, []float64{0, 0.2, 0.4, 0.6, 0.8, 1, 1.2}},
		{3, 97, 4, []float64{25, 50, 75}},
	}
	for _, tc := range tests {
		got, _ := niceTicks(tc.lo, tc.hi, tc.target)
		if len(got) != len(tc.want) {
			t.Errorf("niceTicks(%g, %g, %d) = %v, want %v", tc.lo, tc.hi, tc.target, got, tc.want)
			continue
		}
		for i := range got {
			if math.Abs(got[i]-tc.want[i]) > 1e-12 {
				t.Errorf("niceTicks(%g, %g, %d) = %v, want %v", tc.lo, tc.hi, tc.target, got, tc.want)
				break
			}
		}
	}
	if s := tickLabel(0.25, 0.25); s != "0.25" {
		t.Errorf("tickLabel(0.25, 0.25) = %q", s)
	}
	if s := tickLabel(-0.1, 0.05); s != "\u22120.10" {
		t.Errorf("tickLabel(-0.1, 0.05) = %q", s)
	}
}

func TestDemoThermoGrid(t *testing.T) {
	tests := []struct {
		beta   float64
		points int
		top    float64
		n      int
	}{
		{0.3, 40, 1.2, 48},   // step 0.025 (largest round step <= 0.03)
		{0.25, 40, 1, 40},    // step 0.025
		{0.5, 40, 2, 40},     // step 0.05
		{0.123, 20, 0.5, 25}, // 4*0.123 = 0.492 -> 0.49; step 0.02 (<= 0.0245); 24.5 -> 25 steps
	}
	for _, tc := range tests {
		top, n := demoThermoGrid(tc.beta, tc.points)
		if math.Abs(top-tc.top) > 1e-12 || n != tc.n {
			t.Errorf("demoThermoGrid(%g, %d) = %g, %d; want %g, %d", tc.beta, tc.points, top, n, tc.top, tc.n)
		}
	}
}

func TestDemoPatchExtraction(t *testing.T) {
	sc := defaultDemoScenario()
	m, err := sc.buildDevice()
	if err != nil {
		t.Fatal(err)
	}
	p, err := sc.extractPatch(m)
	if err != nil {
		t.Fatal(err)
	}
	// A 3x3 open square patch has 2*3*2 = 12 bonds: 12*3 + 9*2 = 54 terms.
	if len(p.Terms) != 54 {
		t.Fatalf("patch has %d terms, want 54", len(p.Terms))
	}
	// The centre patch of 6x6 starts at (1, 1): patch site 0 is array
	// site 1 + 6*1 = 7, patch site 4 (its centre) is 2 + 6*2 = 14.
	coeff := map[string]float64{}
	for _, tm := range m.Terms {
		coeff[tm.Key()] = tm.Coeff
	}
	for _, tm := range p.Terms {
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
	// sample rms about 1/sqrt(2n); of a binomial fraction sqrt(p(1-p)/n).
	m, r, w := pullBands(100)
	if math.Abs(m-0.3) > 1e-12 || math.Abs(r-3/math.Sqrt(200)) > 1e-12 || math.Abs(w-3*math.Sqrt(0.9545*0.0455/100)) > 1e-12 {
		t.Errorf("pullBands(100) = %v, %v, %v", m, r, w)
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
