package fit

import (
	"bytes"
	"math"
	"reflect"
	"strings"
	"testing"
)

func TestTableRoundTrip(t *testing.T) {
	// Values chosen to need all 17 significant digits, subnormals and
	// signed zero: strconv 'g' with precision -1 is the shortest string
	// that parses back to the same float64 (Go strconv documentation).
	in := &Table{
		Comments:    []string{"made by TestTableRoundTrip", "second line"},
		ExtraHeader: []string{"note", "shots"},
		Rows: []Row{
			{Pauli: "ZZ", Sites: []int{0, 1}, Value: 1.0 / 3, Stderr: 0.1, HasStderr: true, Extra: []string{"plain", "100"}},
			{Pauli: "X", Sites: []int{7}, Value: -math.Sqrt2 / 2, Extra: []string{`has "quotes", and a comma`, ""}},
			{Pauli: "XY", Sites: []int{2, 3}, Value: 5e-324, Stderr: 2.5e-17, HasStderr: true, Extra: []string{"", "3"}},
			{Pauli: "Y", Sites: []int{12}, Value: math.Copysign(0, -1), Stderr: 5e-324, HasStderr: true, Extra: []string{"zero", "1"}},
			{Pauli: "ZX", Sites: []int{4, 5}, Value: 1 - 0x1p-53, Stderr: 1e-300, HasStderr: true, Extra: []string{"x", "9"}},
		},
	}
	var buf bytes.Buffer
	if err := WriteTable(&buf, in); err != nil {
		t.Fatal(err)
	}
	out, err := ReadTable(bytes.NewReader(buf.Bytes()), "roundtrip.csv")
	if err != nil {
		t.Fatalf("%v\n%s", err, buf.String())
	}
	if !reflect.DeepEqual(out.ExtraHeader, in.ExtraHeader) || !reflect.DeepEqual(out.Comments, in.Comments) {
		t.Fatalf("header/comments: got %q %q", out.ExtraHeader, out.Comments)
	}
	if len(out.Rows) != len(in.Rows) {
		t.Fatalf("got %d rows, want %d", len(out.Rows), len(in.Rows))
	}
	for i, w := range in.Rows {
		g := out.Rows[i]
		if g.Pauli != w.Pauli || !reflect.DeepEqual(g.Sites, w.Sites) || g.HasStderr != w.HasStderr ||
			math.Float64bits(g.Value) != math.Float64bits(w.Value) || math.Float64bits(g.Stderr) != math.Float64bits(w.Stderr) ||
			!reflect.DeepEqual(g.Extra, w.Extra) {
			t.Errorf("row %d: got %+v, want %+v", i, g, w)
		}
	}
	var again bytes.Buffer
	if err := WriteTable(&again, out); err != nil {
		t.Fatal(err)
	}
	if again.String() != buf.String() {
		t.Errorf("second write differs:\n%s\nvs\n%s", again.String(), buf.String())
	}
}

func TestReadTableCanonicalises(t *testing.T) {
	// formats.md: "XZ" on [3,1] is "ZX" on [1,3].
	src := "pauli,sites,value,stderr\r\nXZ,3 1,0.25,0.01\r\nxy , 9  4 ,-0.5,exact\n"
	tab, err := ReadTable(strings.NewReader(src), "c.csv")
	if err != nil {
		t.Fatal(err)
	}
	want := []Row{
		{Pauli: "ZX", Sites: []int{1, 3}, Value: 0.25, Stderr: 0.01, HasStderr: true, Line: 2},
		{Pauli: "YX", Sites: []int{4, 9}, Value: -0.5, Line: 3},
	}
	if !reflect.DeepEqual(tab.Rows, want) {
		t.Fatalf("got %+v, want %+v", tab.Rows, want)
	}
	if tab.Index()["YX 4 9"] != 1 {
		t.Errorf("Index: %v", tab.Index())
	}
}

func TestReadTableRange(t *testing.T) {
	// The 5-sigma rule of the data contract: |value| may exceed 1 by at
	// most 5 standard errors; exact values (empty stderr) by 1e-9.
	for _, tc := range []struct {
		line string
		ok   bool
	}{
		{"Z,0,1.04,0.01", true},
		{"Z,0,-1.049,0.01", true},
		{"Z,0,1.06,0.01", false},
		{"Z,0,-1.06,0.01", false},
		{"Z,0,1,exact", true},
		{"Z,0,1.0000000001,exact", true},
		{"Z,0,1.00001,exact", false},
		{"Z,0,1.00001,0", false},
	} {
		_, err := ReadTable(strings.NewReader("pauli,sites,value,stderr\n"+tc.line+"\n"), "r.csv")
		if (err == nil) != tc.ok {
			t.Errorf("%q: err = %v, want ok=%v", tc.line, err, tc.ok)
		}
	}
}

func TestReadTableErrors(t *testing.T) {
	const h = "pauli,sites,value,stderr\n"
	for _, tc := range []struct {
		name, src, want string
	}{
		{"missing column", "pauli,sites,value\nZ,0,0.1\n", `e.csv:1: header: missing column "stderr"`},
		{"wrong column", "pauli,site,value,stderr\n", `e.csv:1: header: column 2 is "site", want "sites"`},
		{"no header", "# only a comment\n\n", `e.csv: no header line`},
		{"bad number", h + "Z,0,abc,0.1\n", `e.csv:2: field "value": "abc" is not a number`},
		{"empty value", h + "Z,0,,0.1\n", `e.csv:2: field "value": empty`},
		{"NaN value", h + "# c\nZ,0,NaN,0.1\n", `e.csv:3: field "value": "NaN" is not a finite number`},
		{"Inf stderr", h + "Z,0,0.5,+Inf\n", `e.csv:2: field "stderr": "+Inf" is not a finite number`},
		{"negative stderr", h + "Z,0,0.5,-0.1\n", `e.csv:2: field "stderr": "-0.1" is negative`},
		{"bad stderr", h + "Z,0,0.5,x\n", `e.csv:2: field "stderr": "x" is not a number`},
		{"duplicate", h + "ZZ,0 1,0.5,0.1\nX,2,0.1,exact\nZZ,1 0,0.4,0.1\n", `e.csv:4: term "ZZ 0 1" repeats the term of line 2`},
		{"duplicate after canonical form", h + "XZ,3 1,0.5,0.1\nZX,1 3,0.4,0.1\n", `e.csv:3: term "ZX 1 3" repeats the term of line 2`},
		{"out of range 5 sigma", h + "ZZ,0 1,1.2,0.01\n", `e.csv:2: field "value": 1.2 lies outside [-1, 1] by more than 5 standard errors`},
		{"out of range exact", h + "ZZ,0 1,-1.5,exact\n", `e.csv:2: field "value": -1.5 lies outside [-1, 1] (an exact value`},
		{"field count", h + "Z,0,0.5\n", `e.csv:2: row has 3 fields, the header has 4`},
		{"bad letter", h + "ZA,0 1,0.5,\n", `e.csv:2: field "pauli": "ZA": letter 'A' is not X, Y or Z`},
		{"empty pauli", h + ",0,0.5,0.1\n", `e.csv:2: field "pauli": empty Pauli string`},
		{"blank stderr", h + "Z,0,0.5,\n", `e.csv:2: field "stderr": empty: a blank stderr is not read as an exact value`},
		{"zero stderr", h + "Z,0,0.5,0\n", `e.csv:2: field "stderr": "0": a zero stderr is not read as an exact value; write "exact"`},
		{"comma sites", h + "ZZ,\"0,1\",0.5,0.1\n", `e.csv:2: field "sites": "0,1": separate sites by spaces, as in "0 1"`},
		{"semicolon sites", h + "ZZ,0;1,0.5,0.1\n", `e.csv:2: field "sites": "0;1": separate sites by spaces`},
		// Unquoted commas split the sites into fields of their own.
		{"unquoted comma sites", h + "ZZ,0,1,0.5,0.1\n", `e.csv:2: field "sites": "0,1" looks like sites separated by commas, which split the row into 5 fields (the header has 4); separate sites by spaces, as in "0 1"`},
		{"unquoted comma sites, extra column", "pauli,sites,value,stderr,shots\nZZZ,0,1,2,0.5,0.1,100\n", `e.csv:2: field "sites": "0,1,2" looks like sites separated by commas`},
		{"bad site", h + "ZZ,0 x,0.5,\n", `e.csv:2: field "sites": "x" is not a site index`},
		{"negative site", h + "Z,-1,0.5,\n", `e.csv:2: field "sites": "-1" is not a site index`},
		{"site count", h + "ZZ,0,0.5,\n", `e.csv:2: field "sites": 1 sites for the 2 letters of "ZZ"`},
		{"repeated site", h + "ZZ,3 3,0.5,\n", `e.csv:2: field "sites": "ZZ": site 3 repeated`},
		{"bad quoting", h + "Z,0,0.5,,\"x\n", `e.csv:2: malformed CSV`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := ReadTable(strings.NewReader(tc.src), "e.csv")
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("got %v, want it to contain %q", err, tc.want)
			}
		})
	}
}

func TestWriteTableRefuses(t *testing.T) {
	z := func(v, s float64, has bool) Row {
		return Row{Pauli: "Z", Sites: []int{0}, Value: v, Stderr: s, HasStderr: has}
	}
	for _, tc := range []struct {
		name string
		tab  Table
		want string
	}{
		{"NaN value", Table{Rows: []Row{z(0.1, 0.1, true), {Pauli: "X", Sites: []int{1}, Value: math.NaN()}}}, "table row 2 (X 1): value is NaN"},
		{"Inf value", Table{Rows: []Row{z(math.Inf(1), 0, false)}}, "table row 1 (Z 0): value is +Inf"},
		{"NaN stderr", Table{Rows: []Row{z(0.1, math.NaN(), true)}}, "table row 1 (Z 0): stderr is NaN"},
		{"out of range", Table{Rows: []Row{z(1.5, 0.01, true)}}, "table row 1 (Z 0): value 1.5 lies outside"},
		{"duplicate", Table{Rows: []Row{{Pauli: "XZ", Sites: []int{2, 1}}, {Pauli: "ZX", Sites: []int{1, 2}}}}, "table row 2 (ZX 1 2): term repeats row 1"},
		{"bad term", Table{Rows: []Row{{Pauli: "Q", Sites: []int{0}}}}, "table row 1: \"Q\": letter 'Q' is not X, Y or Z"},
		{"extra count", Table{ExtraHeader: []string{"a"}, Rows: []Row{{Pauli: "Z", Sites: []int{0}, Extra: []string{"1", "2"}}}}, "2 extra fields, the table has 1"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			err := WriteTable(&bytes.Buffer{}, &tc.tab)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("got %v, want it to contain %q", err, tc.want)
			}
		})
	}
}
