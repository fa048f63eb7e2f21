package cluster

import (
	"math/cmplx"
	"strings"
	"testing"
)

// allPaulis returns every Pauli string on n qubits (4^n of them).
func allPaulis(n int) []PauliString {
	out := []PauliString{{}}
	for q := 0; q < n; q++ {
		bit := uint64(1) << uint(q)
		var next []PauliString
		for _, p := range out {
			next = append(next, p,
				PauliString{X: p.X | bit, Z: p.Z},
				PauliString{X: p.X | bit, Z: p.Z | bit},
				PauliString{X: p.X, Z: p.Z | bit})
		}
		out = next
	}
	return out
}

// TestPauliMatrixElements compares the bit-mask matrix elements with the
// Kronecker product of the textbook Pauli matrices.
func TestPauliMatrixElements(t *testing.T) {
	const n = 3
	for _, p := range allPaulis(n) {
		m := kronMatrix(n, p)
		for b := uint64(0); b < 1<<n; b++ {
			out, phase := p.Apply(b)
			for r := uint64(0); r < 1<<n; r++ {
				want := complex128(0)
				if r == out {
					want = phase
				}
				if m[r][b] != want {
					t.Fatalf("%s: <%d|P|%d> = %v, Kronecker product gives %v", p.Letters([]int{0, 1, 2}), r, b, want, m[r][b])
				}
			}
			if got := iPow(p.phaseExp(b)); got != phase {
				t.Fatalf("%s: phaseExp(%d) gives %v, Apply %v", p.Letters([]int{0, 1, 2}), b, got, phase)
			}
			// realSign is the real factor of the element: P itself or P/i.
			want := m[out][b]
			if !p.IsReal() {
				want /= 1i
			}
			if complex(p.realSign(b), 0) != want {
				t.Fatalf("%s: realSign(%d) = %v, want %v", p.Letters([]int{0, 1, 2}), b, p.realSign(b), want)
			}
			if p.IsReal() && p.Sign(b) != p.realSign(b) {
				t.Fatalf("%s: Sign and realSign differ at %d", p.Letters([]int{0, 1, 2}), b)
			}
		}
	}
}

// TestPauliCommutes compares Commutes with the matrix commutator.
func TestPauliCommutes(t *testing.T) {
	const n = 2
	ps := allPaulis(n)
	for _, p := range ps {
		mp := kronMatrix(n, p)
		for _, q := range ps {
			mq := kronMatrix(n, q)
			commute := true
			for r := range mp {
				for c := range mp {
					var pq, qp complex128
					for k := range mp {
						pq += mp[r][k] * mq[k][c]
						qp += mq[r][k] * mp[k][c]
					}
					if cmplx.Abs(pq-qp) > 1e-12 {
						commute = false
					}
				}
			}
			if p.Commutes(q) != commute {
				t.Errorf("%s, %s: Commutes = %v, matrices say %v", p.Letters([]int{0, 1}), q.Letters([]int{0, 1}), p.Commutes(q), commute)
			}
		}
	}
}

func TestParsePauli(t *testing.T) {
	for _, tc := range []struct {
		letters string
		qubits  []int
		want    PauliString
		err     string
	}{
		{"X", []int{0}, PauliString{X: 1}, ""},
		{"YZ", []int{2, 0}, PauliString{X: 4, Z: 5}, ""},
		{"ZZ", []int{63, 1}, PauliString{Z: 1<<63 | 2}, ""},
		{"XA", []int{0, 1}, PauliString{}, "is not X, Y or Z"},
		{"XX", []int{0}, PauliString{}, "1 sites for the 2 letters"},
		{"XX", []int{1, 1}, PauliString{}, "repeated"},
		{"X", []int{64}, PauliString{}, "out of range"},
		{"X", []int{-1}, PauliString{}, "negative site"},
	} {
		got, err := ParsePauli(tc.letters, tc.qubits)
		if tc.err != "" {
			if err == nil || !strings.Contains(err.Error(), tc.err) {
				t.Errorf("ParsePauli(%q, %v) error %v, want one containing %q", tc.letters, tc.qubits, err, tc.err)
			}
			continue
		}
		if err != nil || got != tc.want {
			t.Errorf("ParsePauli(%q, %v) = %+v, %v; want %+v", tc.letters, tc.qubits, got, err, tc.want)
		}
		if back := got.Letters(tc.qubits); back != tc.letters {
			t.Errorf("Letters round trip of %q gives %q", tc.letters, back)
		}
	}
	p := mustPauli("XYZ", 0, 3, 5)
	if p.Weight() != 3 || p.NumY() != 1 || p.IsReal() || p.Support() != 1|8|32 {
		t.Errorf("XYZ on 0,3,5: weight %d, NumY %d, IsReal %v, support %b", p.Weight(), p.NumY(), p.IsReal(), p.Support())
	}
	if !p.within(6) || p.within(5) || !p.within(64) {
		t.Errorf("within: %v %v %v", p.within(6), p.within(5), p.within(64))
	}
}
