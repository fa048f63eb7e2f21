// Package jsonpos walks valid JSON documents by hand, keeping the byte
// offset of every value, and converts offsets to the line and column a
// user sees in an editor. The lattice and model readers use it so that
// every error names file:line:column.
package jsonpos

import (
	"bytes"
	"encoding/json"
	"fmt"
	"unicode/utf8"
)

// Readers check a whole document with json.Valid first and then walk it
// with the small scanner below, which can assume valid JSON.
// Walking by hand keeps the byte offset of every value (for line:column
// in errors) and is several times faster than encoding/json's token
// stream on files with 10^5 terms.

// Member is one member of a JSON object, or one element of an array
// (Key empty), with the byte offset of its value in the whole document.
type Member struct {
	Key   string
	Value json.RawMessage
	Off   int
}

// ObjectMembers splits the JSON object data, found at offset base of the
// document, into its members in file order. data must be valid JSON.
func ObjectMembers(data []byte, base int) ([]Member, error) {
	return splitContainer(data, base, '{', "object")
}

// ArrayElements splits the JSON array data, found at offset base of the
// document, into its elements. data must be valid JSON.
func ArrayElements(data []byte, base int) ([]Member, error) {
	return splitContainer(data, base, '[', "array")
}

func splitContainer(data []byte, base int, open byte, kind string) ([]Member, error) {
	i := SkipSpace(data, 0)
	if i >= len(data) || data[i] != open {
		return nil, fmt.Errorf("want a JSON %s, got %s", kind, Kind(data))
	}
	out := make([]Member, 0, 4)
	i = SkipSpace(data, i+1)
	if i < len(data) && (data[i] == '}' || data[i] == ']') {
		return out, nil
	}
	for i < len(data) {
		var m Member
		if open == '{' {
			end := skipString(data, i)
			key := data[i:end]
			if bytes.IndexByte(key, '\\') >= 0 {
				if err := json.Unmarshal(key, &m.Key); err != nil {
					return nil, err
				}
			} else {
				m.Key = internKey(key[1 : len(key)-1])
			}
			i = SkipSpace(data, end)
			i = SkipSpace(data, i+1) // the ':'
		}
		end := skipValue(data, i)
		m.Value, m.Off = json.RawMessage(data[i:end]), base+i
		out = append(out, m)
		i = SkipSpace(data, end)
		if i >= len(data) || data[i] != ',' {
			break
		}
		i = SkipSpace(data, i+1)
	}
	return out, nil
}

// internKey returns the common member names of model files without
// allocating.
func internKey(b []byte) string {
	switch string(b) {
	case "pauli":
		return "pauli"
	case "sites":
		return "sites"
	case "coeff":
		return "coeff"
	case "group":
		return "group"
	case "stderr":
		return "stderr"
	}
	return string(b)
}

// SkipSpace returns the offset of the first non-space byte at or after i.
func SkipSpace(data []byte, i int) int {
	for i < len(data) {
		switch data[i] {
		case ' ', '\t', '\n', '\r':
			i++
		default:
			return i
		}
	}
	return i
}

// skipString returns the offset just past the string starting at i.
func skipString(data []byte, i int) int {
	for j := i + 1; j < len(data); j++ {
		switch data[j] {
		case '\\':
			j++
		case '"':
			return j + 1
		}
	}
	return len(data)
}

// skipValue returns the offset just past the value starting at i.
func skipValue(data []byte, i int) int {
	if i >= len(data) {
		return i
	}
	switch data[i] {
	case '"':
		return skipString(data, i)
	case '{', '[':
		depth := 0
		for j := i; j < len(data); j++ {
			switch data[j] {
			case '"':
				j = skipString(data, j) - 1
			case '{', '[':
				depth++
			case '}', ']':
				depth--
				if depth == 0 {
					return j + 1
				}
			}
		}
		return len(data)
	default: // number, true, false, null
		j := i
		for j < len(data) {
			switch data[j] {
			case ',', '}', ']', ' ', '\t', '\n', '\r':
				return j
			}
			j++
		}
		return j
	}
}

// Kind names the kind of the JSON value raw, for error messages.
func Kind(raw []byte) string {
	raw = bytes.TrimLeft(raw, " \t\r\n")
	if len(raw) == 0 {
		return "nothing"
	}
	switch raw[0] {
	case '{':
		return "object"
	case '[':
		return "array"
	case '"':
		return "string"
	case 't', 'f':
		return "boolean"
	case 'n':
		return "null"
	default:
		return "number"
	}
}

// IsNull reports whether raw is the JSON null.
func IsNull(raw []byte) bool { return Kind(raw) == "null" }

// LineCol converts a byte offset in doc to a 1-based line and a 1-based
// column counted in characters (runes), as editors show them. Offsets
// outside doc are clamped to it.
func LineCol(doc []byte, off int) (line, col int) {
	off = min(max(off, 0), len(doc))
	line = 1 + bytes.Count(doc[:off], []byte{'\n'})
	start := bytes.LastIndexByte(doc[:off], '\n') + 1
	return line, 1 + utf8.RuneCount(doc[start:off])
}
