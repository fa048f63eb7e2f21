package lattice_test

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"warmfit/lattice"
)

// Specifications of any shape: an error, or a spec whose String parses
// back to itself.
func FuzzParseSpec(f *testing.F) {
	for _, s := range []string{"chain:12", "ladder:8", "square:6x6:periodic", "triangular:5x4", "honeycomb:3x3", "kagome:2x3", "cubic:3x3x3", "square:4x4:open:shells=2"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		spec, err := lattice.ParseSpec(s)
		if err != nil {
			return
		}
		sites := 1
		for _, n := range spec.Size {
			sites *= n // cannot overflow: every factor was checked against MaxSites
		}
		if sites > lattice.MaxSites {
			t.Fatalf("%q: %d unit cells accepted, above the ceiling %d sites", s, sites, lattice.MaxSites)
		}
		again, err := lattice.ParseSpec(spec.String())
		if err != nil || again.String() != spec.String() {
			t.Fatalf("%q -> %q does not round-trip (%v)", s, spec.String(), err)
		}
	})
}

// A custom-graph (or any lattice object) document of any content: an
// error naming the document, or a lattice whose bonds are in range,
// oriented, free of self and double bonds, within MaxSites, and which
// WriteJSON writes and DecodeLatticeJSON reads back to the same graph
// (round trip: common practice for parsers).
func FuzzDecodeLatticeJSON(f *testing.F) {
	paths, _ := filepath.Glob("../testdata/graphs/*.json")
	for _, p := range paths {
		if b, err := os.ReadFile(p); err == nil {
			f.Add(b)
		}
	}
	f.Add([]byte(`{"kind":"graph","sites":[[0,0],[1,0],[0,1]],"bonds":[[0,1],[1,2]],"shells":2}`))
	f.Add([]byte(`{"kind":"square","size":[3,2],"boundary":"periodic"}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		l, err := lattice.DecodeLatticeJSON(data, "fuzz.json")
		if err != nil {
			if !strings.Contains(err.Error(), "fuzz.json") {
				t.Errorf("error does not name the document: %v", err)
			}
			return
		}
		n := l.NumSites()
		if n < 1 || n > lattice.MaxSites {
			t.Fatalf("%d sites accepted (ceiling %d)", n, lattice.MaxSites)
		}
		seen := map[lattice.Bond]bool{}
		for k, b := range l.NN {
			if b.I < 0 || b.J >= n || b.I >= b.J || seen[b] {
				t.Fatalf("bond %d = %v is out of range, unoriented or repeated (%d sites)", k, b, n)
			}
			seen[b] = true
		}
		var out bytes.Buffer
		if err := l.WriteJSON(&out); err != nil {
			t.Fatalf("accepted lattice does not write: %v", err)
		}
		back, err := lattice.DecodeLatticeJSON(out.Bytes(), "again.json")
		if err != nil {
			t.Fatalf("written lattice does not read back: %v\n%s", err, out.String())
		}
		if !back.SameGraph(l) {
			t.Fatalf("round trip changed the graph:\n%s", out.String())
		}
	})
}
