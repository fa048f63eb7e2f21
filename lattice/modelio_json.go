package lattice

import (
	"bytes"
	"encoding/json"
	"fmt"
	"unicode/utf8"
)

// jsonMember is one member of a JSON object, or one element of an array
// (Key empty), with the byte offset of its value in the whole document so
// that errors can point at a line and column.
type jsonMember struct {
	Key   string
	Value json.RawMessage
	Off   int
}

// objectMembers splits the JSON object data, found at offset base of the
// document, into its members in file order. data must be valid JSON.
func objectMembers(data []byte, base int) ([]jsonMember, error) {
	if k := jsonKind(data); k != "object" {
		return nil, fmt.Errorf("want a JSON object, got %s", k)
	}
	dec := json.NewDecoder(bytes.NewReader(data))
	if _, err := dec.Token(); err != nil { // '{'
		return nil, err
	}
	var out []jsonMember
	for dec.More() {
		tok, err := dec.Token()
		if err != nil {
			return nil, err
		}
		key, _ := tok.(string)
		off := int(dec.InputOffset())
		var raw json.RawMessage
		if err := dec.Decode(&raw); err != nil {
			return nil, err
		}
		out = append(out, jsonMember{Key: key, Value: raw, Off: base + skipSeparators(data, off)})
	}
	return out, nil
}

// arrayElements splits the JSON array data, found at offset base of the
// document, into its elements. data must be valid JSON.
func arrayElements(data []byte, base int) ([]jsonMember, error) {
	if k := jsonKind(data); k != "array" {
		return nil, fmt.Errorf("want a JSON array, got %s", k)
	}
	dec := json.NewDecoder(bytes.NewReader(data))
	if _, err := dec.Token(); err != nil { // '['
		return nil, err
	}
	var out []jsonMember
	for dec.More() {
		off := int(dec.InputOffset())
		var raw json.RawMessage
		if err := dec.Decode(&raw); err != nil {
			return nil, err
		}
		out = append(out, jsonMember{Value: raw, Off: base + skipSeparators(data, off)})
	}
	return out, nil
}

// skipSeparators moves off past white space and the ',' or ':' that the
// decoder leaves in front of the next value.
func skipSeparators(data []byte, off int) int {
	for off < len(data) {
		switch data[off] {
		case ' ', '\t', '\n', '\r', ',', ':':
			off++
		default:
			return off
		}
	}
	return off
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
	if off > len(doc) {
		off = len(doc)
	}
	if off < 0 {
		off = 0
	}
	line = 1 + bytes.Count(doc[:off], []byte{'\n'})
	start := bytes.LastIndexByte(doc[:off], '\n') + 1
	return line, 1 + utf8.RuneCount(doc[start:off])
}
