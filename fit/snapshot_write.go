package fit

import (
	"bufio"
	"fmt"
	"io"
	"strconv"
)

// SnapshotWriter writes a snapshot file (header basis,outcome,count) line
// by line, checking every line as ScanSnapshots will read it, so that
// what it writes always reads back.
type SnapshotWriter struct {
	bw     *bufio.Writer
	n      int
	header bool
	line   []byte
}

// NewSnapshotWriter returns a writer of snapshots on n qubits to w. Call
// Flush when done.
func NewSnapshotWriter(w io.Writer, n int) *SnapshotWriter {
	return &SnapshotWriter{bw: bufio.NewWriter(w), n: n}
}

// Write adds count shots in basis with the given outcome. It refuses a
// malformed basis or outcome and a count below 1.
func (s *SnapshotWriter) Write(basis, outcome string, count int64) error {
	if msg := checkBasis(basis, s.n); msg != "" {
		return fmt.Errorf("snapshot basis %q: %s", basis, msg)
	}
	if msg := checkOutcome(outcome, s.n); msg != "" {
		return fmt.Errorf("snapshot outcome %q: %s", outcome, msg)
	}
	if count < 1 {
		return fmt.Errorf("snapshot count %d: must be a positive integer", count)
	}
	if !s.header {
		if _, err := s.bw.WriteString("basis,outcome,count\n"); err != nil {
			return err
		}
		s.header = true
	}
	s.line = append(s.line[:0], basis...)
	s.line = append(s.line, ',')
	s.line = append(s.line, outcome...)
	s.line = append(s.line, ',')
	s.line = strconv.AppendInt(s.line, count, 10)
	s.line = append(s.line, '\n')
	_, err := s.bw.Write(s.line)
	return err
}

// Flush writes the header if no shot was written and flushes the buffer.
func (s *SnapshotWriter) Flush() error {
	if !s.header {
		if _, err := s.bw.WriteString("basis,outcome,count\n"); err != nil {
			return err
		}
		s.header = true
	}
	return s.bw.Flush()
}
