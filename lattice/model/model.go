package model

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"warmfit/lattice"
	"warmfit/lattice/internal/jsonpos"
)

// Model is a Hamiltonian on a lattice: H = sum_k Terms[k].Coeff P_k, with
// an optional inverse temperature.
type Model struct {
	Lattice *lattice.Lattice
	Beta    float64 // 0 when the file gives none
	Terms   []lattice.Term

	// Units names the energy unit shared by the coefficients and 1/Beta
	// ("" when dimensionless or not stated).
	Units string
	// Fit is the report of the fit that produced the coefficients, a JSON
	// object kept verbatim (compacted) for the fitting code to fill; nil
	// when there is none.
	Fit json.RawMessage
}

// Error locates a problem in a model: the file (if any), the line
// and column in it (if known), and the JSON path of the offending value,
// such as "terms[3].sites".
type Error struct {
	File      string
	Line, Col int // 1-based; 0 when not known
	Path      string
	Err       error
}

func (e *Error) Error() string {
	var b strings.Builder
	if e.File != "" {
		b.WriteString(e.File)
		if e.Line > 0 {
			fmt.Fprintf(&b, ":%d:%d", e.Line, e.Col)
		}
		b.WriteString(": ")
	}
	if e.Path != "" {
		b.WriteString(e.Path)
		b.WriteString(": ")
	}
	b.WriteString(e.Err.Error())
	return b.String()
}

func (e *Error) Unwrap() error { return e.Err }

// Validate checks that the model is complete and consistent: a lattice,
// a finite non-negative Beta (0 meaning "not given"), at least one term,
// every term in canonical form with letters X, Y, Z on distinct in-range
// sites whose set is connected in the interaction graph, no two terms
// equal, every coefficient finite and every known standard error finite
// and non-negative, and Fit, when present, a JSON object.
func (m *Model) Validate() error {
	if m.Lattice == nil {
		return &Error{Path: "lattice", Err: fmt.Errorf("missing")}
	}
	if math.IsNaN(m.Beta) || math.IsInf(m.Beta, 0) || m.Beta < 0 {
		return &Error{Path: "beta", Err: fmt.Errorf("must be a finite number > 0 (or 0 for none), got %v", m.Beta)}
	}
	if len(m.Terms) == 0 {
		return &Error{Path: "terms", Err: fmt.Errorf("the model has no terms")}
	}
	seen := make(map[string]int, len(m.Terms))
	for i, t := range m.Terms {
		path := fmt.Sprintf("terms[%d]", i)
		p, s, field, err := checkTermSupport(m.Lattice, t.Pauli, t.Sites)
		if err != nil {
			return &Error{Path: path + field, Err: err}
		}
		if p != t.Pauli || !slices.Equal(s, t.Sites) {
			return &Error{Path: path, Err: fmt.Errorf("%s on %v is not in canonical form (%s on %v)", t.Pauli, t.Sites, p, s)}
		}
		if err := checkFinite(t.Coeff); err != nil {
			return &Error{Path: path + ".coeff", Err: err}
		}
		if t.HasStderr {
			if err := checkStderr(t.Stderr); err != nil {
				return &Error{Path: path + ".stderr", Err: err}
			}
		}
		key := t.Key()
		if j, dup := seen[key]; dup {
			return &Error{Path: path, Err: fmt.Errorf("%s on %v duplicates terms[%d]", t.Pauli, t.Sites, j)}
		}
		seen[key] = i
	}
	if len(m.Fit) > 0 && (!json.Valid(m.Fit) || jsonpos.Kind(m.Fit) != "object") {
		return &Error{Path: "fit", Err: fmt.Errorf("must be a JSON object")}
	}
	return nil
}

// checkTermSupport checks letters and sites of one term against the
// lattice and returns them in canonical form. On failure it also names
// the field at fault (".pauli" or ".sites").
func checkTermSupport(l *lattice.Lattice, pauli string, sites []int) (string, []int, string, error) {
	p, s, err := l.CanonicalTerm(pauli, sites)
	if err != nil {
		field := ".sites"
		var te *lattice.TermError
		if errors.As(err, &te) {
			field = "." + te.Field
		}
		return "", nil, field, err
	}
	return p, s, "", nil
}

func checkFinite(v float64) error {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Errorf("must be a finite number, got %v", v)
	}
	return nil
}

func checkStderr(v float64) error {
	if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
		return fmt.Errorf("must be a finite number >= 0, got %v", v)
	}
	return nil
}
