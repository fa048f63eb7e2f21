package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/spf13/pflag"

	"warmfit/cluster"
	"warmfit/validate"
)

// readmeText is README.md of the repository.
func readmeText(t *testing.T) string {
	t.Helper()
	b, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// tourLine is one command of the README tour with the trailing comment
// that says what it should print.
type tourLine struct {
	Args    []string // after ./warmfit
	Comment string   // the "# ..." after the command, if any
}

// readmeTour parses the sh block under "## A tour": continuation lines
// joined, comment lines dropped, the go build line skipped.
func readmeTour(t *testing.T, readme string) []tourLine {
	t.Helper()
	_, after, ok := strings.Cut(readme, "## A tour")
	if !ok {
		t.Fatal("README.md has no section \"## A tour\"")
	}
	_, block, ok := strings.Cut(after, "```sh\n")
	if !ok {
		t.Fatal("the tour has no ```sh block")
	}
	block, _, _ = strings.Cut(block, "```")
	block = strings.ReplaceAll(block, "\\\n", " ")
	var lines []tourLine
	for _, l := range strings.Split(block, "\n") {
		l = strings.TrimSpace(l)
		// A comment line quoting a WARNING belongs to the command above.
		if w := strings.TrimSpace(strings.TrimPrefix(l, "#")); strings.HasPrefix(l, "#") && strings.HasPrefix(w, "WARNING:") && len(lines) > 0 {
			lines[len(lines)-1].Comment = w
			continue
		}
		if l == "" || strings.HasPrefix(l, "#") || strings.HasPrefix(l, "go build") {
			continue
		}
		cmd, comment, _ := strings.Cut(l, " #")
		fields := strings.Fields(cmd)
		if fields[0] != "./warmfit" || strings.ContainsAny(cmd, `"'$|><;&`) {
			t.Fatalf("tour line %q: want ./warmfit and plain arguments", l)
		}
		lines = append(lines, tourLine{Args: fields[1:], Comment: strings.TrimSpace(comment)})
	}
	return lines
}

// tourTestSizes shrinks the tour for the test: the same commands on a
// 4x4 lattice (the smallest with 3x3 patches that are not the whole) with
// fewer temperatures, so that it runs in seconds. Every
// other word is the README's own.
var tourTestSizes = []struct{ from, to string }{
	{"square:6x6", "square:4x4"},
	{"--clusters 6", "--clusters 5"},
	{"points=20", "points=5"},
	{"--shots 20000", "--shots 2000"},
	{"--shape 3x3", "--shape 3x3 --max-patches 1"},
}

// TestReadmeTourRuns runs every command line of the README tour, at test
// sizes, in a temporary directory, in order: each must exit 0, a line
// whose comment quotes a WARNING must print that WARNING on stderr, and
// the other lines must print none. WARMFIT_TOUR_FULL=1 runs the tour at
// the README's own sizes (some minutes); -v logs each line's wall time.
func TestReadmeTourRuns(t *testing.T) {
	tour := readmeTour(t, readmeText(t))
	if len(tour) < 8 {
		t.Fatalf("the tour has %d command lines; the parser lost some", len(tour))
	}
	full := os.Getenv("WARMFIT_TOUR_FULL") != ""
	t.Chdir(t.TempDir())
	for _, line := range tour {
		cmd := strings.Join(line.Args, " ")
		if !full {
			for _, s := range tourTestSizes {
				cmd = strings.ReplaceAll(cmd, s.from, s.to)
			}
		}
		start := time.Now()
		code, _, stderr := runCmd(strings.Fields(cmd)...)
		t.Logf("%6.1fs  warmfit %s", time.Since(start).Seconds(), cmd)
		if code != exitOK {
			t.Fatalf("warmfit %s: exit %d\n%s", cmd, code, stderr)
		}
		if line.Comment == "" && strings.Contains(stderr, "WARNING") {
			t.Errorf("warmfit %s: a WARNING the tour does not announce:\n%s", cmd, stderr)
		}
		if w, ok := strings.CutPrefix(line.Comment, "WARNING:"); ok {
			for _, part := range strings.Split(w, "...") {
				if part = strings.TrimSpace(part); !strings.Contains(stderr, part) {
					t.Errorf("warmfit %s: the tour promises %q, stderr has no %q:\n%s", cmd, line.Comment, part, stderr)
				}
			}
			if !strings.Contains(stderr, "WARNING:") {
				t.Errorf("warmfit %s: no WARNING on stderr", cmd)
			}
		}
	}
	for _, f := range []string{"device.json", "predicted.csv", "sweep.csv", "data.csv", "fitted.json"} {
		if _, err := os.Stat(f); err != nil {
			t.Errorf("the tour did not write %s: %v", f, err)
		}
	}
	if names, _ := filepath.Glob("*"); len(names) == 0 {
		t.Errorf("the tour wrote nothing")
	}
}

// TestReadmeNumbersAgreeWithCode: every limit the README and the help
// texts quote comes from the constant the code uses.
func TestReadmeNumbersAgreeWithCode(t *testing.T) {
	readme := strings.Join(strings.Fields(readmeText(t)), " ")
	for _, want := range []string{
		fmt.Sprintf("dense to %d qubits, thermal typicality to %d", denseExactQubits, validate.MaxTypicalityQubits),
		fmt.Sprintf("exact snapshots by default up to %d qubits, possible to %d", denseExactQubits, cluster.MaxDenseQubits),
		"| `warmfit demo` | 6x6 array, fit up to order 6 | " + demoCPUTime + " |",
	} {
		if !strings.Contains(readme, want) {
			t.Errorf("README.md does not say %q (the code's numbers)", want)
		}
	}
	// The trust tolerance the README quotes is the commands' default --tol.
	fs := pflag.NewFlagSet("predict", pflag.ContinueOnError)
	commands["predict"].Flags(fs)
	tol, _ := strconv.ParseFloat(fs.Lookup("tol").DefValue, 64)
	m := regexp.MustCompile(`below the tolerance \(default ([0-9.e-]+)\)`).FindStringSubmatch(readme)
	if m == nil {
		t.Errorf("README.md no longer states the default tolerance")
	} else if v, _ := strconv.ParseFloat(m[1], 64); v != tol {
		t.Errorf("README.md says the default tolerance is %s; predict --tol defaults to %v", m[1], tol)
	}
	// The crosscheck row quotes its --dense-qubits default and size limit.
	cfs := pflag.NewFlagSet("crosscheck", pflag.ContinueOnError)
	commands["crosscheck"].Flags(cfs)
	if want := fmt.Sprintf("dense to %s qubits, typicality to %d", cfs.Lookup("dense-qubits").DefValue, typicalityQubits); !strings.Contains(readme, want) {
		t.Errorf("README.md does not say %q (crosscheck's defaults)", want)
	}
	// Any other "N qubits" in the README must be one of the code's limits.
	limits := map[string]bool{}
	for _, n := range []int{denseExactQubits, cluster.MaxDenseQubits, typicalityQubits} {
		limits[fmt.Sprint(n)] = true
	}
	for _, m := range regexp.MustCompile(`(?:to|up to|at most) (\d+) (?:qubits|sites)`).FindAllStringSubmatch(readme, -1) {
		if !limits[m[1]] {
			t.Errorf("README.md quotes %q, which is none of the code's limits", m[0])
		}
	}
	for _, name := range []string{"predict", "sample"} {
		help := commands[name].Long
		for _, m := range regexp.MustCompile(`(\d+) qubits`).FindAllStringSubmatch(help, -1) {
			if !limits[m[1]] {
				t.Errorf("warmfit help %s quotes %q, which is none of the code's limits", name, m[0])
			}
		}
	}
}

// TestNewtonIterationsOneWording: stderr and the fit report (which the
// demo's report.md quotes through the same function) count Newton
// iterations the same way.
func TestNewtonIterationsOneWording(t *testing.T) {
	dir := t.TempDir()
	m := writeXXZChain8(t, dir)
	data := filepath.Join(dir, "data.csv")
	fitted := filepath.Join(dir, "fitted.json")
	if code, _, errs := runCmd("sample", "--model", m, "--shots", "4000", "--generator", "binomial", "--order", "6", "-o", data); code != exitOK {
		t.Fatalf("sample: exit %d: %s", code, errs)
	}
	code, _, errs := runCmd("fit", "--model", m, "--data", data, "--max-order", "6", "-o", fitted)
	if code != exitOK {
		t.Fatalf("fit: exit %d: %s", code, errs)
	}
	b, err := os.ReadFile(fitted)
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Fit struct {
			Iterations    int `json:"iterations"`
			AllIterations int `json:"iterations_all_orders"`
			Order         int `json:"order"`
		} `json:"fit"`
	}
	if err := json.Unmarshal(b, &doc); err != nil {
		t.Fatal(err)
	}
	r := doc.Fit
	want := "after " + newtonIterations(r.AllIterations, r.Iterations, r.Order) + ","
	if !strings.Contains(errs, want) {
		t.Errorf("stderr does not say %q (the report's counts):\n%s", want, errs)
	}
}

// TestReadmeCommandTableListsEveryCommand: the README's command table has
// a row for every registered command, and no row for one that is gone.
func TestReadmeCommandTableListsEveryCommand(t *testing.T) {
	// Only the table whose header row starts with "| command": other
	// tables (reach, calibration) have lowercase first columns too.
	text := readmeText(t)
	checkMarkdownTables(t, "README.md", text)
	start := regexp.MustCompile(`(?m)^\| command +\|`).FindStringIndex(text)
	if start == nil {
		t.Fatal("README.md has no command table (a header row starting with \"| command\")")
	}
	table := text[start[0]:]
	if end := strings.Index(table, "\n\n"); end >= 0 {
		table = table[:end]
	}
	rows := map[string]bool{}
	for _, m := range regexp.MustCompile(`(?m)^\| ([a-z]+) +\|`).FindAllStringSubmatch(table, -1) {
		rows[m[1]] = true
	}
	for name := range commands {
		if !rows[name] {
			t.Errorf("README.md's command table has no row for %q", name)
		}
	}
	for name := range rows {
		if _, ok := commands[name]; !ok && name != "command" {
			t.Errorf("README.md's command table lists %q, which is not a command", name)
		}
	}
}
