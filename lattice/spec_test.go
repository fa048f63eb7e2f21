package lattice

import (
	"errors"
	"slices"
	"strings"
	"testing"
)

func TestParseSpec(t *testing.T) {
	good := []struct {
		in   string
		want Spec
		out  string // String(); "" means in
	}{
		{"chain:12", Spec{"chain", []int{12}, OpenBoundary, 1}, ""},
		{"ladder:8", Spec{"ladder", []int{8}, OpenBoundary, 1}, ""},
		{"square:4x4", Spec{"square", []int{4, 4}, OpenBoundary, 1}, ""},
		{"square:6x6:periodic", Spec{"square", []int{6, 6}, Periodic, 1}, ""},
		{"square:6x6:open", Spec{"square", []int{6, 6}, OpenBoundary, 1}, "square:6x6"},
		{"triangular:5x4", Spec{"triangular", []int{5, 4}, OpenBoundary, 1}, ""},
		{"honeycomb:3x3", Spec{"honeycomb", []int{3, 3}, OpenBoundary, 1}, ""},
		{"kagome:2x3", Spec{"kagome", []int{2, 3}, OpenBoundary, 1}, ""},
		{"cubic:3x3x3", Spec{"cubic", []int{3, 3, 3}, OpenBoundary, 1}, ""},
		{"square:6x6:periodic:shells=2", Spec{"square", []int{6, 6}, Periodic, 2}, ""},
		{"square:6x6:shells=2:periodic", Spec{"square", []int{6, 6}, Periodic, 2}, "square:6x6:periodic:shells=2"},
		{"square:6x6:shells=1", Spec{"square", []int{6, 6}, OpenBoundary, 1}, "square:6x6"},
		{" Square:4X3:Periodic ", Spec{"square", []int{4, 3}, Periodic, 1}, "square:4x3:periodic"},
	}
	for _, tt := range good {
		got, err := ParseSpec(tt.in)
		if err != nil {
			t.Errorf("ParseSpec(%q): %v", tt.in, err)
			continue
		}
		if got.Kind != tt.want.Kind || !slices.Equal(got.Size, tt.want.Size) || got.Boundary != tt.want.Boundary || got.Shells != tt.want.Shells {
			t.Errorf("ParseSpec(%q) = %+v, want %+v", tt.in, got, tt.want)
		}
		out := tt.out
		if out == "" {
			out = tt.in
		}
		if got.String() != out {
			t.Errorf("ParseSpec(%q).String() = %q, want %q", tt.in, got.String(), out)
		}
		again, err := ParseSpec(got.String())
		if err != nil || again.String() != got.String() {
			t.Errorf("round trip of %q: %v %v", got.String(), again, err)
		}
	}

	bad := []struct{ in, want string }{
		{"square:4x0", "square:4x0: size 0 must be positive"},
		{"square:-2x3", "size -2 must be positive"},
		{"square:4", "square needs 2 sizes like 4x4, got 1"},
		{"cubic:3x3", "cubic needs 3 sizes like 3x3x3, got 2"},
		{"chain:3x3", "chain needs 1 size like 12, got 2"},
		{"square:axb", `size "a" is not an integer`},
		{"square:4x", `size "" is not an integer`},
		{"square", "want KIND:SIZE"},
		{"square:", "want KIND:SIZE"},
		{"hexagon:3x3", `unknown lattice kind "hexagon"`},
		{"square:4x4:twisted", `unknown boundary "twisted"`},
		{"square:4x4:periodic:open", "boundary given twice"},
		{"square:4x4:shells=3", "shells=3: want 1 or 2"},
		{"graph:12", "read from a JSON file"},
		{"chain:99999999", "more than"},
	}
	for _, tt := range bad {
		_, err := ParseSpec(tt.in)
		var se *SpecError
		if !errors.As(err, &se) {
			t.Errorf("ParseSpec(%q): error %v, want a *SpecError", tt.in, err)
			continue
		}
		if !strings.Contains(err.Error(), tt.want) {
			t.Errorf("ParseSpec(%q): error %q, want it to contain %q", tt.in, err, tt.want)
		}
	}
}

func TestOpenDispatch(t *testing.T) {
	if _, err := Open("no/such/file.json"); err == nil || errors.As(err, new(*SpecError)) {
		t.Errorf("Open of a missing .json file: %v, want a file error", err)
	}
	if _, err := Open("sqare:4x4"); !errors.As(err, new(*SpecError)) {
		t.Errorf("Open of a misspelt spec: %v, want a *SpecError", err)
	}
	l, err := Open("../testdata/graphs/house.json")
	if err != nil {
		t.Fatal(err)
	}
	if l.Spec.Kind != "graph" || l.NumSites() != 5 {
		t.Errorf("house.json: %v with %d sites", l.Spec, l.NumSites())
	}
}
