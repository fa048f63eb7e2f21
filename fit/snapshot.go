package fit

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
)

// ScanSnapshots streams a snapshot file (header basis,outcome,count; see
// the formats contract) and calls visit for every data line, in file
// order. It holds one line at a time, so files of 10^7 shots need no
// more memory than one line. n is the number of qubits: every basis must
// be n letters X/Y/Z and every outcome n digits 0/1; count must be a
// positive integer (identical shots may be merged into one line). Blank
// lines and '#' comments are skipped; columns after count are ignored.
// Errors name the file, line and field. An error returned by visit stops
// the scan and is returned as is.
func ScanSnapshots(r io.Reader, name string, n int, visit func(basis, outcome string, count int64) error) error {
	// Bases repeat in practice (a few settings, many shots each): reuse
	// one string per distinct basis instead of allocating per line.
	const maxInterned = 1 << 12
	interned := make(map[string]string)
	return scanSnapshotBytes(r, name, n, func(basis, outcome []byte, count int64) error {
		b, ok := interned[string(basis)]
		if !ok {
			b = string(basis)
			if len(interned) < maxInterned {
				interned[b] = b
			}
		}
		return visit(b, string(outcome), count)
	})
}

// scanSnapshotBytes is ScanSnapshots without copies: basis and outcome
// alias the read buffer and are valid only during the call to visit.
func scanSnapshotBytes(r io.Reader, name string, n int, visit func(basis, outcome []byte, count int64) error) error {
	name = displayName(name)
	if n <= 0 {
		return fmt.Errorf("%s: number of qubits %d must be positive", name, n)
	}
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, max(64*1024, 4*n)), max(maxLineBytes, 4*n+4096))
	line := 0
	header := false
	for sc.Scan() {
		line++
		text := sc.Bytes()
		text = bytes.TrimSuffix(text, []byte{'\r'})
		if line == 1 {
			text = bytes.TrimPrefix(text, []byte("\ufeff"))
		}
		t := bytes.TrimSpace(text)
		if len(t) == 0 || t[0] == '#' {
			continue
		}
		if !header {
			if err := checkHeader(name, line, splitHeader(string(t)), snapshotHeader); err != nil {
				return err
			}
			header = true
			continue
		}
		basis, rest, ok := bytes.Cut(t, []byte{','})
		if !ok {
			return dataErrorf(name, line, "", "want 3 comma-separated fields basis,outcome,count")
		}
		outcome, rest, ok := bytes.Cut(rest, []byte{','})
		if !ok {
			return dataErrorf(name, line, "", "want 3 comma-separated fields basis,outcome,count")
		}
		countField, _, _ := bytes.Cut(rest, []byte{','})
		basis, outcome, countField = bytes.TrimSpace(basis), bytes.TrimSpace(outcome), bytes.TrimSpace(countField)
		if msg := checkBasis(basis, n); msg != "" {
			return dataErrorf(name, line, "basis", "%s", msg)
		}
		if msg := checkOutcome(outcome, n); msg != "" {
			return dataErrorf(name, line, "outcome", "%s", msg)
		}
		count, ok := parseCount(countField)
		if !ok {
			return dataErrorf(name, line, "count", "%q is not a positive integer", truncate(string(countField), 40))
		}
		if err := visit(basis, outcome, count); err != nil {
			return err
		}
	}
	if err := sc.Err(); err != nil {
		return scanError(name, line, err)
	}
	if !header {
		return dataErrorf(name, 0, "", "no header line (want %q)", "basis,outcome,count")
	}
	return nil
}

// parseCount parses a positive decimal int64 without allocating.
func parseCount(b []byte) (int64, bool) {
	if len(b) == 0 || len(b) > 19 {
		return 0, false
	}
	var v int64
	for _, c := range b {
		if c < '0' || c > '9' {
			return 0, false
		}
		v = v*10 + int64(c-'0')
		if v < 0 { // a 19-digit value beyond 2^63 - 1 wraps to a negative one
			return 0, false
		}
	}
	return v, v > 0
}

// checkBasis describes what is wrong with a basis string, or returns "".
func checkBasis[S ~string | ~[]byte](basis S, n int) string {
	if len(basis) != n {
		return fmt.Sprintf("%d letters, want %d (one X, Y or Z per qubit)", len(basis), n)
	}
	for i := 0; i < len(basis); i++ {
		if c := basis[i]; c != 'X' && c != 'Y' && c != 'Z' {
			return fmt.Sprintf("letter %q for qubit %d is not X, Y or Z", c, i)
		}
	}
	return ""
}

// checkOutcome describes what is wrong with an outcome string, or
// returns "".
func checkOutcome[S ~string | ~[]byte](outcome S, n int) string {
	if len(outcome) != n {
		return fmt.Sprintf("%d digits, want %d (one 0 or 1 per qubit)", len(outcome), n)
	}
	for i := 0; i < len(outcome); i++ {
		if c := outcome[i]; c != '0' && c != '1' {
			return fmt.Sprintf("digit %q for qubit %d is not 0 or 1", c, i)
		}
	}
	return ""
}
