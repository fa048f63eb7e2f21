package fit

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestScanSnapshotsVisits(t *testing.T) {
	src := "\ufeffbasis,outcome,count\r\n# a comment\r\nZZX,010,2\r\n\r\n XXX , 111 , 1 ,extra\nZZX,010,9223372036854775807\n"
	type shot struct {
		b, o string
		c    int64
	}
	var got []shot
	err := ScanSnapshots(strings.NewReader(src), "s.csv", 3, func(b, o string, c int64) error {
		got = append(got, shot{b, o, c})
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	want := []shot{{"ZZX", "010", 2}, {"XXX", "111", 1}, {"ZZX", "010", 9223372036854775807}}
	if fmt.Sprint(got) != fmt.Sprint(want) {
		t.Fatalf("got %v, want %v", got, want)
	}

	stop := errors.New("stop")
	calls := 0
	err = ScanSnapshots(strings.NewReader(src), "s.csv", 3, func(string, string, int64) error {
		calls++
		return stop
	})
	if err != stop || calls != 1 {
		t.Errorf("visit error: got %v after %d calls", err, calls)
	}
}

func TestScanSnapshotsErrors(t *testing.T) {
	const h = "basis,outcome,count\n"
	for _, tc := range []struct {
		name, src, want string
	}{
		{"header", "basis,outcome\n", `s.csv:1: header: missing column "count"`},
		{"table header", "pauli,sites,value,stderr\n", `s.csv:1: header: column 1 is "pauli", want "basis"`},
		{"no header", "", `s.csv: no header line`},
		{"basis length", h + "ZZ,010,1\n", `s.csv:2: field "basis": 2 letters, want 3`},
		{"basis letter", h + "ZZ,010,1\nZIZ,010,1\n", `s.csv:2: field "basis": 2 letters`},
		{"basis letter 2", h + "ZIZ,010,1\n", `s.csv:2: field "basis": letter 'I' for qubit 1 is not X, Y or Z`},
		{"outcome length", h + "ZZZ,0101,1\n", `s.csv:2: field "outcome": 4 digits, want 3`},
		{"outcome digit", h + "# c\nZZZ,012,1\n", `s.csv:3: field "outcome": digit '2' for qubit 2 is not 0 or 1`},
		{"count zero", h + "ZZZ,010,0\n", `s.csv:2: field "count": "0" is not a positive integer`},
		{"count negative", h + "ZZZ,010,-3\n", `s.csv:2: field "count": "-3" is not a positive integer`},
		{"count fraction", h + "ZZZ,010,1.5\n", `s.csv:2: field "count": "1.5" is not a positive integer`},
		{"count missing", h + "ZZZ,010\n", `s.csv:2: want 3 comma-separated fields`},
		{"count empty", h + "ZZZ,010,\n", `s.csv:2: field "count": "" is not a positive integer`},
		{"count overflow", h + "ZZZ,010,9223372036854775808\n", `s.csv:2: field "count": "9223372036854775808" is not a positive integer`},
		{"count sign", h + "ZZZ,010,+3\n", `s.csv:2: field "count": "+3" is not a positive integer`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			err := ScanSnapshots(strings.NewReader(tc.src), "s.csv", 3, func(string, string, int64) error { return nil })
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("got %v, want it to contain %q", err, tc.want)
			}
		})
	}
}

func TestDetectDataKind(t *testing.T) {
	dir := t.TempDir()
	for _, tc := range []struct {
		name, src string
		kind      DataKind
		err       string
	}{
		{"t.csv", "# comment\n\npauli,sites,value,stderr,shots\nZ,0,0.1,0.01,5\n", KindTable, ""},
		{"s.csv", "basis,outcome,count\nZ,0,1\n", KindSnapshots, ""},
		{"crlf.csv", "\ufeffBasis, Outcome, Count\r\n", KindSnapshots, ""},
		{"u.csv", "a,b,c\n", "", `u.csv:1: unknown header "a,b,c": an expectation table starts with "pauli,sites,value,stderr", a snapshot file with "basis,outcome,count"`},
		{"e.csv", "# nothing\n", "", "e.csv: no header line"},
	} {
		path := filepath.Join(dir, tc.name)
		if err := os.WriteFile(path, []byte(tc.src), 0o644); err != nil {
			t.Fatal(err)
		}
		kind, err := DetectDataKind(path)
		if tc.err != "" {
			if err == nil || !strings.Contains(err.Error(), tc.err) {
				t.Errorf("%s: got %q, %v; want error containing %q", tc.name, kind, err, tc.err)
			}
			continue
		}
		if err != nil || kind != tc.kind {
			t.Errorf("%s: got %q, %v; want %q", tc.name, kind, err, tc.kind)
		}
	}
	if _, err := DetectDataKind(filepath.Join(dir, "absent.csv")); err == nil {
		t.Error("absent file: no error")
	}
}

// What SnapshotWriter writes reads back line for line (round trip:
// common practice for file formats), and it refuses what the reader would.
func TestSnapshotWriterRoundTrip(t *testing.T) {
	var buf bytes.Buffer
	w := NewSnapshotWriter(&buf, 3)
	in := []struct {
		basis, outcome string
		count          int64
	}{{"ZZZ", "010", 5}, {"XYZ", "111", 1}, {"ZZZ", "000", 1 << 40}}
	for _, s := range in {
		if err := w.Write(s.basis, s.outcome, s.count); err != nil {
			t.Fatal(err)
		}
	}
	for _, bad := range []struct {
		basis, outcome string
		count          int64
	}{{"ZZ", "010", 1}, {"ZZQ", "010", 1}, {"ZZZ", "012", 1}, {"ZZZ", "01", 1}, {"ZZZ", "010", 0}} {
		if err := w.Write(bad.basis, bad.outcome, bad.count); err == nil {
			t.Errorf("%+v accepted", bad)
		}
	}
	if err := w.Flush(); err != nil {
		t.Fatal(err)
	}
	i := 0
	err := ScanSnapshots(&buf, "w.csv", 3, func(basis, outcome string, count int64) error {
		if basis != in[i].basis || outcome != in[i].outcome || count != in[i].count {
			t.Errorf("line %d: %s %s %d, want %+v", i, basis, outcome, count, in[i])
		}
		i++
		return nil
	})
	if err != nil || i != len(in) {
		t.Fatalf("read back %d lines: %v", i, err)
	}
}
