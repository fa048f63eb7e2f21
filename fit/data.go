package fit

import (
	"bufio"
	"errors"
	"fmt"
	"os"
	"strings"
)

// DataKind says which of the two data files a file is.
type DataKind string

// Data kinds returned by DetectDataKind.
const (
	KindTable     DataKind = "table"     // expectation table, header pauli,sites,value,stderr
	KindSnapshots DataKind = "snapshots" // snapshot file, header basis,outcome,count
)

var (
	tableHeader    = []string{"pauli", "sites", "value", "stderr"}
	snapshotHeader = []string{"basis", "outcome", "count"}
)

// DataError is a problem with one place of an input file. Line is 1-based
// (0 when the problem concerns the whole file); Field names the column
// involved, or is empty.
type DataError struct {
	File  string
	Line  int
	Field string
	Msg   string
}

func (e *DataError) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
	}
	b.WriteString(": ")
	if e.Field != "" {
		fmt.Fprintf(&b, "field %q: ", e.Field)
	}
	b.WriteString(e.Msg)
	return b.String()
}

func dataErrorf(file string, line int, field, format string, args ...any) *DataError {
	return &DataError{File: file, Line: line, Field: field, Msg: fmt.Sprintf(format, args...)}
}

func displayName(name string) string {
	if name == "" {
		return "<input>"
	}
	return name
}

// DetectDataKind tells an expectation table (KindTable) from a snapshot
// file (KindSnapshots) by the first line that is neither blank nor a
// '#' comment.
func DetectDataKind(path string) (kind DataKind, err error) {
	f, err := os.Open(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 0, 64*1024), maxLineBytes)
	line := 0
	for sc.Scan() {
		line++
		text := cleanLine(sc.Text(), line)
		if skipLine(text) {
			continue
		}
		fields := splitHeader(text)
		switch {
		case hasPrefixFields(fields, tableHeader):
			return KindTable, nil
		case hasPrefixFields(fields, snapshotHeader):
			return KindSnapshots, nil
		}
		return "", dataErrorf(path, line, "", "unknown header %q: an expectation table starts with %q, a snapshot file with %q",
			truncate(text, 80), strings.Join(tableHeader, ","), strings.Join(snapshotHeader, ","))
	}
	if err := sc.Err(); err != nil {
		return "", scanError(path, line, err)
	}
	return "", dataErrorf(path, 0, "", "no header line: an expectation table starts with %q, a snapshot file with %q",
		strings.Join(tableHeader, ","), strings.Join(snapshotHeader, ","))
}

// maxLineBytes bounds one input line (a snapshot line for 10^5 qubits is
// 2×10^5 bytes).
const maxLineBytes = 16 << 20

// scanError reports a read error met after line lines.
func scanError(name string, line int, err error) error {
	if errors.Is(err, bufio.ErrTooLong) {
		return dataErrorf(name, line+1, "", "line longer than %d MiB", maxLineBytes>>20)
	}
	return fmt.Errorf("%s: after line %d: %w", name, line, err)
}

// cleanLine drops a carriage return and, on the first line, a UTF-8 byte
// order mark.
func cleanLine(s string, line int) string {
	s = strings.TrimSuffix(s, "\r")
	if line == 1 {
		s = strings.TrimPrefix(s, "\ufeff")
	}
	return s
}

// skipLine reports blank lines and comments.
func skipLine(s string) bool {
	t := strings.TrimSpace(s)
	return t == "" || t[0] == '#'
}

func splitHeader(s string) []string {
	fields := strings.Split(s, ",")
	for i := range fields {
		fields[i] = strings.ToLower(strings.TrimSpace(fields[i]))
	}
	return fields
}

func hasPrefixFields(fields, want []string) bool {
	if len(fields) < len(want) {
		return false
	}
	for i, w := range want {
		if fields[i] != w {
			return false
		}
	}
	return true
}

// checkHeader reports the first way fields fails to start with want.
func checkHeader(name string, line int, fields, want []string) error {
	for i, w := range want {
		if i >= len(fields) {
			return dataErrorf(name, line, "", "header: missing column %q (the header must start with %q)", w, strings.Join(want, ","))
		}
		if fields[i] != w {
			return dataErrorf(name, line, "", "header: column %d is %q, want %q (the header must start with %q)", i+1, fields[i], w, strings.Join(want, ","))
		}
	}
	return nil
}

func truncate(s string, n int) string {
	if len(s) <= n {
		return s
	}
	return s[:n] + "..."
}
