package model

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"

	"warmfit/lattice"
	"warmfit/lattice/internal/jsonpos"
)

// ReadFile reads and validates the model file at path (JSON, see
// Parse).
func ReadFile(path string) (*Model, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return Parse(f, path)
}

// Parse reads a model in the JSON format of formats.md from r; name
// (usually the file name) prefixes every error, together with the line
// and column and the JSON path of the offending value.
//
// Terms may be given in any site order: they are put in canonical form
// (sites increasing, letters permuted along, so "XZ" on [3, 1] becomes
// "ZX" on [1, 3]); two terms equal after that are an error. A missing
// "coeff" means 0 (useful in fitting templates); "beta", "group",
// "stderr", "units" and "fit" are optional, and unknown fields are
// ignored. The lattice may also be given as a specification string such
// as "square:3x3". Parse makes the checks of Validate as it goes
// (with positions), so the result passes Validate.
func Parse(r io.Reader, name string) (*Model, error) {
	doc, err := lattice.ReadAllLimited(r, name)
	if err != nil {
		return nil, err
	}
	p := &modelParser{doc: doc, name: name}
	return p.parse()
}

type modelParser struct {
	doc  []byte
	name string
}

// errAt builds a Error for the value at byte offset off.
func (p *modelParser) errAt(off int, path string, err error) *Error {
	line, col := jsonpos.LineCol(p.doc, off)
	return &Error{File: p.name, Line: line, Col: col, Path: path, Err: err}
}

func (p *modelParser) parse() (*Model, error) {
	if !json.Valid(p.doc) {
		if what, line := csvLooking(p.doc); what != "" {
			return nil, &Error{File: p.name, Line: line, Col: 1, Err: fmt.Errorf("this looks like %s, not a model file (JSON): were the model and the data swapped?", what)}
		}
		var v any
		err := json.Unmarshal(p.doc, &v)
		var se *json.SyntaxError
		if errors.As(err, &se) {
			off := int(se.Offset) - 1 // Offset counts the bytes read, the culprit included
			return nil, p.errAt(off, "", fmt.Errorf("invalid JSON: %v", se))
		}
		return nil, &Error{File: p.name, Err: fmt.Errorf("invalid JSON: %v", err)}
	}
	start := jsonpos.SkipSpace(p.doc, 0)
	members, err := jsonpos.ObjectMembers(p.doc, 0)
	if err != nil {
		return nil, p.errAt(start, "", fmt.Errorf("a model file must hold one JSON object: %v", err))
	}
	fields := map[string]jsonpos.Member{}
	for _, f := range members {
		switch f.Key {
		case "lattice", "beta", "terms", "units", "fit":
			if prev, dup := fields[f.Key]; dup {
				pl, _ := jsonpos.LineCol(p.doc, prev.Off)
				return nil, p.errAt(f.Off, f.Key, fmt.Errorf("given twice (first on line %d)", pl))
			}
			fields[f.Key] = f
		}
	}

	m := &Model{}
	lat, ok := fields["lattice"]
	if !ok || jsonpos.IsNull(lat.Value) {
		return nil, p.errAt(start, "lattice", fmt.Errorf("missing: the model must say which lattice it lives on"))
	}
	if m.Lattice, err = p.lattice(lat); err != nil {
		return nil, err
	}
	if f, ok := fields["beta"]; ok && !jsonpos.IsNull(f.Value) {
		b, err := parseNumber(f.Value)
		if err == nil && !(b > 0) {
			err = fmt.Errorf("must be > 0, got %v", b)
		}
		if err != nil {
			return nil, p.errAt(f.Off, "beta", err)
		}
		m.Beta = b
	}
	if f, ok := fields["units"]; ok && !jsonpos.IsNull(f.Value) {
		if err := json.Unmarshal(f.Value, &m.Units); err != nil {
			return nil, p.errAt(f.Off, "units", fmt.Errorf("must be a string, got %s", jsonpos.Kind(f.Value)))
		}
	}
	if f, ok := fields["fit"]; ok && !jsonpos.IsNull(f.Value) {
		if k := jsonpos.Kind(f.Value); k != "object" {
			return nil, p.errAt(f.Off, "fit", fmt.Errorf("must be a JSON object, got %s", k))
		}
		var buf bytes.Buffer
		if err := json.Compact(&buf, f.Value); err != nil {
			return nil, p.errAt(f.Off, "fit", err)
		}
		m.Fit = json.RawMessage(buf.Bytes())
	}
	tf, ok := fields["terms"]
	if !ok || jsonpos.IsNull(tf.Value) {
		return nil, p.errAt(start, "terms", fmt.Errorf("missing: the model must list its terms"))
	}
	if m.Terms, err = p.terms(tf, m.Lattice); err != nil {
		return nil, err
	}
	return m, nil
}

func (p *modelParser) lattice(f jsonpos.Member) (*lattice.Lattice, error) {
	if jsonpos.Kind(f.Value) == "string" {
		var spec string
		_ = json.Unmarshal(f.Value, &spec)
		s, err := lattice.ParseSpec(spec)
		if err != nil {
			return nil, p.errAt(f.Off, "lattice", err)
		}
		l, err := lattice.Build(s)
		if err != nil {
			return nil, p.errAt(f.Off, "lattice", err)
		}
		return l, nil
	}
	if k := jsonpos.Kind(f.Value); k != "object" {
		return nil, p.errAt(f.Off, "lattice", fmt.Errorf("must be an object such as {\"kind\": \"chain\", \"size\": [8]} or a specification string, got %s", k))
	}
	l, err := lattice.DecodeLatticeJSON(f.Value, "") // the Error adds the file name
	if err != nil {
		return nil, p.errAt(f.Off, "lattice", err)
	}
	return l, nil
}

func (p *modelParser) terms(f jsonpos.Member, l *lattice.Lattice) ([]lattice.Term, error) {
	elems, err := jsonpos.ArrayElements(f.Value, f.Off)
	if err != nil {
		return nil, p.errAt(f.Off, "terms", err)
	}
	if len(elems) == 0 {
		return nil, p.errAt(f.Off, "terms", fmt.Errorf("the model has no terms"))
	}
	terms := make([]lattice.Term, len(elems))
	seen := make(map[string]int, len(elems))
	for i, e := range elems {
		t, err := p.term(e, i, l)
		if err != nil {
			return nil, err
		}
		key := t.Key()
		if j, dup := seen[key]; dup {
			jl, _ := jsonpos.LineCol(p.doc, elems[j].Off)
			return nil, p.errAt(e.Off, fmt.Sprintf("terms[%d]", i),
				fmt.Errorf("%s duplicates terms[%d] (line %d): both are %s on %v in canonical form",
					p.termAsWritten(e), j, jl, t.Pauli, t.Sites))
		}
		seen[key] = i
		terms[i] = t
	}
	return terms, nil
}

// termAsWritten describes a term the way the file spells it, for
// duplicate messages ("XZ on [3 1]").
func (p *modelParser) termAsWritten(e jsonpos.Member) string {
	var t struct {
		Pauli string `json:"pauli"`
		Sites []int  `json:"sites"`
	}
	_ = json.Unmarshal(e.Value, &t)
	return fmt.Sprintf("%s on %v", t.Pauli, t.Sites)
}

// termFields are the members of a term object the reader knows.
var termFields = [...]string{"pauli", "sites", "coeff", "group", "stderr"}

func (p *modelParser) term(e jsonpos.Member, i int, l *lattice.Lattice) (lattice.Term, error) {
	fail := func(off int, field string, err error) error {
		return p.errAt(off, fmt.Sprintf("terms[%d]%s", i, field), err)
	}
	members, err := jsonpos.ObjectMembers(e.Value, e.Off)
	if err != nil {
		return lattice.Term{}, fail(e.Off, "", err)
	}
	var (
		t     lattice.Term
		pauli string
		sites []int
		at    [len(termFields)]int // offset of each known member + 1; 0 if absent
	)
	for _, f := range members {
		k := slices.Index(termFields[:], f.Key)
		if k < 0 {
			continue // unknown members are allowed
		}
		fp := "." + f.Key
		if at[k] > 0 {
			pl, _ := jsonpos.LineCol(p.doc, at[k]-1)
			return lattice.Term{}, fail(f.Off, fp, fmt.Errorf("given twice (first on line %d)", pl))
		}
		at[k] = f.Off + 1
		if jsonpos.IsNull(f.Value) && f.Key != "pauli" && f.Key != "sites" {
			continue // an optional member given as null is absent
		}
		switch f.Key {
		case "pauli":
			if pauli, err = parseString(f.Value); err != nil {
				return lattice.Term{}, fail(f.Off, fp, fmt.Errorf("must be a string of X, Y, Z letters, got %s", jsonpos.Kind(f.Value)))
			}
		case "sites":
			if sites, err = parseSites(f.Value); err != nil {
				return lattice.Term{}, fail(f.Off, fp, err)
			}
		case "coeff":
			if t.Coeff, err = parseNumber(f.Value); err != nil {
				return lattice.Term{}, fail(f.Off, fp, err)
			}
		case "group":
			if t.Group, err = parseString(f.Value); err != nil {
				return lattice.Term{}, fail(f.Off, fp, fmt.Errorf("must be a string, got %s", jsonpos.Kind(f.Value)))
			}
		case "stderr":
			v, err := parseNumber(f.Value)
			if err == nil {
				err = checkStderr(v)
			}
			if err != nil {
				return lattice.Term{}, fail(f.Off, fp, err)
			}
			t.Stderr, t.HasStderr = v, true
		}
	}
	if at[0] == 0 {
		return lattice.Term{}, fail(e.Off, ".pauli", fmt.Errorf("missing"))
	}
	if at[1] == 0 {
		return lattice.Term{}, fail(e.Off, ".sites", fmt.Errorf("missing"))
	}
	cp, cs, field, err := checkTermSupport(l, pauli, sites)
	if err != nil {
		off := e.Off
		if k := slices.Index(termFields[:], strings.TrimPrefix(field, ".")); k >= 0 && at[k] > 0 {
			off = at[k] - 1
		}
		return lattice.Term{}, fail(off, field, err)
	}
	t.Pauli, t.Sites = cp, cs
	return t, nil
}

// parseString reads a JSON string.
func parseString(raw json.RawMessage) (string, error) {
	if len(raw) >= 2 && raw[0] == '"' && bytes.IndexByte(raw, '\\') < 0 {
		return string(raw[1 : len(raw)-1]), nil
	}
	var s string
	err := json.Unmarshal(raw, &s)
	return s, err
}

// parseNumber reads a JSON number as a finite float64. Strings such as
// "NaN" and numbers too large for float64 (1e999) are refused.
func parseNumber(raw json.RawMessage) (float64, error) {
	if k := jsonpos.Kind(raw); k != "number" {
		return 0, fmt.Errorf("must be a number, got %s %s", k, bytes.TrimSpace(raw))
	}
	s := string(bytes.TrimSpace(raw))
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsInf(v, 0) || math.IsNaN(v) {
		return 0, fmt.Errorf("%s is not a finite float64 number", s)
	}
	return v, nil
}

// parseSites reads a JSON array of site indices.
func parseSites(raw json.RawMessage) ([]int, error) {
	if k := jsonpos.Kind(raw); k != "array" {
		return nil, fmt.Errorf("must be an array of site indices, got %s", k)
	}
	elems, err := jsonpos.ArrayElements(raw, 0)
	if err != nil {
		return nil, err
	}
	sites := make([]int, len(elems))
	for i, e := range elems {
		v, ok := parseIndex(e.Value)
		if !ok {
			return nil, fmt.Errorf("site %s is not a non-negative integer", e.Value)
		}
		sites[i] = v
	}
	return sites, nil
}

// parseIndex reads an integer written with decimal digits only (an
// optional minus sign included, so that negative sites get a range
// error rather than a syntax one).
func parseIndex(b []byte) (int, bool) {
	neg := len(b) > 0 && b[0] == '-'
	if neg {
		b = b[1:]
	}
	if len(b) == 0 || len(b) > 9 {
		return 0, false
	}
	v := 0
	for _, c := range b {
		if c < '0' || c > '9' {
			return 0, false
		}
		v = 10*v + int(c-'0')
	}
	if neg {
		v = -v
	}
	return v, true
}

// csvLooking names the kind of CSV table doc seems to be ("a CSV table",
// or an expectation table or snapshot file by its header) and the line of
// that header, or returns "" when its first line that is neither blank
// nor a '#' comment does not look like a CSV header: no JSON opening, and
// fields separated by commas.
func csvLooking(doc []byte) (what string, lineNo int) {
	for i, line := range strings.Split(string(doc), "\n") {
		line = strings.TrimSpace(strings.TrimPrefix(line, "\ufeff"))
		if line == "" || line[0] == '#' {
			continue
		}
		if line[0] == '{' || line[0] == '[' || !strings.Contains(line, ",") {
			return "", 0
		}
		switch h := strings.ToLower(strings.ReplaceAll(line, " ", "")); {
		case strings.HasPrefix(h, "pauli,sites,value,stderr"):
			return "a CSV table (an expectation table: pauli,sites,value,stderr)", i + 1
		case strings.HasPrefix(h, "basis,outcome,count"):
			return "a CSV table (a snapshot file: basis,outcome,count)", i + 1
		}
		return "a CSV table", i + 1
	}
	return "", 0
}
