package lattice

import (
	"bytes"
	"encoding/json"
	"fmt"
	"unicode/utf8"
)

// The model reader checks a whole document with json.Valid first and then
// walks it with the small scanner below, which can assume valid JSON.
// Walking by hand keeps the byte offset of every value (for line:column
// in errors) and is several times faster than encoding/json's token
// stream on files with 10^5 terms.

// jsonMember is one member of a JSON object, or one element of an array
// (Key empty), with the byte offset of its value in the whole document.
type jsonMember struct {
	Key   string
	Value json.RawMessage
	Off   int
}

// objectMembers splits the JSON object data, found at offset base of the
// document, into its members in file order. data must be valid JSON.
func objectMembers(data []byte, base int) ([]jsonMember, error) {
	return splitContainer(data, base, '{', "object")
}

// arrayElements splits the JSON array data, found at offset base of the
// document, into its elements. data must be valid JSON.
func arrayElements(data []byte, base int) ([]jsonMember, error) {
	return splitContainer(data, base, '[', "array")
}

func splitContainer(data []byte, base int, open byte, kind string) ([]jsonMember, error) {
	i := skipSpace(data, 0)
	if i >= len(data) || data[i] != open {
		return nil, fmt.Errorf("want a JSON %s, got %s", kind, jsonKind(data))
	}
	out := make([]jsonMember, 0, 4)
	i = skipSpace(data, i+1)
	if i < len(data) && (data[i] == '}' || data[i] == ']') {
		return out, nil
	}
	for i < len(data) {
		var m jsonMember
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
			i = skipSpace(data, end)
			i = skipSpace(data, i+1) // the ':'
		}
		end := skipValue(data, i)
		m.Value, m.Off = json.RawMessage(data[i:end]), base+i
		out = append(out, m)
		i = skipSpace(data, end)
		if i >= len(data) || data[i] != ',' {
			break
		}
		i = skipSpace(data, i+1)
	}
	return out, nil
}

// internKey returns the member names of model files without allocating.
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

func skipSpace(data []byte, i int) int {
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

// jsonKind names the kind of the JSON value raw, for error messages.
func jsonKind(raw []byte) string {
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

func isNull(raw []byte) bool { return jsonKind(raw) == "null" }

// lineCol converts a byte offset in doc to a 1-based line and a 1-based
// column counted in characters.
func lineCol(doc []byte, off int) (line, col int) {
	off = min(max(off, 0), len(doc))
	line = 1 + bytes.Count(doc[:off], []byte{'\n'})
	start := bytes.LastIndexByte(doc[:off], '\n') + 1
	return line, 1 + utf8.RuneCount(doc[start:off])
}
