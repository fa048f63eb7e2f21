package model

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"

	"warmfit/lattice"
	"warmfit/lattice/internal/jsonpos"
)

// Write writes m as JSON in the format Parse reads: members in a
// fixed order (lattice, beta, units, terms, fit), one term per line, every
// number in the shortest form that reads back to the same float64. It
// refuses (with an error, before writing anything) a model that fails
// Validate, so no NaN or infinity is ever written.
func Write(w io.Writer, m *Model) error {
	if err := m.Validate(); err != nil {
		return fmt.Errorf("not writing an invalid model: %w", err)
	}
	lat, err := m.Lattice.LatticeJSON()
	if err != nil {
		return fmt.Errorf("model lattice: %w", err)
	}
	var b bytes.Buffer
	b.WriteString("{\n  \"lattice\": ")
	if err := writeLatticeValue(&b, lat); err != nil {
		return fmt.Errorf("model lattice: %w", err)
	}
	if m.Beta > 0 {
		b.WriteString(",\n  \"beta\": ")
		b.WriteString(formatNumber(m.Beta))
	}
	if m.Units != "" {
		b.WriteString(",\n  \"units\": ")
		b.WriteString(quote(m.Units))
	}
	b.WriteString(",\n  \"terms\": [\n")
	for i, t := range m.Terms {
		b.WriteString("    ")
		writeTerm(&b, t)
		if i < len(m.Terms)-1 {
			b.WriteByte(',')
		}
		b.WriteByte('\n')
	}
	b.WriteString("  ]")
	if len(m.Fit) > 0 {
		b.WriteString(",\n  \"fit\": ")
		if err := json.Indent(&b, m.Fit, "  ", "  "); err != nil {
			return fmt.Errorf("model fit report: %w", err)
		}
	}
	b.WriteString("\n}\n")
	_, err = w.Write(b.Bytes())
	return err
}

func writeTerm(b *bytes.Buffer, t lattice.Term) {
	var num [32]byte
	b.WriteString(`{"pauli": "`)
	b.WriteString(t.Pauli) // validated: letters X, Y, Z only
	b.WriteString(`", "sites": [`)
	for i, s := range t.Sites {
		if i > 0 {
			b.WriteString(", ")
		}
		b.Write(strconv.AppendInt(num[:0], int64(s), 10))
	}
	b.WriteString(`], "coeff": `)
	b.Write(appendNumber(num[:0], t.Coeff))
	if t.Group != "" {
		b.WriteString(`, "group": `)
		b.WriteString(quote(t.Group))
	}
	if t.HasStderr {
		b.WriteString(`, "stderr": `)
		b.Write(appendNumber(num[:0], t.Stderr))
	}
	if t.Significant != nil {
		b.WriteString(`, "significant": `)
		b.WriteString(strconv.FormatBool(*t.Significant))
	}
	b.WriteByte('}')
}

// formatNumber writes a finite float64 the way encoding/json does: the
// shortest decimal that parses back to the same value, in exponent form
// only below 1e-6 or from 1e21 on. Callers have checked finiteness.
func formatNumber(v float64) string {
	return string(appendNumber(make([]byte, 0, 24), v))
}

func appendNumber(b []byte, v float64) []byte {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		panic(fmt.Sprintf("lattice: formatting the non-finite number %v", v))
	}
	format := byte('f')
	if a := math.Abs(v); a != 0 && (a < 1e-6 || a >= 1e21) {
		format = 'e'
	}
	b = strconv.AppendFloat(b, v, format, -1, 64)
	if format == 'e' {
		// 1e-07 -> 1e-7, as encoding/json writes it.
		if n := len(b); n >= 4 && b[n-4] == 'e' && b[n-3] == '-' && b[n-2] == '0' {
			b[n-2] = b[n-1]
			b = b[:n-1]
		}
	}
	return b
}

func quote(s string) string {
	out, _ := json.Marshal(s)
	return string(out)
}

// maxInlineWidth is how long a JSON value may get on one line before it
// is broken up.
const maxInlineWidth = 96

// writeLatticeValue writes the lattice object on one line when it is
// short (a specification), otherwise one member per line with long
// arrays (the sites and bonds of a custom graph) wrapped.
func writeLatticeValue(b *bytes.Buffer, raw []byte) error {
	var compact bytes.Buffer
	if err := json.Compact(&compact, raw); err != nil {
		return err
	}
	inline := spaced(compact.Bytes())
	if len(inline) <= maxInlineWidth || jsonpos.Kind(inline) != "object" {
		b.Write(inline)
		return nil
	}
	members, err := jsonpos.ObjectMembers(compact.Bytes(), 0)
	if err != nil {
		return err
	}
	b.WriteString("{\n")
	for i, f := range members {
		b.WriteString("    ")
		b.WriteString(quote(f.Key))
		b.WriteString(": ")
		v := spaced(f.Value)
		if len(v) > maxInlineWidth && jsonpos.Kind(v) == "array" {
			elems, err := jsonpos.ArrayElements(f.Value, 0)
			if err != nil {
				return err
			}
			writeWrappedArray(b, elems, "      ")
		} else {
			b.Write(v)
		}
		if i < len(members)-1 {
			b.WriteByte(',')
		}
		b.WriteByte('\n')
	}
	b.WriteString("  }")
	return nil
}

// writeWrappedArray writes elements several to a line, each line starting
// with indent.
func writeWrappedArray(b *bytes.Buffer, elems []jsonpos.Member, indent string) {
	b.WriteString("[\n")
	width := 0
	for i, e := range elems {
		v := spaced(e.Value)
		if width == 0 {
			b.WriteString(indent)
			width = len(indent)
		} else if width+len(v)+2 > maxInlineWidth {
			b.WriteString("\n")
			b.WriteString(indent)
			width = len(indent)
		} else {
			b.WriteByte(' ')
			width++
		}
		b.Write(v)
		width += len(v)
		if i < len(elems)-1 {
			b.WriteByte(',')
			width++
		}
	}
	b.WriteString("\n" + indent[:len(indent)-2] + "]")
}

// spaced returns compact JSON with a space after every ',' and ':' that
// is not inside a string, the way people write short JSON by hand.
func spaced(compact []byte) []byte {
	out := make([]byte, 0, len(compact)+len(compact)/4)
	inString, escaped := false, false
	for _, c := range compact {
		out = append(out, c)
		switch {
		case escaped:
			escaped = false
		case inString && c == '\\':
			escaped = true
		case c == '"':
			inString = !inString
		case !inString && (c == ',' || c == ':'):
			out = append(out, ' ')
		}
	}
	return out
}
