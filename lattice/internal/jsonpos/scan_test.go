package jsonpos

import "testing"

// Lines and columns as an editor counts them (columns in characters):
// common practice.
func TestLineCol(t *testing.T) {
	doc := []byte("ab\ncdé\nf")
	tests := []struct{ off, line, col int }{
		{0, 1, 1}, {2, 1, 3}, {3, 2, 1}, {5, 2, 3}, {7, 2, 4}, {8, 3, 1}, {100, 3, 2},
	}
	for _, tc := range tests {
		if l, c := LineCol(doc, tc.off); l != tc.line || c != tc.col {
			t.Errorf("offset %d: %d:%d, want %d:%d", tc.off, l, c, tc.line, tc.col)
		}
	}
}
