package model_test

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"warmfit/lattice/model"
)

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
		if m.Lattice.NumSites() > 4096 {
			return // writing huge lattices is not the point here
		}
		if err := m.Validate(); err != nil {
			t.Fatalf("parsed model fails Validate: %v", err)
		}
		var out bytes.Buffer
		if err := model.Write(&out, m); err != nil {
			t.Fatalf("parsed model does not write: %v", err)
		}
		back, err := model.Parse(&out, "again.json")
		if err != nil {
			t.Fatalf("written model does not read back: %v\n%s", err, out.String())
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
