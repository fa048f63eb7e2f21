package model

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"

	"warmfit/lattice"
)

func modelTestLattice(t testing.TB, spec string) *lattice.Lattice {
	t.Helper()
	s, err := lattice.ParseSpec(spec)
	if err != nil {
		t.Fatal(err)
	}
	l, err := lattice.Build(s)
	if err != nil {
		t.Fatal(err)
	}
	return l
}

// sameModel compares two models field by field; lattices are compared by
// their JSON form, sites and bonds.
func sameModel(t *testing.T, got, want *Model) {
	t.Helper()
	gj, err := got.Lattice.LatticeJSON()
	if err != nil {
		t.Fatal(err)
	}
	wj, err := want.Lattice.LatticeJSON()
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(gj, wj) {
		t.Errorf("lattice %s, want %s", gj, wj)
	}
	if got.Lattice.NumSites() != want.Lattice.NumSites() ||
		!reflect.DeepEqual(got.Lattice.InteractionBonds(), want.Lattice.InteractionBonds()) {
		t.Errorf("lattice geometry differs after reading back")
	}
	if math.Float64bits(got.Beta) != math.Float64bits(want.Beta) {
		t.Errorf("beta %v, want %v", got.Beta, want.Beta)
	}
	if got.Units != want.Units {
		t.Errorf("units %q, want %q", got.Units, want.Units)
	}
	if !bytes.Equal(got.Fit, want.Fit) {
		t.Errorf("fit %s, want %s", got.Fit, want.Fit)
	}
	if len(got.Terms) != len(want.Terms) {
		t.Fatalf("%d terms, want %d", len(got.Terms), len(want.Terms))
	}
	for i := range got.Terms {
		g, w := got.Terms[i], want.Terms[i]
		if g.Pauli != w.Pauli || !slices.Equal(g.Sites, w.Sites) || g.Group != w.Group ||
			math.Float64bits(g.Coeff) != math.Float64bits(w.Coeff) || g.HasStderr != w.HasStderr ||
			(w.HasStderr && math.Float64bits(g.Stderr) != math.Float64bits(w.Stderr)) {
			t.Errorf("term %d: got %+v, want %+v", i, g, w)
		}
	}
}

func TestModelRoundTrip(t *testing.T) {
	for _, spec := range []string{"square:3x3", "chain:7:periodic", "square:4x3:shells=2"} {
		t.Run(spec, func(t *testing.T) {
			l := modelTestLattice(t, spec)
			terms, err := Preset(l, "all2local", map[string]float64{"XX": 1, "Z": -0.5})
			if err != nil {
				t.Fatal(err)
			}
			AddDisorder(terms, 0.3, 7)
			// Awkward values: tiny, huge, negative zero, many digits.
			terms[0].Coeff = 1e-300
			terms[1].Coeff = -1.7976931348623157e308
			terms[2].Coeff = math.Copysign(0, -1)
			terms[3].Coeff = 0.1 + 0.2
			for i := range terms {
				if i%3 == 0 {
					terms[i].Stderr, terms[i].HasStderr = float64(i)*1e-3, true
				}
				if i%4 == 1 {
					terms[i].Group = `g "quoted" \ é`
				}
			}
			m := &Model{Lattice: l, Beta: 0.37, Terms: terms, Units: "MHz",
				Fit: []byte(`{"iterations":12,"converged":true,"notes":["a","b"],"nested":{"x":1.5}}`)}
			var buf bytes.Buffer
			if err := Write(&buf, m); err != nil {
				t.Fatal(err)
			}
			first := buf.String()
			back, err := Parse(strings.NewReader(first), "roundtrip.json")
			if err != nil {
				t.Fatalf("%v\n%s", err, first)
			}
			sameModel(t, back, m)
			if err := back.Validate(); err != nil {
				t.Error(err)
			}
			// Writing what was read gives the same bytes.
			buf.Reset()
			if err := Write(&buf, back); err != nil {
				t.Fatal(err)
			}
			if buf.String() != first {
				t.Errorf("second write differs:\n%s\nvs\n%s", buf.String(), first)
			}
			// One term per line: header lines + terms + footer.
			if got := strings.Count(first, `"pauli"`); got != len(terms) ||
				strings.Count(first, "\n") < len(terms) {
				t.Errorf("expected one term per line")
			}
		})
	}
}

func TestModelRoundTripCustomGraph(t *testing.T) {
	// A ring of 40 sites on a circle with one chord: long "sites" and
	// "bonds" arrays that the writer wraps.
	const n = 40
	coords := make([][]float64, n)
	var bonds []lattice.Bond
	for i := range coords {
		a := 2 * math.Pi * float64(i) / n
		coords[i] = []float64{10 * math.Cos(a), 10 * math.Sin(a)}
		bonds = append(bonds, lattice.Bond{I: i, J: (i + 1) % n})
	}
	bonds = append(bonds, lattice.Bond{I: 0, J: n / 2})
	l, err := lattice.FromGraph(coords, bonds, 1)
	if err != nil {
		t.Fatal(err)
	}
	terms, err := Preset(l, "tfim", map[string]float64{"hx": -0.5})
	if err != nil {
		t.Fatal(err)
	}
	m := &Model{Lattice: l, Beta: 1.5, Terms: terms}
	var buf bytes.Buffer
	if err := Write(&buf, m); err != nil {
		t.Fatal(err)
	}
	for i, line := range strings.Split(buf.String(), "\n") {
		if len(line) > maxInlineWidth+8 {
			t.Errorf("line %d has %d characters", i+1, len(line))
		}
	}
	back, err := Parse(&buf, "graph.json")
	if err != nil {
		t.Fatal(err)
	}
	sameModel(t, back, m)
	if !reflect.DeepEqual(back.Lattice.Coords, coords) {
		t.Error("coordinates changed")
	}
	// The chord makes ZZ on [0 20] a valid term: n ring bonds + 1 chord.
	if got := countByPauli(back.Terms)["ZZ"]; got != n+1 {
		t.Errorf("%d ZZ terms, want %d", got, n+1)
	}
}

func TestReadModelSample(t *testing.T) {
	m, err := ReadFile(filepath.Join("..", "..", "testdata", "models", "square3x3_tfim.json"))
	if err != nil {
		t.Fatal(err)
	}
	// The file lists the 12 bonds of the open 3x3 square lattice
	// (closed form W(H-1) + H(W-1)) and 9 sites.
	if m.Lattice.NumSites() != 9 || len(m.Terms) != 21 || m.Beta != 0.4 || m.Units != "kHz" {
		t.Fatalf("sites %d terms %d beta %v units %q", m.Lattice.NumSites(), len(m.Terms), m.Beta, m.Units)
	}
	if m.Terms[20].Group != "hx" || m.Terms[0].Group != "" || m.Terms[0].HasStderr {
		t.Errorf("groups or stderr not read as written: %+v %+v", m.Terms[0], m.Terms[20])
	}
}

func TestParseModelCanonicalises(t *testing.T) {
	doc := `{"lattice": {"kind": "chain", "size": [4]},
	 "terms": [{"pauli": "XZ", "sites": [2, 1], "coeff": 0.5, "extra": [1, {"a": null}]},
	           {"pauli": "XYZ", "sites": [3, 1, 2]},
	           {"pauli": "Y", "sites": [0], "coeff": -2, "stderr": 0.1, "group": null},
	           {"p\u0061uli": "X", "sites": [ 3 ] , "group": "a\"]}[{,:b", "coeff":1E-2 }]}`
	m, err := Parse(strings.NewReader(doc), "c.json")
	if err != nil {
		t.Fatal(err)
	}
	want := []lattice.Term{
		{Pauli: "ZX", Sites: []int{1, 2}, Coeff: 0.5},
		{Pauli: "YZX", Sites: []int{1, 2, 3}}, // letters follow their sites; missing coeff is 0
		{Pauli: "Y", Sites: []int{0}, Coeff: -2, Stderr: 0.1, HasStderr: true},
		// An escaped key and a group name full of JSON punctuation.
		{Pauli: "X", Sites: []int{3}, Coeff: 0.01, Group: `a"]}[{,:b`},
	}
	if !reflect.DeepEqual(m.Terms, want) {
		t.Errorf("got %+v\nwant %+v", m.Terms, want)
	}
	if m.Beta != 0 {
		t.Errorf("beta %v without a beta field", m.Beta)
	}
	if err := m.Validate(); err != nil {
		t.Error(err)
	}
}

func TestParseModelLatticeSpecString(t *testing.T) {
	doc := `{"lattice": "chain:3", "terms": [{"pauli": "ZZ", "sites": [1, 2], "coeff": 1}]}`
	m, err := Parse(strings.NewReader(doc), "s.json")
	if err != nil {
		t.Fatal(err)
	}
	if m.Lattice.NumSites() != 3 {
		t.Errorf("%d sites", m.Lattice.NumSites())
	}
}

func TestParseModelErrors(t *testing.T) {
	const chain = `"lattice": {"kind": "chain", "size": [4]}`
	tests := []struct {
		name string
		doc  string
		path string // JSON path the error must name
		line int    // line the error must name (0: not checked)
		msg  string // text the error must contain
	}{
		{"bad letter", "{" + chain + `,
"terms": [
 {"pauli": "ZW", "sites": [0, 1], "coeff": 1}]}`, "terms[0].pauli", 3, "not X, Y or Z"},
		{"identity letter", "{" + chain + `, "terms": [{"pauli": "IZ", "sites": [0, 1]}]}`, "terms[0].pauli", 1, "not X, Y or Z"},
		{"lowercase letter", "{" + chain + `, "terms": [{"pauli": "zz", "sites": [0, 1]}]}`, "terms[0].pauli", 1, "not X, Y or Z"},
		{"empty pauli", "{" + chain + `, "terms": [{"pauli": "", "sites": []}]}`, "terms[0].pauli", 1, "empty"},
		{"letters vs sites", "{" + chain + `,
"terms": [{"pauli": "Z", "sites": [0]},
  {"pauli": "ZZ", "sites": [0, 1, 2], "coeff": 1}]}`, "terms[1].sites", 3, "3 sites for the 2 letters"},
		{"disconnected", "{" + chain + `,
"terms": [
 {"pauli": "ZZ", "sites": [0, 2], "coeff": 1}]}`, "terms[0].sites", 3, "not connected"},
		{"site out of range", "{" + chain + `, "terms": [{"pauli": "Z", "sites": [4]}]}`, "terms[0].sites", 1, "beyond the lattice: chain:4 has 4 sites"},
		{"negative site", "{" + chain + `, "terms": [{"pauli": "Z", "sites": [-1]}]}`, "terms[0].sites", 1, "negative site"},
		{"fractional site", "{" + chain + `, "terms": [{"pauli": "Z", "sites": [1.5]}]}`, "terms[0].sites", 1, "not a non-negative integer"},
		{"repeated site", "{" + chain + `, "terms": [{"pauli": "ZX", "sites": [1, 1]}]}`, "terms[0].sites", 1, "repeated"},
		{"duplicate after canonical form", `{"lattice": {"kind": "square", "size": [3, 3], "shells": 2},
"terms": [
 {"pauli": "ZX", "sites": [1, 3], "coeff": 0.2},
 {"pauli": "XZ", "sites": [3, 1], "coeff": 0.3}]}`, "terms[1]", 4, "duplicates terms[0] (line 3)"},
		{"NaN as string", "{" + chain + `, "terms": [{"pauli": "Z", "sites": [0], "coeff": "NaN"}]}`, "terms[0].coeff", 1, "must be a number"},
		{"overflowing exponent", "{" + chain + `, "terms": [{"pauli": "Z", "sites": [0], "coeff": 1e999}]}`, "terms[0].coeff", 1, "not a finite"},
		{"negative stderr", "{" + chain + `, "terms": [{"pauli": "Z", "sites": [0], "stderr": -1}]}`, "terms[0].stderr", 1, ">= 0"},
		{"beta zero", "{" + chain + `, "beta": 0, "terms": [{"pauli": "Z", "sites": [0]}]}`, "beta", 1, "> 0"},
		{"beta negative", "{" + chain + `,
  "beta": -0.5, "terms": [{"pauli": "Z", "sites": [0]}]}`, "beta", 2, "> 0"},
		{"beta string", "{" + chain + `, "beta": "1", "terms": [{"pauli": "Z", "sites": [0]}]}`, "beta", 1, "must be a number"},
		{"beta huge", "{" + chain + `, "beta": 2e400, "terms": [{"pauli": "Z", "sites": [0]}]}`, "beta", 1, "not a finite"},
		{"no terms", "{" + chain + `, "terms": []}`, "terms", 1, "no terms"},
		{"terms missing", "{" + chain + `}`, "terms", 1, "missing"},
		{"lattice missing", `{"terms": [{"pauli": "Z", "sites": [0]}]}`, "lattice", 1, "missing"},
		{"sites missing", "{" + chain + `, "terms": [{"pauli": "Z"}]}`, "terms[0].sites", 1, "missing"},
		{"pauli missing", "{" + chain + `, "terms": [{"sites": [0]}]}`, "terms[0].pauli", 1, "missing"},
		{"term not an object", "{" + chain + `, "terms": [["Z", 0]]}`, "terms[0]", 1, "want a JSON object"},
		{"field twice", "{" + chain + `, "beta": 1,
 "beta": 2, "terms": [{"pauli": "Z", "sites": [0]}]}`, "beta", 2, "given twice (first on line 1)"},
		{"fit not an object", "{" + chain + `, "fit": 3, "terms": [{"pauli": "Z", "sites": [0]}]}`, "fit", 1, "must be a JSON object"},
		{"top level array", `[1, 2]`, "", 1, "one JSON object"},
		{"syntax: missing comma", `{
  "lattice": {"kind": "chain", "size": [3]},
  "terms": [
    {"pauli": "XX", "sites": [0, 1], "coeff": 1.0}
    {"pauli": "Z", "sites": [2], "coeff": 0.5}
  ]
}`, "", 5, "invalid JSON"},
		{"syntax: truncated", "{\n" + chain + `, "terms": [`, "", 2, "invalid JSON"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Parse(strings.NewReader(tc.doc), "in.json")
			if err == nil {
				t.Fatal("no error")
			}
			var me *Error
			if !errors.As(err, &me) {
				t.Fatalf("error %v is not a *Error", err)
			}
			if me.File != "in.json" || me.Path != tc.path || (tc.line > 0 && me.Line != tc.line) {
				t.Errorf("error at %s:%d path %q, want in.json:%d path %q (%v)", me.File, me.Line, me.Path, tc.line, tc.path, err)
			}
			if !strings.Contains(err.Error(), tc.msg) || !strings.HasPrefix(err.Error(), "in.json") {
				t.Errorf("error %q should start with the file name and contain %q", err, tc.msg)
			}
		})
	}
}

func TestSyntaxErrorColumn(t *testing.T) {
	// The 'x' is the 8th character of line 2.
	doc := "{\n  \"a\": x}"
	_, err := Parse(strings.NewReader(doc), "f.json")
	var me *Error
	if !errors.As(err, &me) || me.Line != 2 || me.Col != 8 {
		t.Fatalf("got %v, want line 2 column 8", err)
	}
}

func TestBadModelFiles(t *testing.T) {
	// The files in testdata/models/bad_*.json and the error each must give.
	want := map[string]string{
		"bad_letters.json":      ":5:",
		"bad_disconnected.json": "terms[1].sites",
		"bad_duplicate.json":    "terms[2]",
		"bad_nan.json":          "terms[0].coeff",
		"bad_syntax.json":       ":6:",
		"bad_beta.json":         "beta",
	}
	files, err := filepath.Glob(filepath.Join("..", "..", "testdata", "models", "bad_*.json"))
	if err != nil {
		t.Fatal(err)
	}
	if len(files) != len(want) {
		t.Errorf("found %d bad_*.json files, the test knows %d", len(files), len(want))
	}
	for _, f := range files {
		_, err := ReadFile(f)
		if err == nil {
			t.Errorf("%s: no error", f)
			continue
		}
		if w := want[filepath.Base(f)]; !strings.Contains(err.Error(), w) || !strings.Contains(err.Error(), f) {
			t.Errorf("%s: error %q should contain %q and the file name", f, err, w)
		}
	}
}

func TestReadModelMissingFile(t *testing.T) {
	_, err := ReadFile(filepath.Join(t.TempDir(), "none.json"))
	if !errors.Is(err, os.ErrNotExist) {
		t.Errorf("got %v", err)
	}
}

func TestValidate(t *testing.T) {
	l := modelTestLattice(t, "chain:4")
	good := func() *Model {
		return &Model{Lattice: l, Beta: 1, Terms: []lattice.Term{
			{Pauli: "XZ", Sites: []int{0, 1}, Coeff: 1},
			{Pauli: "Y", Sites: []int{3}, Coeff: -1},
		}}
	}
	if err := good().Validate(); err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name   string
		change func(m *Model)
		path   string
	}{
		{"no lattice", func(m *Model) { m.Lattice = nil }, "lattice"},
		{"NaN beta", func(m *Model) { m.Beta = math.NaN() }, "beta"},
		{"negative beta", func(m *Model) { m.Beta = -1 }, "beta"},
		{"no terms", func(m *Model) { m.Terms = nil }, "terms"},
		{"not canonical", func(m *Model) { m.Terms[0] = lattice.Term{Pauli: "ZX", Sites: []int{1, 0}} }, "terms[0]"},
		{"NaN coeff", func(m *Model) { m.Terms[1].Coeff = math.NaN() }, "terms[1].coeff"},
		{"infinite coeff", func(m *Model) { m.Terms[1].Coeff = math.Inf(-1) }, "terms[1].coeff"},
		{"NaN stderr", func(m *Model) { m.Terms[1].Stderr, m.Terms[1].HasStderr = math.NaN(), true }, "terms[1].stderr"},
		{"duplicate", func(m *Model) { m.Terms[1] = lattice.Term{Pauli: "XZ", Sites: []int{0, 1}} }, "terms[1]"},
		{"disconnected", func(m *Model) { m.Terms[1] = lattice.Term{Pauli: "XX", Sites: []int{0, 3}} }, "terms[1].sites"},
		{"bad fit", func(m *Model) { m.Fit = []byte(`[1]`) }, "fit"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			m := good()
			tc.change(m)
			err := m.Validate()
			var me *Error
			if !errors.As(err, &me) || me.Path != tc.path {
				t.Fatalf("got %v, want an error at %q", err, tc.path)
			}
			// An invalid model is never written, and nothing is written.
			var buf bytes.Buffer
			if werr := Write(&buf, m); werr == nil || buf.Len() != 0 {
				t.Errorf("Write wrote %d bytes, error %v", buf.Len(), werr)
			}
		})
	}
	// A NaN standard error that is not marked as known is not written.
	m := good()
	m.Terms[0].Stderr = math.NaN()
	var buf bytes.Buffer
	if err := Write(&buf, m); err != nil || strings.Contains(buf.String(), "NaN") || strings.Contains(buf.String(), "stderr") {
		t.Errorf("err %v, output %s", err, buf.String())
	}
}

func TestFormatNumberMatchesEncodingJSON(t *testing.T) {
	// Reference: encoding/json's own float formatting.
	for _, v := range []float64{0, math.Copysign(0, -1), 1, -0.5, 0.1 + 0.2, 1e-6, 9.99e-7, 1e-7, 1.5e-300,
		5e-324, 1e20, 1e21, 123456789e15, -1.7976931348623157e308, 2.5e-10, 1e100} {
		want, err := json.Marshal(v)
		if err != nil {
			t.Fatal(err)
		}
		if got := formatNumber(v); got != string(want) {
			t.Errorf("%v: %s, want %s", v, got, want)
		}
	}
}
