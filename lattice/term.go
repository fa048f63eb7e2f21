package lattice

import (
	"fmt"
	"slices"
	"sort"
	"strconv"
	"strings"
)

// Term is one Pauli string of a Hamiltonian H = sum_k Coeff_k P_k, in
// canonical form: Sites strictly increasing and Pauli[i] the letter on
// Sites[i]. Terms sharing a non-empty Group share one fitted coefficient.
type Term struct {
	Pauli string
	Sites []int
	Coeff float64
	Group string
	// Stderr is the standard error of Coeff when it was estimated; NaN
	// (or HasStderr false) when it is not known.
	Stderr    float64
	HasStderr bool
	// Significant, when not nil, records whether a fitted coefficient is
	// significantly non-zero (structure learning); written as the optional
	// term field "significant".
	Significant *bool
}

// NewTerm returns the canonical term with the given letters on the given
// sites: sites sorted increasingly with their letters permuted along.
// It reports an unknown letter, a length mismatch, a negative or a
// repeated site.
func NewTerm(pauli string, sites []int, coeff float64) (Term, error) {
	p, s, err := Canonical(pauli, sites)
	if err != nil {
		return Term{}, err
	}
	return Term{Pauli: p, Sites: s, Coeff: coeff}, nil
}

// TermError is a malformed term: Field is "pauli" or "sites", the part
// at fault, so that readers can point at it in a file.
type TermError struct {
	Field string
	Err   error
}

func (e *TermError) Error() string { return e.Err.Error() }

func (e *TermError) Unwrap() error { return e.Err }

func termErrorf(field, format string, args ...any) *TermError {
	return &TermError{Field: field, Err: fmt.Errorf(format, args...)}
}

// Canonical sorts sites increasingly, permuting the letters with them,
// and checks letters and sites. It is the one place where a term's form
// is checked; errors are *TermError.
func Canonical(pauli string, sites []int) (string, []int, error) {
	if len(pauli) == 0 {
		return "", nil, termErrorf("pauli", "empty Pauli string")
	}
	for i := 0; i < len(pauli); i++ {
		switch pauli[i] {
		case 'X', 'Y', 'Z':
		default:
			return "", nil, termErrorf("pauli", "%q: letter %q is not X, Y or Z (identities are left out: list only the support)", pauli, pauli[i])
		}
	}
	if len(pauli) != len(sites) {
		return "", nil, termErrorf("sites", "%d sites for the %d letters of %q", len(sites), len(pauli), pauli)
	}
	idx := make([]int, len(sites))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return sites[idx[a]] < sites[idx[b]] })
	letters := make([]byte, len(pauli))
	out := make([]int, len(sites))
	for i, j := range idx {
		letters[i] = pauli[j]
		out[i] = sites[j]
		if out[i] < 0 {
			return "", nil, termErrorf("sites", "%q: negative site %d", pauli, out[i])
		}
		if i > 0 && out[i] == out[i-1] {
			return "", nil, termErrorf("sites", "%q: site %d repeated", pauli, out[i])
		}
	}
	return string(letters), out, nil
}

// CanonicalWithin is Canonical for a system of n qubits: every site must
// also be below n.
func CanonicalWithin(n int, pauli string, sites []int) (string, []int, error) {
	p, s, err := Canonical(pauli, sites)
	if err != nil {
		return "", nil, err
	}
	if last := s[len(s)-1]; last >= n {
		return "", nil, termErrorf("sites", "site %d is out of range: the system has %d sites, numbered 0..%d", last, n, n-1)
	}
	return p, s, nil
}

// CanonicalTerm is Canonical for a term of a model on l: every site must
// also be a site of l, and the support must be connected in l's
// interaction graph, which the linked-cluster expansion needs.
func (l *Lattice) CanonicalTerm(pauli string, sites []int) (string, []int, error) {
	p, s, err := Canonical(pauli, sites)
	if err != nil {
		return "", nil, err
	}
	if n, last := l.NumSites(), s[len(s)-1]; last >= n {
		return "", nil, termErrorf("sites", "site %d is beyond the lattice: %s has %d sites, numbered 0..%d", last, l.Spec, n, n-1)
	}
	if !l.Connected(s) {
		shells := "nearest neighbours only"
		if l.Spec.Shells >= 2 {
			shells = "nearest and next-nearest neighbours"
		}
		return "", nil, termErrorf("sites", "sites %v are not connected in the interaction graph of the lattice (%s); a term's support must be connected for the linked-cluster expansion", s, shells)
	}
	return p, s, nil
}

// CheckTerms checks that every term is in canonical form on n qubits
// (see CanonicalWithin), naming the first that is not.
func CheckTerms(n int, terms []Term) error {
	for k, t := range terms {
		p, s, err := CanonicalWithin(n, t.Pauli, t.Sites)
		if err == nil && (p != t.Pauli || !slices.Equal(s, t.Sites)) {
			err = fmt.Errorf("%s on %v is not in canonical form (%s on %v)", t.Pauli, t.Sites, p, s)
		}
		if err != nil {
			return fmt.Errorf("term %d (%s on %v): %w", k, t.Pauli, t.Sites, err)
		}
	}
	return nil
}

// CheckTerms (the method) is CheckTerms for terms of a model on l: supports must
// also be connected (see CanonicalTerm).
func (l *Lattice) CheckTerms(terms []Term) error {
	if err := CheckTerms(l.NumSites(), terms); err != nil {
		return err
	}
	for k, t := range terms {
		if _, _, err := l.CanonicalTerm(t.Pauli, t.Sites); err != nil {
			return fmt.Errorf("term %d (%s): %w", k, t.Key(), err)
		}
	}
	return nil
}

// Key identifies a term by letters and sites, for example "ZZ 0 1". It is
// the same for equal canonical terms and differs otherwise.
func (t Term) Key() string { return TermKey(t.Pauli, t.Sites) }

// TermKey is Key for letters and sites already in canonical form.
func TermKey(pauli string, sites []int) string {
	var b strings.Builder
	b.WriteString(pauli)
	for _, s := range sites {
		b.WriteByte(' ')
		b.WriteString(strconv.Itoa(s))
	}
	return b.String()
}

// SitesString formats sites as the space-separated list of the CSV formats.
func SitesString(sites []int) string {
	parts := make([]string, len(sites))
	for i, s := range sites {
		parts[i] = strconv.Itoa(s)
	}
	return strings.Join(parts, " ")
}
