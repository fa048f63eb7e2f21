package lattice

import (
	"fmt"
	"os"
	"strconv"
	"strings"
)

// SpecError reports a lattice specification that cannot be parsed or
// built: an unknown kind, a malformed or non-positive size, a periodic
// size too small for its neighbour shells. Callers tell it apart from
// errors in files (errors.As) to report a usage mistake.
type SpecError struct {
	Spec string // the specification as given
	Msg  string
}

func (e *SpecError) Error() string {
	if e.Spec == "" {
		return e.Msg
	}
	return e.Spec + ": " + e.Msg
}

func specErrorf(spec, format string, args ...any) *SpecError {
	return &SpecError{Spec: spec, Msg: fmt.Sprintf(format, args...)}
}

// ParseSpec parses KIND:SIZE[:BOUNDARY][:shells=N], for example chain:12,
// ladder:8, square:4x4, square:6x6:periodic, cubic:3x3x3 or
// square:6x6:periodic:shells=2. SIZE counts unit cells along each axis,
// joined by 'x'; BOUNDARY is open (the default) or periodic; shells=2 adds
// the next-nearest neighbours to the interaction graph. Kinds and words are
// case-insensitive. ParseSpec checks the syntax and the sizes; Build
// refuses what cannot be built (periodic sizes that would double bonds).
// Errors are *SpecError naming the offending part.
func ParseSpec(s string) (Spec, error) {
	text := strings.TrimSpace(s)
	parts := strings.Split(strings.ToLower(text), ":")
	if len(parts) < 2 || parts[1] == "" {
		return Spec{}, specErrorf(text, "want KIND:SIZE[:BOUNDARY], for example square:4x4 or chain:12:periodic")
	}
	kind := parts[0]
	if kind == "graph" {
		return Spec{}, specErrorf(text, "custom graphs are read from a JSON file; give its path instead")
	}
	uc, ok := unitCells[kind]
	if !ok {
		return Spec{}, specErrorf(text, "unknown lattice kind %q (known: %s)", parts[0], strings.Join(kinds, ", "))
	}
	spec := Spec{Kind: kind, Boundary: OpenBoundary, Shells: 1}
	fields := strings.Split(parts[1], "x")
	for _, f := range fields {
		n, err := strconv.Atoi(f)
		if err != nil {
			return Spec{}, specErrorf(text, "size %q is not an integer (want %s like %s)", f, kind, uc.Example)
		}
		spec.Size = append(spec.Size, n)
	}
	if len(spec.Size) != uc.Axes {
		return Spec{}, specErrorf(text, "%s needs %d size%s like %s, got %d", kind, uc.Axes, plural(uc.Axes), uc.Example, len(spec.Size))
	}
	for _, n := range spec.Size {
		if n <= 0 {
			return Spec{}, specErrorf(text, "size %d must be positive", n)
		}
	}
	seenBoundary, seenShells := false, false
	for _, p := range parts[2:] {
		switch {
		case p == "open" || p == "periodic":
			if seenBoundary {
				return Spec{}, specErrorf(text, "boundary given twice")
			}
			seenBoundary = true
			if p == "periodic" {
				spec.Boundary = Periodic
			}
		case strings.HasPrefix(p, "shells="):
			if seenShells {
				return Spec{}, specErrorf(text, "shells given twice")
			}
			seenShells = true
			v := strings.TrimPrefix(p, "shells=")
			n, err := strconv.Atoi(v)
			if err != nil || (n != 1 && n != 2) {
				return Spec{}, specErrorf(text, "shells=%s: want 1 or 2", v)
			}
			spec.Shells = n
		default:
			return Spec{}, specErrorf(text, "unknown boundary %q (want open or periodic)", p)
		}
	}
	if err := spec.checkSites(); err != nil {
		return Spec{}, err
	}
	return spec, nil
}

func plural(n int) string {
	if n == 1 {
		return ""
	}
	return "s"
}

// String writes the specification in the form ParseSpec reads:
// KIND:SIZE, then :periodic and :shells=2 when they apply. A custom graph
// prints as graph:N with N its number of sites, which ParseSpec refuses
// (graphs come from files).
func (s Spec) String() string {
	var b strings.Builder
	b.WriteString(s.Kind)
	b.WriteByte(':')
	for k, n := range s.Size {
		if k > 0 {
			b.WriteByte('x')
		}
		b.WriteString(strconv.Itoa(n))
	}
	if s.Boundary == Periodic {
		b.WriteString(":periodic")
	}
	if s.Shells == 2 {
		b.WriteString(":shells=2")
	}
	return b.String()
}

// check validates a built-in specification and returns its unit cell.
func (s Spec) check() (*unitCell, error) {
	uc, ok := unitCells[s.Kind]
	if !ok {
		return nil, specErrorf(s.String(), "unknown lattice kind %q (known: %s)", s.Kind, strings.Join(kinds, ", "))
	}
	if len(s.Size) != uc.Axes {
		return nil, specErrorf(s.String(), "%s needs %d size%s like %s, got %d", s.Kind, uc.Axes, plural(uc.Axes), uc.Example, len(s.Size))
	}
	for _, n := range s.Size {
		if n <= 0 {
			return nil, specErrorf(s.String(), "size %d must be positive", n)
		}
	}
	if s.Boundary != OpenBoundary && s.Boundary != Periodic {
		return nil, specErrorf(s.String(), "unknown boundary %d", int(s.Boundary))
	}
	if s.Shells < 0 || s.Shells > 2 {
		return nil, specErrorf(s.String(), "shells %d: want 1 or 2", s.Shells)
	}
	return uc, s.checkSites()
}

// checkSites refuses lattices with more than MaxSites sites, computing the
// product without overflow.
func (s Spec) checkSites() error {
	uc := unitCells[s.Kind]
	n := len(uc.Basis)
	for _, l := range s.Size {
		if l > MaxSites || n > MaxSites/l {
			return specErrorf(s.String(), "more than %d sites (the ceiling lattice.MaxSites, about 330 MB of lattice)", MaxSites)
		}
		n *= l
	}
	return nil
}

// Open returns the lattice named by specOrPath: a specification such as
// square:4x4 (see ParseSpec), or the path of a JSON file holding a lattice
// object — a custom graph {"kind":"graph","sites":...,"bonds":...}, the
// parsed form {"kind":"square","size":[4,4]}, or a model file whose
// "lattice" field is one of these. A string naming an existing file, or
// ending in .json, is a path; anything else is a specification, and its
// errors are *SpecError.
func Open(specOrPath string) (*Lattice, error) {
	if fi, err := os.Stat(specOrPath); (err == nil && !fi.IsDir()) || strings.HasSuffix(strings.ToLower(specOrPath), ".json") {
		return ReadFile(specOrPath)
	}
	spec, err := ParseSpec(specOrPath)
	if err != nil {
		return nil, err
	}
	return Build(spec)
}
