package lattice

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"

	"warmfit/lattice/internal/jsonpos"
)

// DecodeLatticeJSON decodes a lattice object, the "lattice" field of a
// model file: either the parsed form of a specification
//
//	{"kind": "square", "size": [3, 3], "boundary": "open", "shells": 1}
//
// ("boundary" defaults to open, "shells" to 1, and a one-axis size may be
// a bare number), or a custom graph
//
//	{"kind": "graph", "sites": [[x, y], ...], "bonds": [[i, j], ...], "shells": 1}
//
// (see FromGraph for its rules). Fields it does not know are ignored.
// name prefixes every error, which then names the field and array
// position, e.g. "model.json: lattice: bonds[3]: site 17 out of range
// [0,12)".
func DecodeLatticeJSON(raw json.RawMessage, name string) (*Lattice, error) {
	l, err := decodeLattice(raw)
	if err != nil {
		return nil, prefixError(name, err)
	}
	return l, nil
}

func prefixError(name string, err error) error {
	if name == "" {
		return err
	}
	return fmt.Errorf("%s: %w", name, err)
}

func decodeLattice(raw json.RawMessage) (*Lattice, error) {
	var fields map[string]json.RawMessage
	if err := json.Unmarshal(raw, &fields); err != nil {
		return nil, fmt.Errorf("want a lattice object {\"kind\": ...}: %v", err)
	}
	if fields == nil {
		return nil, fmt.Errorf("want a lattice object {\"kind\": ...}, got null")
	}
	var kind string
	if err := decodeField(fields, "kind", &kind); err != nil {
		return nil, err
	}
	if kind == "" {
		return nil, fmt.Errorf("kind: missing")
	}
	shells := 1
	if _, ok := fields["shells"]; ok {
		if err := decodeField(fields, "shells", &shells); err != nil {
			return nil, err
		}
		if shells != 1 && shells != 2 {
			return nil, fmt.Errorf("shells: %d, want 1 or 2", shells)
		}
	}
	if kind == "graph" {
		coords, err := decodeSites(fields["sites"])
		if err != nil {
			return nil, err
		}
		bonds, err := decodeBonds(fields["bonds"])
		if err != nil {
			return nil, err
		}
		return FromGraph(coords, bonds, shells)
	}
	if _, ok := unitCells[kind]; !ok {
		return nil, fmt.Errorf("kind: unknown lattice kind %q (known: graph, %s)", kind, joinKinds())
	}
	spec := Spec{Kind: kind, Shells: shells}
	size, err := decodeSize(fields["size"])
	if err != nil {
		return nil, err
	}
	spec.Size = size
	var boundary string
	if err := decodeField(fields, "boundary", &boundary); err != nil {
		return nil, err
	}
	switch boundary {
	case "", "open":
		spec.Boundary = OpenBoundary
	case "periodic":
		spec.Boundary = Periodic
	default:
		return nil, fmt.Errorf("boundary: %q, want \"open\" or \"periodic\"", boundary)
	}
	l, err := Build(spec)
	if err != nil {
		var se *SpecError
		if errors.As(err, &se) {
			// The message already names the specification, which the
			// reader may not have written out as text.
			return nil, fmt.Errorf("%s", se.Error())
		}
		return nil, err
	}
	return l, nil
}

func joinKinds() string {
	var b bytes.Buffer
	for k, name := range kinds {
		if k > 0 {
			b.WriteString(", ")
		}
		b.WriteString(name)
	}
	return b.String()
}

// decodeField decodes fields[key] into v when present, naming key in errors.
func decodeField(fields map[string]json.RawMessage, key string, v any) error {
	raw, ok := fields[key]
	if !ok {
		return nil
	}
	if err := json.Unmarshal(raw, v); err != nil {
		return fmt.Errorf("%s: %s", key, describeJSONValueError(raw, err))
	}
	return nil
}

// describeJSONValueError says what was wrong with a value of the wrong type.
func describeJSONValueError(raw json.RawMessage, err error) string {
	var te *json.UnmarshalTypeError
	if errors.As(err, &te) {
		return fmt.Sprintf("%s is not a valid %s", abbreviate(raw), te.Type)
	}
	return err.Error()
}

func abbreviate(raw json.RawMessage) string {
	s := string(bytes.TrimSpace(raw))
	if len(s) > 40 {
		s = s[:37] + "..."
	}
	return s
}

func decodeSize(raw json.RawMessage) ([]int, error) {
	if raw == nil {
		return nil, fmt.Errorf("size: missing (want unit cells per axis, e.g. [4, 4])")
	}
	var one int
	if json.Unmarshal(raw, &one) == nil {
		return []int{one}, nil
	}
	var items []json.RawMessage
	if err := json.Unmarshal(raw, &items); err != nil {
		return nil, fmt.Errorf("size: %s is not an array of integers", abbreviate(raw))
	}
	size := make([]int, len(items))
	for k, item := range items {
		n, err := decodeInt(item)
		if err != nil {
			return nil, fmt.Errorf("size[%d]: %v", k, err)
		}
		size[k] = n
	}
	return size, nil
}

// decodeInt decodes a JSON number that must be an integer (1e3 and 4.0
// are accepted).
func decodeInt(raw json.RawMessage) (int, error) {
	var num json.Number
	if err := json.Unmarshal(raw, &num); err != nil {
		return 0, fmt.Errorf("%s is not an integer", abbreviate(raw))
	}
	if n, err := strconv.Atoi(num.String()); err == nil {
		return n, nil
	}
	f, err := num.Float64()
	if err != nil || f != math.Trunc(f) || math.Abs(f) > 1<<53 {
		return 0, fmt.Errorf("%s is not an integer", num)
	}
	return int(f), nil
}

func decodeSites(raw json.RawMessage) ([][]float64, error) {
	if raw == nil {
		return nil, fmt.Errorf("sites: missing (want [[x, y], ...])")
	}
	var items []json.RawMessage
	if err := json.Unmarshal(raw, &items); err != nil {
		return nil, fmt.Errorf("sites: %s is not an array of points", abbreviate(raw))
	}
	coords := make([][]float64, len(items))
	for k, item := range items {
		if err := json.Unmarshal(item, &coords[k]); err != nil || coords[k] == nil {
			return nil, fmt.Errorf("sites[%d]: %s is not a point [x, y] or [x, y, z]", k, abbreviate(item))
		}
	}
	return coords, nil
}

func decodeBonds(raw json.RawMessage) ([]Bond, error) {
	if raw == nil {
		return nil, fmt.Errorf("bonds: missing (want [[i, j], ...])")
	}
	var items []json.RawMessage
	if err := json.Unmarshal(raw, &items); err != nil {
		return nil, fmt.Errorf("bonds: %s is not an array of site pairs", abbreviate(raw))
	}
	bonds := make([]Bond, len(items))
	for k, item := range items {
		var pair []json.RawMessage
		if err := json.Unmarshal(item, &pair); err != nil || len(pair) != 2 {
			return nil, fmt.Errorf("bonds[%d]: %s is not a pair of sites [i, j]", k, abbreviate(item))
		}
		var ends [2]int
		for e := range pair {
			n, err := decodeInt(pair[e])
			if err != nil {
				return nil, fmt.Errorf("bonds[%d]: %v", k, err)
			}
			ends[e] = n
		}
		bonds[k] = Bond{ends[0], ends[1]}
	}
	return bonds, nil
}

// ReadFile reads a lattice from a JSON file holding a lattice object (see
// DecodeLatticeJSON) or a model file with a "lattice" field. Errors name
// the file, and the line and column of a syntax error.
func ReadFile(path string) (*Lattice, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	data, err := ReadAllLimited(f, path)
	if err != nil {
		return nil, err
	}
	var top map[string]json.RawMessage
	if err := json.Unmarshal(data, &top); err != nil {
		return nil, fmt.Errorf("%s: %s", path, describeSyntaxError(data, err))
	}
	if _, ok := top["kind"]; ok {
		return DecodeLatticeJSON(data, path)
	}
	if raw, ok := top["lattice"]; ok {
		return DecodeLatticeJSON(raw, path+": lattice")
	}
	return nil, fmt.Errorf("%s: neither a lattice object (no \"kind\" field) nor a model file (no \"lattice\" field)", path)
}

// describeSyntaxError adds the line and column to a JSON syntax error.
func describeSyntaxError(data []byte, err error) string {
	var se *json.SyntaxError
	if errors.As(err, &se) {
		line, col := jsonpos.LineCol(data, int(se.Offset)-1) // Offset counts the culprit too
		return fmt.Sprintf("line %d, column %d: %v", line, col, err)
	}
	var te *json.UnmarshalTypeError
	if errors.As(err, &te) {
		return fmt.Sprintf("want a JSON object, got %s", te.Value)
	}
	return err.Error()
}

// latticeSpecJSON is the parsed form of a specification.
type latticeSpecJSON struct {
	Kind     string `json:"kind"`
	Size     []int  `json:"size"`
	Boundary string `json:"boundary"`
	Shells   int    `json:"shells,omitempty"`
}

// latticeGraphJSON is the custom-graph form.
type latticeGraphJSON struct {
	Kind   string      `json:"kind"`
	Sites  [][]float64 `json:"sites"`
	Bonds  [][2]int    `json:"bonds"`
	Shells int         `json:"shells,omitempty"`
}

// LatticeJSON encodes the lattice object that DecodeLatticeJSON reads
// back to an equal lattice: the parsed specification for a built-in
// kind, the sites and NN bonds for a custom graph. "shells" is written
// only when it is 2.
func (l *Lattice) LatticeJSON() ([]byte, error) {
	shells := 0
	if l.shells() == 2 {
		shells = 2
	}
	if l.Spec.Kind == "graph" {
		g := latticeGraphJSON{Kind: "graph", Sites: l.Coords, Bonds: bondPairs(l.NN), Shells: shells}
		return json.Marshal(g)
	}
	return json.Marshal(latticeSpecJSON{
		Kind: l.Spec.Kind, Size: l.Spec.Size, Boundary: l.Spec.Boundary.String(), Shells: shells,
	})
}

func bondPairs(bonds []Bond) [][2]int {
	out := make([][2]int, len(bonds))
	for k, b := range bonds {
		out[k] = [2]int{b.I, b.J}
	}
	return out
}

// WriteJSON writes the lattice object together with its geometry, one
// site or bond per line: the fields of LatticeJSON, then "num_sites",
// "sites" (coordinates), "bonds" (NN) and "nnn_bonds". DecodeLatticeJSON
// reads it back (for a built-in kind the geometry fields are ignored).
func (l *Lattice) WriteJSON(w io.Writer) error {
	var b bytes.Buffer
	b.WriteString("{\n")
	head, err := l.LatticeJSON()
	if err != nil {
		return err
	}
	var fields map[string]json.RawMessage
	if err := json.Unmarshal(head, &fields); err != nil {
		return err
	}
	for _, key := range []string{"kind", "size", "boundary", "shells"} {
		if v, ok := fields[key]; ok {
			fmt.Fprintf(&b, "  %q: %s,\n", key, v)
		}
	}
	fmt.Fprintf(&b, "  \"num_sites\": %d,\n", l.NumSites())
	b.WriteString("  \"sites\": [")
	for i, p := range l.Coords {
		if i > 0 {
			b.WriteByte(',')
		}
		b.WriteString("\n    [")
		for d, v := range p {
			if d > 0 {
				b.WriteString(", ")
			}
			b.Write(strconv.AppendFloat(nil, v, 'g', -1, 64))
		}
		b.WriteByte(']')
	}
	b.WriteString("\n  ],\n")
	writeBondList(&b, "bonds", l.NN, true)
	writeBondList(&b, "nnn_bonds", l.NNN, false)
	b.WriteString("}\n")
	_, err = w.Write(b.Bytes())
	return err
}

func writeBondList(b *bytes.Buffer, key string, bonds []Bond, more bool) {
	fmt.Fprintf(b, "  %q: [", key)
	for k, bd := range bonds {
		if k > 0 {
			b.WriteByte(',')
		}
		fmt.Fprintf(b, "\n    [%d, %d]", bd.I, bd.J)
	}
	if len(bonds) > 0 {
		b.WriteString("\n  ")
	}
	b.WriteByte(']')
	if more {
		b.WriteByte(',')
	}
	b.WriteByte('\n')
}
