package main

import (
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// readCSVFile parses a whole file with encoding/csv, no options: what a
// plain CSV reader sees (pandas.read_csv behaves the same on these files).
func readCSVFile(t *testing.T, path string) [][]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatalf("%s does not parse as CSV: %v", path, err)
	}
	if len(recs) == 0 {
		t.Fatalf("%s is empty", path)
	}
	return recs
}

// readSidecar decodes a metadata sidecar into a map.
func readSidecar(t *testing.T, path string) map[string]any {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("sidecar: %v", err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatalf("%s is not valid JSON: %v\n%s", path, err, b)
	}
	return m
}

// Every CSV a command writes has its header as the first record, and the
// facts the '#' lines used to carry in a JSON sidecar beside it.
func TestCSVOutputsHeaderFirstWithSidecar(t *testing.T) {
	dir := t.TempDir()
	truth := filepath.Join(dir, "truth.json")
	writeModelFile(t, fitTruth(t), truth)
	p := func(name string) string { return filepath.Join(dir, name) }

	steps := []struct {
		name   string
		args   []string
		out    string
		header string   // the first record, joined by commas
		fields []string // sidecar keys beyond the fixed ones
	}{
		{"predict", []string{"predict", "--model", truth, "--order", "4", "-o", p("e.csv")}, "e.csv",
			"pauli,sites,value,stderr,step,trunc_error,resummed,trusted", []string{"order", "beta", "method", "converged", "clusters", "sufficient_beta_bound"}},
		{"predict exact", []string{"predict", "--model", truth, "--method", "exact", "-o", p("exact.csv")}, "exact.csv",
			"pauli,sites,value,stderr", []string{"beta", "method", "exact_method", "qubits"}},
		{"sweep", []string{"sweep", "--model", truth, "--beta-grid", "from=0.1,to=0.5,points=3", "--order", "4", "-o", p("sweep.csv")}, "sweep.csv",
			"beta,T,log_z,energy,entropy,heat_capacity,energy_error,heat_capacity_error,trusted", []string{"order", "sites", "entropy_unit", "converged_everywhere"}},
		{"sample exact", []string{"sample", "--model", truth, "--shots", "200", "-o", p("shots.csv")}, "shots.csv",
			"basis,outcome,count", []string{"generator", "beta", "bases", "shots_per_basis", "seed"}},
		{"sample binomial", []string{"sample", "--model", truth, "--shots", "200", "--generator", "binomial", "--order", "4", "-o", p("binom.csv")}, "binom.csv",
			"pauli,sites,value,stderr,shots", []string{"generator", "order", "correlations"}},
		{"fit csv", []string{"fit", "--model", fitTemplate, "--data", p("exact.csv"), "--order", "4", "--format", "csv", "--truth", truth, "-o", p("fit.csv")}, "fit.csv",
			"pauli,sites,coeff,stderr,significant,true,z", []string{"converged", "order", "beta", "coefficients", "fit"}},
		{"plan csv", []string{"plan", "--model", truth, "--target", "0.05", "--order", "4", "--format", "csv", "-o", p("plan.csv")}, "plan.csv",
			"pauli,sites,coverage,stderr", []string{"target", "norm", "shots_per_basis", "total_shots", "bases"}},
		{"lattice clusters", []string{"lattice", "--lattice", "square:4x4", "--clusters", "4", "-o", p("clusters.csv")}, "clusters.csv",
			"size,count", []string{"lattice", "sites", "max_size"}},
	}
	for _, st := range steps {
		code, _, stderr := runCmd(st.args...)
		if code != exitOK {
			t.Fatalf("%s: exit %d\n%s", st.name, code, stderr)
		}
		recs := readCSVFile(t, p(st.out))
		if got := strings.Join(recs[0], ","); got != st.header {
			t.Errorf("%s: first record %q, want the header %q", st.name, got, st.header)
		}
		meta := readSidecar(t, p(st.out+".meta.json"))
		for _, key := range append([]string{"command", "file", "columns", "rows", "warnings", "comments"}, st.fields...) {
			if _, ok := meta[key]; !ok {
				t.Errorf("%s: sidecar lacks %q: %v", st.name, key, meta)
			}
		}
		if rows, _ := meta["rows"].(float64); int(rows) != len(recs)-1 {
			t.Errorf("%s: sidecar says %v rows, the file has %d", st.name, meta["rows"], len(recs)-1)
		}
		if meta["file"] != st.out {
			t.Errorf("%s: sidecar file %v, want %s", st.name, meta["file"], st.out)
		}
	}

	// The fit CSV's sidecar carries the whole report.
	meta := readSidecar(t, p("fit.csv.meta.json"))
	rep, _ := meta["fit"].(map[string]any)
	if rep == nil || rep["order"] != 4.0 || rep["coefficients"] != "lambda" {
		t.Errorf("fit sidecar report: %v", meta["fit"])
	}
}

// --csv-comments restores the '#' lines (and writes no sidecar); --meta
// writes the sidecar also for a CSV on stdout.
func TestCSVCommentsAndMetaFlag(t *testing.T) {
	dir := t.TempDir()
	truth := filepath.Join(dir, "truth.json")
	writeModelFile(t, fitTruth(t), truth)
	out := filepath.Join(dir, "c.csv")
	if code, _, stderr := runCmd("predict", "--model", truth, "--order", "4", "--csv-comments", "-o", out); code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	b, _ := os.ReadFile(out)
	lines := strings.Split(string(b), "\n")
	if !strings.HasPrefix(lines[0], "# warmfit predict: linked-cluster expansion, order 4") {
		t.Errorf("--csv-comments: first line %q", lines[0])
	}
	if _, err := os.Stat(out + ".meta.json"); !os.IsNotExist(err) {
		t.Errorf("--csv-comments wrote a sidecar (%v)", err)
	}

	side := filepath.Join(dir, "m.json")
	code, stdout, stderr := runCmd("predict", "--model", truth, "--order", "4", "--meta", side)
	if code != exitOK || !strings.HasPrefix(stdout, "pauli,sites,value,stderr") {
		t.Fatalf("stdout: exit %d, %.60q, %s", code, stdout, stderr)
	}
	if meta := readSidecar(t, side); meta["order"] != 4.0 || meta["file"] != nil {
		t.Errorf("--meta sidecar for stdout: %v", meta)
	}
}

// The CSV flags are refused where no CSV is written, --meta may not name
// the output itself, and --csv-comments removes the sidecar an earlier
// run left beside the same file (it would describe another table).
func TestCSVFlagsMisuseAndStaleSidecar(t *testing.T) {
	dir := t.TempDir()
	truth := filepath.Join(dir, "truth.json")
	writeModelFile(t, fitTruth(t), truth)
	out := filepath.Join(dir, "e.csv")
	for _, args := range [][]string{
		{"plan", "--model", truth, "--target", "0.1", "--meta", filepath.Join(dir, "x.json")},
		{"plan", "--model", truth, "--target", "0.1", "--format", "json", "--csv-comments"},
		{"lattice", "--lattice", "chain:4", "--csv-comments"},
		{"predict", "--model", truth, "--order", "4", "-o", out, "--meta", out},
	} {
		if code, _, stderr := runCmd(args...); code != exitUsage {
			t.Errorf("%v: exit %d, want 2\n%s", args, code, stderr)
		}
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Fatalf("a refused run wrote %s", out)
	}
	if code, _, stderr := runCmd("predict", "--model", truth, "--order", "4", "-o", out); code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if _, err := os.Stat(out + ".meta.json"); err != nil {
		t.Fatalf("no sidecar: %v", err)
	}
	if code, _, stderr := runCmd("predict", "--model", truth, "--order", "4", "-o", out, "--csv-comments"); code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if _, err := os.Stat(out + ".meta.json"); !os.IsNotExist(err) {
		t.Errorf("the stale sidecar of the earlier run is still there (%v)", err)
	}
}
