package lattice

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

const graphDir = "../testdata/graphs"

func TestReadGraphFiles(t *testing.T) {
	house, err := ReadFile(filepath.Join(graphDir, "house.json"))
	if err != nil {
		t.Fatal(err)
	}
	// Pairs at graph distance 2 in the house (square 0-1-2-3 with roof
	// 4 on 2, 3), by hand: 0-2, 1-3 across the square, 0-4 via 3, 1-4 via 2.
	if want := []Bond{{0, 2}, {0, 4}, {1, 3}, {1, 4}}; !slices.Equal(house.NNN, want) {
		t.Errorf("house NNN %v, want %v", house.NNN, want)
	}
	if len(house.NN) != 6 || house.Dim() != 2 || len(house.Components()) != 1 {
		t.Errorf("house: %d bonds, dim %d, %d components", len(house.NN), house.Dim(), len(house.Components()))
	}

	tri, err := ReadFile(filepath.Join(graphDir, "two_triangles.json"))
	if err != nil {
		t.Fatal(err)
	}
	if got := tri.Components(); !slices.EqualFunc(got, [][]int{{0, 1, 2}, {3, 4, 5}}, slices.Equal) {
		t.Errorf("two triangles: components %v", got)
	}

	// The cube graph with two shells: every vertex has 3 neighbours and
	// 3 at graph distance 2 (the face diagonals; hypercube Q3).
	cube, err := ReadFile(filepath.Join(graphDir, "cube.json"))
	if err != nil {
		t.Fatal(err)
	}
	if cube.Dim() != 3 || cube.Spec.Shells != 2 || len(cube.NNN) != 12 || len(cube.Neighbors(0)) != 6 {
		t.Errorf("cube: dim %d, shells %d, %d NNN, degree %d", cube.Dim(), cube.Spec.Shells, len(cube.NNN), len(cube.Neighbors(0)))
	}

	m, err := ReadFile(filepath.Join(graphDir, "model_with_lattice.json"))
	if err != nil {
		t.Fatal(err)
	}
	if m.Spec.String() != "square:3x2" {
		t.Errorf("model file lattice %v", m.Spec)
	}
}

func TestGraphFileErrors(t *testing.T) {
	tests := []struct{ file, want string }{
		{"bad_bond_out_of_range.json", "bad_bond_out_of_range.json: bonds[3]: site 17 out of range [0,12)"},
		{"bad_self_bond.json", "bonds[1]: site 2 bonded to itself"},
		{"bad_duplicate_bond.json", "bonds[2]: sites 0 and 1 are already bonded by bonds[0]"},
		{"bad_mixed_dimension.json", "sites[2]: 3 coordinates, but sites[0] has 2"},
		{"bad_one_dimension.json", "sites[0]: 1 coordinates, want 2 or 3"},
		{"bad_bond_triple.json", "bonds[1]: [0, 1, 2] is not a pair of sites"},
		{"bad_fractional_index.json", "bonds[0]: 1.5 is not an integer"},
		{"bad_missing_bonds.json", "bonds: missing"},
		{"bad_syntax.json", "bad_syntax.json: line 3, column 20"},
		{"bad_shells.json", "shells: 3, want 1 or 2"},
		{"bad_kind.json", `kind: unknown lattice kind "hexagon"`},
		{"bad_empty_sites.json", "sites: no sites"},
		{"bad_not_object.json", "want a JSON object"},
		{"bad_string_coordinate.json", `sites[1]: ["a", 1] is not a point`},
		{"bad_periodic_size.json", "periodic size 2x5 is too small"},
		{"bad_size_zero.json", "size 0 must be positive"},
		{"bad_boundary.json", `boundary: "twisted"`},
		{"bad_no_kind.json", "neither a lattice object"},
	}
	for _, tt := range tests {
		path := filepath.Join(graphDir, tt.file)
		_, err := Open(path)
		if err == nil {
			t.Errorf("%s: no error, want %q", tt.file, tt.want)
			continue
		}
		if !strings.Contains(err.Error(), tt.want) || !strings.HasPrefix(err.Error(), path) {
			t.Errorf("%s: error %q, want it to start with the path and contain %q", tt.file, err, tt.want)
		}
		if errors.As(err, new(*SpecError)) {
			t.Errorf("%s: a file error must not be a *SpecError: %v", tt.file, err)
		}
	}
}

func TestFromGraphErrors(t *testing.T) {
	pts := [][]float64{{0, 0}, {1, 0}, {2, 0}}
	tests := []struct {
		coords [][]float64
		bonds  []Bond
		shells int
		want   string
	}{
		{pts, []Bond{{0, 1}, {1, 3}}, 1, "bonds[1]: site 3 out of range [0,3)"},
		{pts, []Bond{{-1, 1}}, 1, "bonds[0]: site -1 out of range"},
		{pts, []Bond{{0, 1}, {1, 0}}, 1, "bonds[1]: sites 0 and 1 are already bonded by bonds[0]"},
		{[][]float64{{0, 0}, {math.NaN(), 0}}, nil, 1, "sites[1]: coordinate 0 is not finite"},
		{[][]float64{{0, 0}, {0, math.Inf(1)}}, nil, 1, "sites[1]: coordinate 1 is not finite"},
		{[][]float64{{0, 0, 0, 0}}, nil, 1, "sites[0]: 4 coordinates"},
		{nil, nil, 1, "no sites"},
		{pts, nil, 5, "shells 5"},
	}
	for _, tt := range tests {
		_, err := FromGraph(tt.coords, tt.bonds, tt.shells)
		if err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("FromGraph(%v, %v): error %v, want %q", tt.coords, tt.bonds, err, tt.want)
		}
	}
	// Bonds are oriented I < J; the caller's coordinates are copied.
	l, err := FromGraph(pts, []Bond{{1, 0}, {2, 1}}, 0)
	if err != nil {
		t.Fatal(err)
	}
	pts[0][0] = 9
	if !slices.Equal(l.NN, []Bond{{0, 1}, {1, 2}}) || l.Coords[0][0] != 0 || l.Spec.Shells != 1 {
		t.Errorf("FromGraph: NN %v, coords %v, shells %d", l.NN, l.Coords, l.Spec.Shells)
	}
}

func TestLatticeJSONRoundTrip(t *testing.T) {
	var lats []*Lattice
	for _, s := range []string{"chain:5", "ladder:4:periodic", "square:3x2", "triangular:4x4:periodic:shells=2",
		"honeycomb:2x3", "kagome:2x2:periodic", "cubic:2x3x3"} {
		lats = append(lats, mustBuild(t, s))
	}
	for _, f := range []string{"house.json", "cube.json", "two_triangles.json"} {
		l, err := ReadFile(filepath.Join(graphDir, f))
		if err != nil {
			t.Fatal(err)
		}
		lats = append(lats, l)
	}
	for _, l := range lats {
		raw, err := l.LatticeJSON()
		if err != nil {
			t.Fatalf("%v: %v", l.Spec, err)
		}
		back, err := DecodeLatticeJSON(raw, "model.json: lattice")
		if err != nil {
			t.Fatalf("%v: decoding %s: %v", l.Spec, raw, err)
		}
		sameLattice(t, l, back, string(raw))

		// The detailed form is a lattice object too.
		var buf bytes.Buffer
		if err := l.WriteJSON(&buf); err != nil {
			t.Fatal(err)
		}
		if !json.Valid(buf.Bytes()) {
			t.Fatalf("%v: WriteJSON is not valid JSON:\n%s", l.Spec, buf.String())
		}
		again, err := DecodeLatticeJSON(buf.Bytes(), "detailed")
		if err != nil {
			t.Fatalf("%v: decoding WriteJSON output: %v", l.Spec, err)
		}
		sameLattice(t, l, again, "WriteJSON")
	}
	// The parsed form of formats.md, with a bare one-axis size.
	l, err := DecodeLatticeJSON([]byte(`{"kind": "chain", "size": 6, "shells": 2}`), "m.json: lattice")
	if err != nil || l.Spec.String() != "chain:6:shells=2" {
		t.Errorf("bare size: %v, %v", l, err)
	}
}

func sameLattice(t *testing.T, a, b *Lattice, what string) {
	t.Helper()
	if a.Spec.String() != b.Spec.String() || !slices.Equal(a.NN, b.NN) || !slices.Equal(a.NNN, b.NNN) ||
		!slices.EqualFunc(a.Coords, b.Coords, slices.Equal) {
		t.Errorf("%v does not round-trip through %s: got %v", a.Spec, what, b.Spec)
	}
}

func TestDecodeLatticeJSONErrors(t *testing.T) {
	tests := []struct{ in, want string }{
		{`{"kind": "square", "size": [4, 0]}`, "m.json: lattice: square:4x0: size 0 must be positive"},
		{`{"kind": "square", "size": "4x4"}`, `size: "4x4" is not an array of integers`},
		{`{"kind": "square", "size": [4, 2.5]}`, "size[1]: 2.5 is not an integer"},
		{`{"kind": "square"}`, "size: missing"},
		{`{"kind": 3}`, "kind: 3 is not a valid string"},
		{`{"size": [3]}`, "kind: missing"},
		{`{"kind": "square", "size": [3, 3], "shells": 2.5}`, "shells: 2.5 is not a valid int"},
		{`{"kind": "graph", "sites": [[0, 0]], "bonds": [[0, 0]]}`, "bonds[0]: site 0 bonded to itself"},
		{`null`, "got null"},
	}
	for _, tt := range tests {
		_, err := DecodeLatticeJSON([]byte(tt.in), "m.json: lattice")
		if err == nil || !strings.Contains(err.Error(), tt.want) || !strings.HasPrefix(err.Error(), "m.json: lattice: ") {
			t.Errorf("DecodeLatticeJSON(%s): error %v, want %q", tt.in, err, tt.want)
		}
	}
}
