package lattice

import "testing"

func TestSameGraph(t *testing.T) {
	// Bond lists of one kind and size are equal by construction; a
	// different size, boundary or shell count changes them (common practice).
	build := func(s string) *Lattice {
		l, err := Open(s)
		if err != nil {
			t.Fatal(err)
		}
		return l
	}
	a := build("square:3x3")
	for _, tc := range []struct {
		spec string
		same bool
	}{
		{"square:3x3", true},
		{"square:3x4", false},
		{"square:3x3:periodic", false},
		{"square:3x3:shells=2", false},
		{"chain:9", false},
		{"triangular:3x3", false},
	} {
		if got := a.SameGraph(build(tc.spec)); got != tc.same {
			t.Errorf("square:3x3 SameGraph %s = %v, want %v", tc.spec, got, tc.same)
		}
	}
}
