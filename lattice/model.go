package lattice

import (
	"encoding/json"
	"fmt"
	"math"
	"strings"
)

// Model is a Hamiltonian on a lattice: H = sum_k Terms[k].Coeff P_k, with
// an optional inverse temperature.
type Model struct {
	Lattice *Lattice
	Beta    float64 // 0 when the file gives none
	Terms   []Term

	// Units names the energy unit shared by the coefficients and 1/Beta
	// ("" when dimensionless or not stated).
	Units string
	// Fit is the report of the fit that produced the coefficients, a JSON
	// object kept verbatim (compacted) for the fitting code to fill; nil
	// when there is none.
	Fit json.RawMessage
}

// ModelError locates a problem in a model: the file (if any), the line
// and column in it (if known), and the JSON path of the offending value,
// such as "terms[3].sites".
type ModelError struct {
	File      string
	Line, Col int // 1-based; 0 when not known
	Path      string
	Err       error
}

func (e *ModelError) Error() string {
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

func (e *ModelError) Unwrap() error { return e.Err }

// Validate checks that the model is complete and consistent: a lattice,
// a finite non-negative Beta (0 meaning "not given"), at least one term,
// every term in canonical form with letters X, Y, Z on distinct in-range
// sites whose set is connected in the interaction graph, no two terms
// equal, every coefficient finite and every known standard error finite
// and non-negative, and Fit, when present, a JSON object.
func (m *Model) Validate() error {
	if m.Lattice == nil {
		return &ModelError{Path: "lattice", Err: fmt.Errorf("missing")}
	}
	if math.IsNaN(m.Beta) || math.IsInf(m.Beta, 0) || m.Beta < 0 {
		return &ModelError{Path: "beta", Err: fmt.Errorf("must be a finite number > 0 (or 0 for none), got %v", m.Beta)}
	}
	if len(m.Terms) == 0 {
		return &ModelError{Path: "terms", Err: fmt.Errorf("the model has no terms")}
	}
	seen := make(map[string]int, len(m.Terms))
	for i, t := range m.Terms {
		path := fmt.Sprintf("terms[%d]", i)
		p, s, field, err := checkTermSupport(m.Lattice, t.Pauli, t.Sites)
		if err != nil {
			return &ModelError{Path: path + field, Err: err}
		}
		if p != t.Pauli || !equalInts(s, t.Sites) {
			return &ModelError{Path: path, Err: fmt.Errorf("%s on %v is not in canonical form (%s on %v)", t.Pauli, t.Sites, p, s)}
		}
		if err := checkFinite(t.Coeff); err != nil {
			return &ModelError{Path: path + ".coeff", Err: err}
		}
		if t.HasStderr {
			if err := checkStderr(t.Stderr); err != nil {
				return &ModelError{Path: path + ".stderr", Err: err}
			}
		}
		key := t.Key()
		if j, dup := seen[key]; dup {
			return &ModelError{Path: path, Err: fmt.Errorf("%s on %v duplicates terms[%d]", t.Pauli, t.Sites, j)}
		}
		seen[key] = i
	}
	if len(m.Fit) > 0 && (!json.Valid(m.Fit) || jsonKind(m.Fit) != "object") {
		return &ModelError{Path: "fit", Err: fmt.Errorf("must be a JSON object")}
	}
	return nil
}

// checkTermSupport checks letters and sites of one term against the
// lattice and returns them in canonical form. On failure it also names
// the field at fault (".pauli" or ".sites").
func checkTermSupport(l *Lattice, pauli string, sites []int) (string, []int, string, error) {
	if pauli == "" {
		return "", nil, ".pauli", fmt.Errorf("empty Pauli string")
	}
	for i := 0; i < len(pauli); i++ {
		switch pauli[i] {
		case 'X', 'Y', 'Z':
		default:
			return "", nil, ".pauli", fmt.Errorf("%q: letter %q is not X, Y or Z (identities are left out: list only the support)", pauli, pauli[i])
		}
	}
	if len(sites) != len(pauli) {
		return "", nil, ".sites", fmt.Errorf("%d sites for the %d letters of %q", len(sites), len(pauli), pauli)
	}
	n := l.NumSites()
	for _, s := range sites {
		if s < 0 || s >= n {
			return "", nil, ".sites", fmt.Errorf("site %d out of range: the lattice has sites 0..%d", s, n-1)
		}
	}
	p, s, err := Canonical(pauli, sites)
	if err != nil {
		return "", nil, ".sites", err
	}
	if !l.Connected(s) {
		return "", nil, ".sites", fmt.Errorf("sites %v are not connected in the interaction graph of the lattice (%s); a term's support must be connected for the linked-cluster expansion", s, shellsPhrase(l))
	}
	return p, s, "", nil
}

func shellsPhrase(l *Lattice) string {
	if l.Spec.Shells >= 2 {
		return "nearest and next-nearest neighbours"
	}
	return "nearest neighbours only"
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

func equalInts(a, b []int) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}
