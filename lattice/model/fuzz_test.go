package model_test

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"warmfit/lattice"
	"warmfit/lattice/model"
)

// lazySites is the lattice size above which the model fuzzer checks the
// round trip lazily (see lazyReadBack) instead of rebuilding the lattice.
const lazySites = 4096

// lazyReadBack checks a written large model without building its lattice
// again: the "lattice" member must equal the lattice's own LatticeJSON
// (which DecodeLatticeJSON is fuzzed to read back to the same graph), and
// the terms, decoded as plain JSON, must validate on the lattice already
// built. The caller then compares them with the parsed terms.
func lazyReadBack(t *testing.T, m *model.Model, doc []byte) *model.Model {
	t.Helper()
	var raw struct {
		Lattice json.RawMessage `json:"lattice"`
		Beta    float64         `json:"beta"`
		Terms   []struct {
			Pauli string  `json:"pauli"`
			Sites []int   `json:"sites"`
			Coeff float64 `json:"coeff"`
			Group string  `json:"group"`
		} `json:"terms"`
	}
	if err := json.Unmarshal(doc, &raw); err != nil {
		t.Fatalf("written model is not JSON: %v", err)
	}
	want, err := m.Lattice.LatticeJSON()
	if err != nil {
		t.Fatal(err)
	}
	var a, b any
	if json.Unmarshal(raw.Lattice, &a) != nil || json.Unmarshal(want, &b) != nil || !reflect.DeepEqual(a, b) {
		t.Fatalf("written lattice %s differs from the model's %s", raw.Lattice, want)
	}
	back := &model.Model{Lattice: m.Lattice, Beta: raw.Beta}
	for _, rt := range raw.Terms {
		back.Terms = append(back.Terms, lattice.Term{Pauli: rt.Pauli, Sites: rt.Sites, Coeff: rt.Coeff, Group: rt.Group})
	}
	if err := back.Validate(); err != nil {
		t.Fatalf("written terms fail Validate on the lattice: %v", err)
	}
	return back
}

// A model file of any content: an error naming the file, or a model that
// passes Validate, writes, and reads back to the same terms (round trip:
// common practice for parsers).
func FuzzParseModel(f *testing.F) {
	paths, _ := filepath.Glob("../../testdata/models/*.json")
	for _, p := range paths {
		if b, err := os.ReadFile(p); err == nil {
			f.Add(b)
		}
	}
	f.Add([]byte(`{"lattice":{"kind":"chain","size":[3]},"terms":[{"pauli":"XZ","sites":[1,0],"coeff":1}]}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		m, err := model.Parse(bytes.NewReader(data), "fuzz.json")
		if err != nil {
			if !strings.Contains(err.Error(), "fuzz.json") {
				t.Errorf("error does not name the file: %v", err)
			}
			return
		}
		if m.Lattice.NumSites() > lattice.MaxSites {
			t.Fatalf("%d sites accepted, above lattice.MaxSites", m.Lattice.NumSites())
		}
		if err := m.Validate(); err != nil {
			t.Fatalf("parsed model fails Validate: %v", err)
		}
		var out bytes.Buffer
		if err := model.Write(&out, m); err != nil {
			t.Fatalf("parsed model does not write: %v", err)
		}
		var back *model.Model
		if m.Lattice.NumSites() > lazySites {
			// Lazy round trip for a large lattice: rebuilding it would
			// cost far more than the parse being tested, so the written
			// lattice object is compared as JSON and the terms are read
			// back on the lattice already built.
			back = lazyReadBack(t, m, out.Bytes())
		} else {
			var err error
			if back, err = model.Parse(&out, "again.json"); err != nil {
				t.Fatalf("written model does not read back: %v\n%s", err, out.String())
			}
		}
		if len(back.Terms) != len(m.Terms) {
			t.Fatalf("%d terms became %d", len(m.Terms), len(back.Terms))
		}
		for k := range m.Terms {
			if m.Terms[k].Key() != back.Terms[k].Key() || m.Terms[k].Coeff != back.Terms[k].Coeff {
				t.Fatalf("term %d changed: %+v -> %+v", k, m.Terms[k], back.Terms[k])
			}
		}
	})
}
