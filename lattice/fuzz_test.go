package lattice_test

import (
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
		again, err := lattice.ParseSpec(spec.String())
		if err != nil || again.String() != spec.String() {
			t.Fatalf("%q -> %q does not round-trip (%v)", s, spec.String(), err)
		}
	})
}
