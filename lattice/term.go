package lattice

import (
	"fmt"
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

// Canonical sorts sites increasingly, permuting the letters with them,
// and checks letters and sites.
func Canonical(pauli string, sites []int) (string, []int, error) {
	if len(pauli) == 0 {
		return "", nil, fmt.Errorf("empty pauli string")
	}
	if len(pauli) != len(sites) {
		return "", nil, fmt.Errorf("pauli %q has %d letters but %d sites", pauli, len(pauli), len(sites))
	}
	for i := 0; i < len(pauli); i++ {
		switch pauli[i] {
		case 'X', 'Y', 'Z':
		default:
			return "", nil, fmt.Errorf("pauli %q: letter %q is not X, Y or Z", pauli, pauli[i])
		}
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
			return "", nil, fmt.Errorf("pauli %q: negative site %d", pauli, out[i])
		}
		if i > 0 && out[i] == out[i-1] {
			return "", nil, fmt.Errorf("pauli %q: site %d repeated", pauli, out[i])
		}
	}
	return string(letters), out, nil
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
