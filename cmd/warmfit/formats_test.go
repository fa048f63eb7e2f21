package main

import (
	"bufio"
	"encoding/json"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"
	"testing"

	"warmfit/fit"
)

// formatsNames is every `backticked` word of formats.md.
func formatsNames() map[string]bool {
	names := map[string]bool{}
	// Fence lines (three backticks) would pair up with inline ones.
	doc := regexp.MustCompile("(?m)^```.*$").ReplaceAllString(formatsDoc, "")
	for _, m := range regexp.MustCompile("`([^`\n]+)`").FindAllStringSubmatch(doc, -1) {
		names[m[1]] = true
		// A backticked header such as `a,b,c` names each column too.
		for _, f := range strings.Split(m[1], ",") {
			names[strings.TrimSpace(f)] = true
		}
	}
	return names
}

// jsonTagNames collects the JSON member names of a struct type and of
// the struct types it holds.
func jsonTagNames(t reflect.Type, into map[string]bool) {
	for t.Kind() == reflect.Pointer || t.Kind() == reflect.Slice || t.Kind() == reflect.Array {
		t = t.Elem()
	}
	if t.Kind() != reflect.Struct {
		return
	}
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		name, _, _ := strings.Cut(f.Tag.Get("json"), ",")
		if name != "" && name != "-" {
			into[name] = true
		}
		jsonTagNames(f.Type, into)
	}
}

// termKeyPattern matches a term key ("ZZ 0 1"), which some JSON maps
// use as member names (z_scores); those are data, not format.
var termKeyPattern = regexp.MustCompile(`^[XYZ]+( [0-9]+)+$`)

// jsonKeys collects every object key of a JSON document.
func jsonKeys(v any, into map[string]bool) {
	switch x := v.(type) {
	case map[string]any:
		for k, e := range x {
			if !termKeyPattern.MatchString(k) {
				into[k] = true
			}
			jsonKeys(e, into)
		}
	case []any:
		for _, e := range x {
			jsonKeys(e, into)
		}
	}
}

// csvHeader returns the columns of the first line of a CSV file that is
// not a comment.
func csvHeader(t *testing.T, path string) []string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		if l := strings.TrimSpace(sc.Text()); l != "" && l[0] != '#' {
			return strings.Split(l, ",")
		}
	}
	t.Fatalf("%s: no header", path)
	return nil
}

// TestFormatsDocumentNamesEveryOutputField runs every command that writes
// a file on a small lattice and checks that each CSV column and JSON
// member it writes, and each JSON member its output types can hold, is
// named in formats.md: the contract cannot drift from the code silently.
func TestFormatsDocumentNamesEveryOutputField(t *testing.T) {
	dir := t.TempDir()
	p := func(name string) string { return filepath.Join(dir, name) }
	runs := [][]string{
		{"model", "--lattice", "chain:6", "--preset", "xxz", "--set", "Jxy=0.3,Jz=0.2,hz=0.3,hx=0.2", "--beta", "0.5", "--units", "kHz", "-o", p("m.json")},
		{"model", "--lattice", "chain:6", "--preset", "xxz", "--tie", "--beta", "0.5", "-o", p("tied.json")},
		{"lattice", "--lattice", "chain:6", "--format", "json", "-o", p("lattice.json")},
		{"lattice", "--lattice", "chain:6", "--clusters", "3", "-o", p("clusters.csv")},
		{"predict", "--model", p("m.json"), "--order", "4", "-o", p("predict.csv")},
		{"predict", "--model", p("m.json"), "--method", "exact", "-o", p("exact.csv")},
		{"sweep", "--model", p("m.json"), "--beta-grid", "from=0.1,to=0.5,points=3", "--order", "4", "-o", p("sweep.csv")},
		{"sample", "--model", p("m.json"), "--shots", "2000", "-o", p("shots.csv")},
		{"sample", "--model", p("m.json"), "--shots", "2000", "--generator", "binomial", "--order", "4", "-o", p("binomial.csv")},
		{"fit", "--model", p("m.json"), "--data", p("shots.csv"), "--truth", p("m.json"), "--order", "4", "-o", p("fitted.json")},
		{"fit", "--model", p("tied.json"), "--data", p("shots.csv"), "--order", "4", "-o", p("fitted-tied.json")},
		{"fit", "--model", p("m.json"), "--data", p("shots.csv"), "--order", "4", "--format", "csv", "-o", p("fitted.csv")},
		{"fit", "--model", p("m.json"), "--data", p("shots.csv"), "--order", "4", "--truth", p("m.json"), "--format", "csv", "-o", p("fitted-truth.csv")},
		{"plan", "--model", p("fitted.json"), "--target", "0.1", "--format", "csv", "-o", p("plan.csv")},
		{"plan", "--model", p("fitted.json"), "--target", "0.1", "--format", "json", "-o", p("plan.json")},
		{"plan", "--model", p("m.json"), "--method", "stationary", "--bases", "covering:3", "--target", "0.1", "--scale-target", "0.05", "--format", "json", "-o", p("plan-stationary.json")},
		{"plan", "--model", p("m.json"), "--method", "stationary", "--bases", "covering:3", "--target", "0.1", "--format", "csv", "-o", p("plan-stationary.csv")},
	}
	for _, args := range runs {
		if code, _, stderr := runCmd(args...); code != exitOK {
			t.Fatalf("warmfit %s: exit %d\n%s", strings.Join(args, " "), code, stderr)
		}
	}
	written := map[string]map[string]bool{} // output -> names
	add := func(what, name string) {
		if written[what] == nil {
			written[what] = map[string]bool{}
		}
		written[what][name] = true
	}
	csvs := []string{"clusters.csv", "predict.csv", "exact.csv", "sweep.csv", "shots.csv", "binomial.csv", "fitted.csv", "fitted-truth.csv", "plan.csv", "plan-stationary.csv"}
	for _, f := range csvs {
		for _, c := range csvHeader(t, p(f)) {
			add(f, c)
		}
	}
	jsons := []string{"m.json", "lattice.json", "fitted.json", "fitted-tied.json", "plan.json", "plan-stationary.json"}
	for _, f := range csvs {
		if _, err := os.Stat(p(f + ".meta.json")); err == nil {
			jsons = append(jsons, f+".meta.json")
		}
	}
	for _, f := range jsons {
		raw, err := os.ReadFile(p(f))
		if err != nil {
			t.Fatal(err)
		}
		var v any
		if err := json.Unmarshal(raw, &v); err != nil {
			t.Fatalf("%s: %v", f, err)
		}
		keys := map[string]bool{}
		jsonKeys(v, keys)
		for k := range keys {
			add(f, k)
		}
	}
	// Members left out of these runs (omitempty, other data) come from the types.
	for what, typ := range map[string]reflect.Type{
		"fit report":           reflect.TypeOf(fit.Report{}),
		"combination":          reflect.TypeOf(combinationReport{}),
		"stationary report":    reflect.TypeOf(stationaryReport{}),
		"plan json":            reflect.TypeOf(planJSON{}),
		"plan stationary json": reflect.TypeOf(planStationaryJSON{}),
		"plan comparison":      reflect.TypeOf(planComparison{}),
		"bulk json":            reflect.TypeOf(bulkJSON{}),
	} {
		names := map[string]bool{}
		jsonTagNames(typ, names)
		for n := range names {
			add(what, n)
		}
	}
	for _, c := range bulkCurvesHeader {
		add("bulk --curves", c)
	}
	for _, c := range strings.Split(crosscheckCSVHeader, ",") {
		add("crosscheck csv", c)
	}
	// Sidecar members set in code, also those these runs do not reach.
	sources, _ := filepath.Glob("*.go")
	setCall := regexp.MustCompile(`\bmeta\.set\("([a-z_]+)"`)
	for _, src := range sources {
		if strings.HasSuffix(src, "_test.go") {
			continue
		}
		b, err := os.ReadFile(src)
		if err != nil {
			t.Fatal(err)
		}
		for _, m := range setCall.FindAllStringSubmatch(string(b), -1) {
			add(src+" sidecar", m[1])
		}
	}

	doc := formatsNames()
	var missing []string
	for what, names := range written {
		for n := range names {
			if !doc[n] {
				missing = append(missing, what+": "+n)
			}
		}
	}
	sort.Strings(missing)
	if len(missing) > 0 {
		t.Errorf("formats.md does not name these output fields (add them, in backticks):\n  %s", strings.Join(missing, "\n  "))
	}
}

func TestHelpFormats(t *testing.T) {
	code, out, _ := runCmd("help", "formats")
	if code != exitOK || out != formatsDoc {
		t.Fatalf("help formats: exit %d, %d bytes (want the whole document, %d bytes)", code, len(out), len(formatsDoc))
	}
	sections := formatsSections()
	var keys []string
	for _, s := range sections {
		keys = append(keys, s.Key)
	}
	for _, want := range []string{"conventions", "lattice", "graph", "model", "table", "snapshots", "fit", "sidecar", "commands", "bulk"} {
		if !slices.Contains(keys, want) {
			t.Errorf("formats.md has no section %q (has %v)", want, keys)
		}
	}
	code, out, _ = runCmd("help", "formats", "Table")
	if code != exitOK || !strings.HasPrefix(out, "## table:") || strings.Contains(out, "## snapshots") {
		t.Errorf("help formats table: exit %d, output starts %.40q", code, out)
	}
	code, _, stderr := runCmd("help", "formats", "nosuch")
	if code != exitUsage || !strings.Contains(stderr, "snapshots") {
		t.Errorf("help formats nosuch: exit %d, stderr %q (want 2 and the list of sections)", code, stderr)
	}
}

// TestFormatsDocumentHasEveryCommand: the commands section of formats.md
// says what each registered command writes.
func TestFormatsDocumentHasEveryCommand(t *testing.T) {
	var section string
	for _, s := range formatsSections() {
		if s.Key == "commands" {
			section = s.Text
		}
	}
	for name := range commands {
		if !strings.Contains(section, "\n- `"+name+"`") {
			t.Errorf("formats.md, section commands, has no entry \"- `%s`\"", name)
		}
	}
}

// formats.md promises numbers in output files in the shortest form that
// reads back to the same float64 (review finding 10): the numeric columns
// of predict (step, trunc_error, resummed), sweep and plan --format csv
// are each their own shortest round-trip form, and some need more than 6
// digits (the precision these columns used to be cut to).
func TestNumbersWrittenInShortestRoundTripForm(t *testing.T) {
	dir := t.TempDir()
	modelPath := writeTestModel(t, dir)
	runs := map[string][]string{
		"predict": {"predict", "--model", modelPath, "--order", "4"},
		"sweep":   {"sweep", "--model", modelPath, "--order", "4", "--beta-grid", "from=0.1,to=0.5,points=5"},
		"plan":    {"plan", "--model", modelPath, "--order", "4", "--target", "0.05", "--format", "csv"},
	}
	for name, args := range runs {
		code, out, errs := runCmd(args...)
		if code != exitOK {
			t.Fatalf("%s: exit %d\n%s", name, code, errs)
		}
		long := 0
		for i, line := range strings.Split(strings.TrimSpace(out), "\n") {
			if i == 0 || strings.HasPrefix(line, "#") {
				continue
			}
			for _, f := range strings.Split(line, ",") {
				v, err := strconv.ParseFloat(f, 64)
				if err != nil || strings.ContainsAny(f, " ") || !strings.ContainsAny(f, ".e") {
					continue // not a real number (term, sites, count, bool, "exact")
				}
				if back := strconv.FormatFloat(v, 'g', -1, 64); back != f {
					t.Errorf("%s: %q is not the shortest round-trip form %q", name, f, back)
				}
				if len(strings.TrimLeft(strings.SplitN(strings.TrimLeft(f, "-"), "e", 2)[0], "0.")) > 7 {
					long++
				}
			}
		}
		if long == 0 {
			t.Errorf("%s: no value needs more than 6 digits; the check proves nothing:\n%s", name, out)
		}
	}
}
