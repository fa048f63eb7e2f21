package main

import (
	"bytes"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

// The catalogue of bad inputs (issue 8): every entry goes through the
// command runner and must be refused with its exit code (2 for a mistake
// in the call, 1 for bad file content), with a message that names the
// file and line (or field) or the flag at fault, and without touching
// anything: every input and every pre-existing output in the directory is
// byte-identical afterwards, and no file appears. (Common practice for a
// command-line tool: a refusal changes nothing and says where.)

// catalogueGoodModel is a valid model: chain:4 TFIM at beta 0.3.
const catalogueGoodModel = `{
  "lattice": {"kind": "chain", "size": [4], "boundary": "open"},
  "beta": 0.3,
  "terms": [
    {"pauli": "ZZ", "sites": [0, 1], "coeff": 1},
    {"pauli": "ZZ", "sites": [1, 2], "coeff": 1},
    {"pauli": "ZZ", "sites": [2, 3], "coeff": 1},
    {"pauli": "X", "sites": [0], "coeff": 1},
    {"pauli": "X", "sites": [1], "coeff": 1},
    {"pauli": "X", "sites": [2], "coeff": 1},
    {"pauli": "X", "sites": [3], "coeff": 1}
  ]
}
`

// catalogueTable is a measured table for catalogueGoodModel; the bad
// tables below change one line of it (line 3, the second data row).
const catalogueTable = "pauli,sites,value,stderr\n" +
	"ZZ,0 1,-0.27,0.01\nZZ,1 2,-0.27,0.01\nZZ,2 3,-0.27,0.01\n" +
	"X,0,-0.29,0.01\nX,1,-0.29,0.01\nX,2,-0.29,0.01\nX,3,-0.29,0.01\n"

func catalogueTableWith(line3 string) string {
	lines := strings.Split(catalogueTable, "\n")
	lines[2] = line3
	return strings.Join(lines, "\n")
}

// catalogueFiles are written into the test directory before the run.
var catalogueFiles = map[string]string{
	"m.json":          catalogueGoodModel,
	"e.csv":           catalogueTable,
	"old-output.csv":  "pre-existing output\n",
	"old-output.json": "{\"pre-existing\": true}\n",
	"chain14.json":    `{"lattice": "chain:14", "beta": 0.3, "terms": [{"pauli": "ZZ", "sites": [0, 1], "coeff": 1}]}` + "\n",
	"other.json":      strings.Replace(catalogueGoodModel, `"size": [4]`, `"size": [5]`, 1),

	"syntax.json":      strings.Replace(catalogueGoodModel, `"beta": 0.3,`, `"beta": 0.3`, 1),
	"site-range.json":  strings.Replace(catalogueGoodModel, `"sites": [3], "coeff": 1}`, `"sites": [7], "coeff": 1}`, 1),
	"letter.json":      strings.Replace(catalogueGoodModel, `{"pauli": "X", "sites": [1]`, `{"pauli": "Q", "sites": [1]`, 1),
	"duplicate.json":   strings.Replace(catalogueGoodModel, `"sites": [2, 3]`, `"sites": [0, 1]`, 1),
	"negbeta.json":     strings.Replace(catalogueGoodModel, `"beta": 0.3`, `"beta": -1`, 1),
	"noterms.json":     `{"lattice": "chain:4", "beta": 0.3, "terms": []}` + "\n",
	"badspec.json":     strings.Replace(catalogueGoodModel, `{"kind": "chain", "size": [4], "boundary": "open"}`, `"chain:0"`, 1),
	"nonlocal.json":    strings.Replace(catalogueGoodModel, `"sites": [2, 3]`, `"sites": [0, 3]`, 1),
	"coeff-text.json":  strings.Replace(catalogueGoodModel, `"sites": [1], "coeff": 1`, `"sites": [1], "coeff": "one"`, 1),
	"graph-self.json":  `{"kind": "graph", "sites": [[0, 0], [1, 0]], "bonds": [[0, 1], [1, 1]]}` + "\n",
	"graph-range.json": `{"kind": "graph", "sites": [[0, 0], [1, 0]], "bonds": [[0, 2]]}` + "\n",
	"graph-dup.json":   `{"kind": "graph", "sites": [[0, 0], [1, 0]], "bonds": [[0, 1], [1, 0]]}` + "\n",
	"graph-dim.json":   `{"kind": "graph", "sites": [[0, 0], [1, 0, 2]], "bonds": [[0, 1]]}` + "\n",

	"header.csv":      strings.Replace(catalogueTable, "pauli,sites,value,stderr", "term,where,value,stderr", 1),
	"value.csv":       catalogueTableWith("ZZ,1 2,minus,0.01"),
	"range.csv":       catalogueTableWith("ZZ,1 2,-1.7,0.01"),
	"blank-err.csv":   catalogueTableWith("ZZ,1 2,-0.27,"),
	"zero-err.csv":    catalogueTableWith("ZZ,1 2,-0.27,0"),
	"far-site.csv":    catalogueTableWith("ZZ,1 9,-0.27,0.01"),
	"comma.csv":       catalogueTableWith("ZZ,1,2,-0.27,0.01"),
	"dup-row.csv":     catalogueTableWith("ZZ,0 1,-0.27,0.01"),
	"nan.csv":         catalogueTableWith("ZZ,1 2,NaN,0.01"),
	"short-row.csv":   catalogueTableWith("ZZ,1 2"),
	"letter.csv":      catalogueTableWith("QQ,1 2,-0.27,0.01"),
	"shots-basis.csv": "basis,outcome,count\nXXXX,0000,3\nXQXX,0101,2\n",
	"shots-len.csv":   "basis,outcome,count\nXXXX,0000,3\nXXXX,010,2\n",
	"shots-count.csv": "basis,outcome,count\nXXXX,0000,3\nZZZZ,0101,-2\n",
	"shots-bit.csv":   "basis,outcome,count\nXXXX,0000,3\nZZZZ,0121,2\n",
}

type catalogueCase struct {
	name string
	args []string // "DIR/" is replaced by the test directory
	code int
	want []string // substrings of stderr (file and line/field, or flag)
}

var catalogue = []catalogueCase{
	// Model files: exit 1, file and line named.
	{"model syntax", []string{"predict", "--model", "DIR/syntax.json"}, exitFailure, []string{"syntax.json:", ":4"}},
	{"model site out of range", []string{"predict", "--model", "DIR/site-range.json"}, exitFailure, []string{"site-range.json:", "7"}},
	{"model letter", []string{"predict", "--model", "DIR/letter.json"}, exitFailure, []string{"letter.json:", "Q"}},
	{"model duplicate term", []string{"predict", "--model", "DIR/duplicate.json"}, exitFailure, []string{"duplicate.json:", "terms[2]"}},
	{"model negative beta", []string{"predict", "--model", "DIR/negbeta.json"}, exitFailure, []string{"negbeta.json:", "beta"}},
	{"model no terms", []string{"sweep", "--model", "DIR/noterms.json", "--beta-grid", "from=0.1,to=0.2,points=2"}, exitFailure, []string{"noterms.json", "terms"}},
	{"model bad spec", []string{"plan", "--model", "DIR/badspec.json", "--target", "0.1"}, exitFailure, []string{"badspec.json", "lattice"}},
	{"model non-local term", []string{"sample", "--model", "DIR/nonlocal.json", "--shots", "10"}, exitFailure, []string{"nonlocal.json", "terms[2]"}},
	{"model coefficient text", []string{"model", "--check", "DIR/coeff-text.json"}, exitFailure, []string{"coeff-text.json:", "coeff"}},
	{"model missing", []string{"predict", "--model", "DIR/missing.json"}, exitFailure, []string{"missing.json"}},
	{"model from /dev/zero", []string{"predict", "--model", "/dev/zero"}, exitFailure, []string{"/dev/zero", "MaxFileBytes"}},
	{"data from /dev/zero", []string{"fit", "--model", "DIR/m.json", "--data", "/dev/zero"}, exitFailure, []string{"/dev/zero:1"}},
	{"bulk curves from /dev/zero", []string{"bulk", "/dev/zero"}, exitFailure, []string{"/dev/zero", "MaxFileBytes"}},
	// Graph files: exit 1, file and field named.
	{"graph self bond", []string{"lattice", "--lattice", "DIR/graph-self.json"}, exitFailure, []string{"graph-self.json", "bonds[1]"}},
	{"graph site range", []string{"lattice", "--lattice", "DIR/graph-range.json"}, exitFailure, []string{"graph-range.json", "bonds[0]"}},
	{"graph double bond", []string{"lattice", "--lattice", "DIR/graph-dup.json"}, exitFailure, []string{"graph-dup.json", "bonds[1]"}},
	{"graph mixed dimension", []string{"lattice", "--lattice", "DIR/graph-dim.json"}, exitFailure, []string{"graph-dim.json", "sites[1]"}},
	{"graph as model lattice", []string{"model", "--lattice", "DIR/graph-self.json", "--preset", "tfim"}, exitFailure, []string{"graph-self.json", "bonds[1]"}},
	// Tables: exit 1, file and line named.
	{"table header", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/header.csv"}, exitFailure, []string{"header.csv:1"}},
	{"table value", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/value.csv"}, exitFailure, []string{"value.csv:3"}},
	{"table value beyond 1", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/range.csv"}, exitFailure, []string{"range.csv:3"}},
	{"table blank stderr", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/blank-err.csv"}, exitFailure, []string{"blank-err.csv:3"}},
	{"table zero stderr", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/zero-err.csv"}, exitFailure, []string{"zero-err.csv:3"}},
	{"table site beyond lattice", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/far-site.csv"}, exitFailure, []string{"far-site.csv:3", "4 sites"}},
	{"table sites with comma", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/comma.csv"}, exitFailure, []string{"comma.csv:3"}},
	{"table duplicate row", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/dup-row.csv"}, exitFailure, []string{"dup-row.csv:3"}},
	{"table NaN", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/nan.csv"}, exitFailure, []string{"nan.csv:3"}},
	{"table short row", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/short-row.csv"}, exitFailure, []string{"short-row.csv:3"}},
	{"table letter", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/letter.csv"}, exitFailure, []string{"letter.csv:3"}},
	// Snapshot files: exit 1, file and line named.
	{"snapshot basis", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/shots-basis.csv"}, exitFailure, []string{"shots-basis.csv:3"}},
	{"snapshot outcome length", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/shots-len.csv"}, exitFailure, []string{"shots-len.csv:3"}},
	{"snapshot count", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/shots-count.csv"}, exitFailure, []string{"shots-count.csv:3"}},
	{"snapshot bit", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/shots-bit.csv"}, exitFailure, []string{"shots-bit.csv:3"}},
	// Outputs: exit 2 before any work, the flag and the path named.
	{"-o is the model", []string{"predict", "--model", "DIR/m.json", "-o", "DIR/m.json"}, exitUsage, []string{"-o", "m.json", "also an input"}},
	{"-o is the model by another name", []string{"predict", "--model", "DIR/m.json", "-o", "DIR/./sub/../m.json"}, exitUsage, []string{"-o", "also an input"}},
	{"-o is the data", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/e.csv", "-o", "DIR/e.csv"}, exitUsage, []string{"-o", "e.csv", "also an input"}},
	{"-o is the truth", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/e.csv", "--truth", "DIR/old-output.json", "-o", "DIR/old-output.json"}, exitUsage, []string{"-o", "also an input"}},
	{"-o is the graph", []string{"lattice", "--lattice", "DIR/graph-self.json", "-o", "DIR/graph-self.json"}, exitUsage, []string{"-o", "also an input"}},
	{"--svg is the lattice file", []string{"lattice", "--lattice", "DIR/graph-self.json", "--svg", "DIR/graph-self.json"}, exitUsage, []string{"--svg", "also an input"}},
	{"--meta is the model", []string{"predict", "--model", "DIR/m.json", "-o", "DIR/new.csv", "--meta", "DIR/m.json"}, exitUsage, []string{"--meta", "also an input"}},
	{"-o in a missing directory", []string{"predict", "--model", "DIR/m.json", "-o", "DIR/nowhere/e.csv"}, exitUsage, []string{"-o", "nowhere"}},
	{"-o is a directory", []string{"predict", "--model", "DIR/m.json", "-o", "DIR/sub"}, exitUsage, []string{"-o", "directory"}},
	// Flags: exit 2, the flag named.
	{"negative workers fit", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/e.csv", "--workers", "-1", "-o", "DIR/old-output.json"}, exitUsage, []string{"--workers"}},
	{"negative workers plan", []string{"plan", "--model", "DIR/m.json", "--target", "0.1", "--workers", "-2"}, exitUsage, []string{"--workers"}},
	{"negative workers predict", []string{"predict", "--model", "DIR/m.json", "--workers", "-1", "-o", "DIR/old-output.csv"}, exitUsage, []string{"--workers"}},
	{"negative cov-distance", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/e.csv", "--cov-distance", "-1"}, exitUsage, []string{"--cov-distance"}},
	{"truth on another lattice", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/e.csv", "--truth", "DIR/other.json", "-o", "DIR/old-output.json"}, exitUsage, []string{"--truth", "other.json", "chain:5"}},
	{"fit --tol retired", []string{"fit", "--model", "DIR/m.json", "--data", "DIR/e.csv", "--tol", "1e-4"}, exitUsage, []string{"--gradient-tol"}},
	{"order 1", []string{"predict", "--model", "DIR/m.json", "--order", "1"}, exitUsage, []string{"--order"}},
	{"order 13", []string{"sweep", "--model", "DIR/m.json", "--beta-grid", "from=0.1,to=0.2,points=2", "--order", "13"}, exitUsage, []string{"--order"}},
	{"order word", []string{"plan", "--model", "DIR/m.json", "--target", "0.1", "--order", "high"}, exitUsage, []string{"--order"}},
	{"beta zero", []string{"predict", "--model", "DIR/m.json", "--beta", "0"}, exitUsage, []string{"--beta"}},
	{"beta NaN", []string{"sample", "--model", "DIR/m.json", "--shots", "10", "--beta", "NaN"}, exitUsage, []string{"--beta"}},
	{"budget zero", []string{"predict", "--model", "DIR/m.json", "--budget", "0s"}, exitUsage, []string{"--budget"}},
	{"vectors negative", []string{"predict", "--model", "DIR/m.json", "--method", "exact", "--vectors", "-3"}, exitUsage, []string{"--vectors"}},
	{"vectors huge", []string{"predict", "--model", "DIR/chain14.json", "--method", "exact", "--vectors", "1000000000"}, exitUsage, []string{"--vectors"}},
	{"shots missing", []string{"sample", "--model", "DIR/m.json"}, exitUsage, []string{"--shots"}},
	{"shots huge", []string{"sample", "--model", "DIR/m.json", "--shots", "1000000000000", "-o", "DIR/old-output.csv"}, exitUsage, []string{"--shots", "--budget"}},
	{"bases zero", []string{"sample", "--model", "DIR/m.json", "--shots", "10", "--bases", "random:0"}, exitUsage, []string{"--bases"}},
	{"bases huge", []string{"plan", "--model", "DIR/m.json", "--target", "0.1", "--bases", "random:1000000000"}, exitUsage, []string{"--bases"}},
	{"bases unknown", []string{"sample", "--model", "DIR/m.json", "--shots", "10", "--bases", "diagonal"}, exitUsage, []string{"--bases"}},
	{"grid colon form", []string{"sweep", "--model", "DIR/m.json", "--beta-grid", "0.1:1:10"}, exitUsage, []string{"--beta-grid"}},
	{"grid missing points", []string{"sweep", "--model", "DIR/m.json", "--beta-grid", "from=0.1,to=1"}, exitUsage, []string{"--beta-grid", "points"}},
	{"grid reversed", []string{"sweep", "--model", "DIR/m.json", "--beta-grid", "from=1,to=0.1,points=3"}, exitUsage, []string{"--beta-grid"}},
	{"old beta-range", []string{"sweep", "--model", "DIR/m.json", "--beta-range", "0.1:1:10"}, exitUsage, []string{"--beta-grid"}},
	{"set unknown name", []string{"model", "--lattice", "chain:4", "--preset", "tfim", "--set", "Q=1", "-o", "DIR/old-output.json"}, exitUsage, []string{"--set"}},
	{"set no value", []string{"model", "--lattice", "chain:4", "--preset", "tfim", "--set", "J="}, exitUsage, []string{"--set"}},
	{"set NaN", []string{"model", "--lattice", "chain:4", "--preset", "tfim", "--set", "J=NaN"}, exitUsage, []string{"--set"}},
	{"preset unknown", []string{"model", "--lattice", "chain:4", "--preset", "ising3"}, exitUsage, []string{"--preset"}},
	{"spec zero size", []string{"lattice", "--lattice", "square:0x3"}, exitUsage, []string{"--lattice"}},
	{"spec too large", []string{"lattice", "--lattice", "square:4096x4096"}, exitUsage, []string{"--lattice", "MaxSites"}},
	{"spec unknown kind", []string{"model", "--lattice", "hexagon:3x3", "--preset", "tfim"}, exitUsage, []string{"--lattice"}},
	{"shells 3", []string{"lattice", "--lattice", "chain:4", "--shells", "3"}, exitUsage, []string{"--shells"}},
	{"clusters too many", []string{"lattice", "--lattice", "square:20x20", "--clusters", "16", "-o", "DIR/old-output.csv"}, exitUsage, []string{"--clusters", "--budget"}},
	{"format unknown", []string{"plan", "--model", "DIR/m.json", "--target", "0.1", "--format", "xml"}, exitUsage, []string{"--format"}},
	{"method unknown", []string{"predict", "--model", "DIR/m.json", "--method", "monte-carlo"}, exitUsage, []string{"--method"}},
	{"generator unknown", []string{"sample", "--model", "DIR/m.json", "--shots", "10", "--generator", "quantum"}, exitUsage, []string{"--generator"}},
	{"norm unknown", []string{"plan", "--model", "DIR/m.json", "--target", "0.1", "--norm", "l1"}, exitUsage, []string{"--norm"}},
	{"target zero", []string{"plan", "--model", "DIR/m.json", "--target", "0"}, exitUsage, []string{"--target"}},
	{"confidence above 1", []string{"plan", "--model", "DIR/m.json", "--target", "0.1", "--confidence", "1.5"}, exitUsage, []string{"--confidence"}},
	{"unknown flag", []string{"predict", "--model", "DIR/m.json", "--temperature", "3"}, exitUsage, []string{"--temperature"}},
	{"stray argument", []string{"predict", "--model", "DIR/m.json", "extra.json"}, exitUsage, []string{"extra.json"}},
	{"model required", []string{"fit", "--data", "DIR/e.csv"}, exitUsage, []string{"--model"}},
}

// snapshotDir reads every file under dir (path -> content).
func snapshotDir(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	files := map[string][]byte{}
	err := filepath.Walk(dir, func(path string, fi os.FileInfo, err error) error {
		if err != nil || fi.IsDir() {
			return err
		}
		b, err := os.ReadFile(path)
		files[path] = b
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return files
}

func TestCatalogueOfBadInputs(t *testing.T) {
	dir := t.TempDir()
	for name, content := range catalogueFiles {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(content), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	os.Mkdir(filepath.Join(dir, "sub"), 0o755)
	before := snapshotDir(t, dir)
	passed := 0
	for _, tc := range catalogue {
		t.Run(tc.name, func(t *testing.T) {
			args := make([]string, len(tc.args))
			for i, a := range tc.args {
				args[i] = strings.ReplaceAll(a, "DIR/", dir+"/")
			}
			code, stdout, stderr := runCmd(args...)
			ok := true
			if code != tc.code {
				t.Errorf("exit %d, want %d; stderr:\n%s", code, tc.code, stderr)
				ok = false
			}
			for _, w := range tc.want {
				if !strings.Contains(stderr, w) {
					t.Errorf("stderr does not name %q:\n%s", w, stderr)
					ok = false
				}
			}
			if stdout != "" {
				t.Errorf("a refusal wrote to stdout:\n%s", stdout)
				ok = false
			}
			after := snapshotDir(t, dir)
			for path, b := range before {
				if !bytes.Equal(after[path], b) {
					t.Errorf("%s changed", path)
					ok = false
				}
			}
			var extra []string
			for path := range after {
				if _, had := before[path]; !had {
					extra = append(extra, path)
				}
			}
			if len(extra) > 0 {
				sort.Strings(extra)
				t.Errorf("files appeared: %v", extra)
				ok = false
			}
			if ok {
				passed++
			}
		})
	}
	if len(catalogue) < 40 {
		t.Errorf("the catalogue has %d entries, want at least 40", len(catalogue))
	}
	t.Logf("catalogue: %d bad inputs, %d clean refusals", len(catalogue), passed)
}
