package main

import (
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"testing"
)

// formats.md promises every number of an output file in the shortest form
// that reads back to the same float64. Every CSV goes through
// writeCSVResult, so TestMain watches all of them (csvWrittenHook): any
// test that makes a command write a CSV also checks its numbers, and
// TestEveryCSVWriterWritesExactNumbers makes sure each writer is reached.

// csvWatch records what the hook saw.
var csvWatch struct {
	sync.Mutex
	callers    map[string]int             // source file calling writeCSVResult -> CSVs written
	real       map[string]bool            // "caller column" -> held a real number
	long       map[string]bool            // "caller column" -> some value had >= 15 significant digits
	violations []string                   // fields not in shortest round-trip form
	bodies     map[string][]string        // caller -> bodies, for the messages
	sidecar    map[string]map[string]bool // command -> its own sidecar members
}

func TestMain(m *testing.M) {
	csvWatch.callers = map[string]int{}
	csvWatch.long = map[string]bool{}
	csvWatch.real = map[string]bool{}
	csvWatch.bodies = map[string][]string{}
	csvWatch.sidecar = map[string]map[string]bool{}
	csvWrittenHook = watchCSV
	code := m.Run()
	if len(csvWatch.violations) > 0 {
		fmt.Fprintf(os.Stderr, "FAIL: CSV numbers not in the shortest round-trip form formats.md promises:\n  %s\n", strings.Join(csvWatch.violations, "\n  "))
		code = 1
	}
	os.Exit(code)
}

// watchCSV checks each real number of body (a field with a '.' or an
// exponent that parses as a float) against its shortest round-trip form.
// The invented curves of bulk --demo keep 7 digits by design (formats.md).
func watchCSV(caller string, meta *csvMeta, body []byte) {
	csvWatch.Lock()
	defer csvWatch.Unlock()
	csvWatch.callers[caller]++
	if csvWatch.sidecar[meta.Command] == nil {
		csvWatch.sidecar[meta.Command] = map[string]bool{}
	}
	for k := range meta.Fields {
		csvWatch.sidecar[meta.Command][k] = true
	}
	if len(csvWatch.bodies[caller]) < 3 {
		csvWatch.bodies[caller] = append(csvWatch.bodies[caller], string(body))
	}
	if _, invented := meta.Fields["invented"]; invented {
		return
	}
	var header []string
	for i, line := range strings.Split(strings.TrimSpace(string(body)), "\n") {
		if i == 0 {
			header = strings.Split(line, ",")
			continue
		}
		for j, f := range strings.Split(line, ",") {
			v, err := strconv.ParseFloat(f, 64)
			if err != nil || !strings.ContainsAny(f, ".e") {
				continue // a term, sites, a count, a bool, "exact"
			}
			if back := strconv.FormatFloat(v, 'g', -1, 64); back != f {
				csvWatch.violations = append(csvWatch.violations, fmt.Sprintf("%s (warmfit %s): %q, shortest form %q", caller, meta.Command, f, back))
			}
			col := caller + " " + header[min(j, len(header)-1)]
			csvWatch.real[col] = true
			if significantDigits(f) >= 15 {
				csvWatch.long[col] = true
			}
		}
	}
}

// significantDigits counts the mantissa digits of a decimal number
// without leading zeros.
func significantDigits(f string) int {
	mant, _, _ := strings.Cut(strings.TrimLeft(f, "+-"), "e")
	mant = strings.TrimLeft(strings.ReplaceAll(mant, ".", ""), "0")
	return len(mant)
}

// TestEveryCSVWriterWritesExactNumbers runs every command that writes a
// CSV (review findings 10 and a later fresh-clone review: crosscheck wrote
// 10 digits, plan 6, and the per-command checks missed both). Each source
// file that calls writeCSVResult must be reached here or, for the slow
// ones, by its own test under the same hook; each of these runs must show
// in every column of real numbers a value of 15 or more significant
// digits, which a formatter cut to fewer digits cannot write (random
// doubles need 15-17: IEEE 754, from memory); short lists the columns
// whose numbers are short decimals by design.
func TestEveryCSVWriterWritesExactNumbers(t *testing.T) {
	dir := t.TempDir()
	p := func(name string) string { return filepath.Join(dir, name) }
	m := p("m.json")
	runs := []struct {
		args   []string
		caller string
		short  []string // columns of short decimals (grid points, shot fractions)
	}{
		{[]string{"model", "--lattice", "chain:6", "--preset", "xxz", "--set", "Jxy=0.3,Jz=0.2,hz=0.3,hx=0.2", "--disorder", "0.1", "--seed", "2", "--beta", "0.5", "-o", m}, "", nil},
		{[]string{"lattice", "--lattice", "chain:6", "--clusters", "3", "-o", p("clusters.csv")}, "lattice.go", nil},
		{[]string{"predict", "--model", m, "--order", "4", "-o", p("predict.csv")}, "predict.go", nil},
		{[]string{"predict", "--model", m, "--method", "exact", "-o", p("exact.csv")}, "predict.go", nil},
		{[]string{"model", "--lattice", "chain:12", "--preset", "xxz", "--set", "Jxy=0.3,Jz=0.2,hz=0.3", "--beta", "0.5", "-o", p("chain12.json")}, "", nil},
		{[]string{"predict", "--model", p("chain12.json"), "--method", "exact", "--vectors", "4", "-o", p("typical.csv")}, "predict.go", nil},
		{[]string{"sweep", "--model", m, "--order", "4", "--beta-grid", "from=0.1,to=0.5,points=5", "-o", p("sweep.csv")}, "sweep.go", []string{"beta"}},
		{[]string{"sample", "--model", m, "--shots", "2000", "-o", p("shots.csv")}, "sample.go", nil},
		{[]string{"sample", "--model", m, "--shots", "500", "--generator", "binomial", "--order", "4", "-o", p("binomial.csv")}, "sample.go", []string{"value"}},
		{[]string{"fit", "--model", m, "--data", p("shots.csv"), "--order", "4", "--format", "csv", "-o", p("fitted.csv")}, "fit.go", nil},
		{[]string{"plan", "--model", m, "--order", "4", "--target", "0.05", "--format", "csv", "-o", p("plan.csv")}, "plan.go", nil},
		{[]string{"crosscheck", "--model", m, "--shape", "4", "--order", "4", "-o", p("cc.csv")}, "crosscheck.go", nil},
		{[]string{"model", "--lattice", "chain:6", "--preset", "tfim", "--set", "J=1,hx=0.8,hz=0.3", "--disorder", "0.3", "--seed", "5", "--beta", "0.7", "-o", p("chain.json")}, "", nil},
		{[]string{"sample", "--model", p("chain.json"), "--shots", "20000", "--bases", "covering:3", "--seed", "3", "-o", p("chain-shots.csv")}, "sample.go", nil},
		{[]string{"fit", "--model", p("chain.json"), "--data", p("chain-shots.csv"), "--method", "stationary", "--format", "csv", "-o", p("stationary.csv")}, "fit_stationary.go", nil},
		{[]string{"plan", "--model", p("chain.json"), "--method", "stationary", "--bases", "covering:3", "--target", "0.05", "--format", "csv", "-o", p("plan-stationary.csv")}, "plan_stationary.go", nil},
	}
	for _, r := range runs {
		csvWatch.Lock()
		before := csvWatch.callers[r.caller]
		for col := range csvWatch.real {
			if strings.HasPrefix(col, r.caller+" ") {
				delete(csvWatch.real, col)
				delete(csvWatch.long, col)
			}
		}
		csvWatch.Unlock()
		if code, _, stderr := runCmd(r.args...); code != exitOK {
			t.Fatalf("warmfit %s: exit %d\n%s", strings.Join(r.args, " "), code, stderr)
		}
		if r.caller == "" {
			continue
		}
		csvWatch.Lock()
		if csvWatch.callers[r.caller] == before {
			t.Errorf("warmfit %s: no CSV through writeCSVResult from %s", strings.Join(r.args, " "), r.caller)
		}
		for col := range csvWatch.real {
			name, ok := strings.CutPrefix(col, r.caller+" ")
			if ok && !csvWatch.long[col] && !slices.Contains(r.short, name) {
				t.Errorf("warmfit %s: column %s has no value with 15 or more significant digits: numbers cut short?", strings.Join(r.args, " "), name)
			}
		}
		csvWatch.Unlock()
	}
	// Every writer: the callers of writeCSVResult in the sources. The
	// slow ones are reached by their own tests (under the same hook).
	ownTest := map[string]string{
		"bulk.go":          "TestBulkFitsFileAndRefusesColdData",
		"bulk_demo.go":     "TestBulkDemoChiHasImpurityTail",
		"demo_pipeline.go": "TestDemoQuick",
	}
	covered := map[string]bool{}
	for _, r := range runs {
		covered[r.caller] = true
	}
	sources, _ := filepath.Glob("*.go")
	call := regexp.MustCompile(`\bwriteCSVResult\(`)
	var missing []string
	for _, src := range sources {
		if strings.HasSuffix(src, "_test.go") || src == "csvout.go" {
			continue
		}
		b, err := os.ReadFile(src)
		if err != nil {
			t.Fatal(err)
		}
		if call.Match(b) && !covered[src] && ownTest[src] == "" {
			missing = append(missing, src)
		}
	}
	sort.Strings(missing)
	if len(missing) > 0 {
		t.Errorf("these files write CSVs that no run here checks (add a run): %v", missing)
	}
	checkSidecarMembersDocumented(t)
}

// checkSidecarMembersDocumented: each member a command put in a sidecar
// (csvMeta fields, however they were set) is listed in that command's
// bullet of formats.md's sidecar section ("- `predict`: `model`, ...").
func checkSidecarMembersDocumented(t *testing.T) {
	t.Helper()
	var section string
	for _, s := range formatsSections() {
		if s.Key == "sidecar" {
			section = s.Text
		}
	}
	documented := map[string]map[string]bool{}
	head := regexp.MustCompile("^`([a-z]+)[^`]*`[^:\n]*:")
	name := regexp.MustCompile("`([a-z_0-9]+)`")
	for _, b := range strings.Split(section, "\n- ")[1:] {
		m := head.FindStringSubmatch(b)
		if m == nil {
			continue
		}
		cmd := m[1]
		if documented[cmd] == nil {
			documented[cmd] = map[string]bool{}
		}
		for _, n := range name.FindAllStringSubmatch(b[len(m[0]):], -1) {
			documented[cmd][n[1]] = true
		}
	}
	csvWatch.Lock()
	defer csvWatch.Unlock()
	for command, keys := range csvWatch.sidecar {
		cmd, _, _ := strings.Cut(command, " ") // "fit --method stationary"
		for k := range keys {
			if !documented[cmd][k] {
				t.Errorf("formats.md, section sidecar: the bullet of %q does not name its member `%s`", cmd, k)
			}
		}
	}
}
