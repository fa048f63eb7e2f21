package cluster

import (
	"fmt"
	"math/bits"
)

// MaxQubits is the largest number of qubits a PauliString can address.
const MaxQubits = 64

// PauliString is a tensor product of single-qubit Paulis on up to 64
// qubits, stored as two bit masks: qubit q carries X when bit q of X is
// set and not of Z, Z when only Z is set, and Y when both are set.
// The operator is Hermitian: P = i^{nY} X^x Z^z with nY the number of Y
// letters, so that P|b> = i^{nY} (-1)^{popcount(b&Z)} |b XOR X> for a
// computational basis state |b> (qubit q is bit q of b).
type PauliString struct {
	X, Z uint64
}

// ParsePauli builds the Pauli string whose letter i (X, Y or Z) acts on
// qubit qubits[i]. It returns an error for an unknown letter, a length
// mismatch, an out-of-range or a repeated qubit.
func ParsePauli(letters string, qubits []int) (PauliString, error) {
	if len(letters) != len(qubits) {
		return PauliString{}, fmt.Errorf("pauli %q has %d letters but %d sites", letters, len(letters), len(qubits))
	}
	var p PauliString
	for i := 0; i < len(letters); i++ {
		q := qubits[i]
		if q < 0 || q >= MaxQubits {
			return PauliString{}, fmt.Errorf("qubit %d out of range [0,%d)", q, MaxQubits)
		}
		bit := uint64(1) << uint(q)
		if (p.X|p.Z)&bit != 0 {
			return PauliString{}, fmt.Errorf("qubit %d repeated in pauli %q", q, letters)
		}
		if !p.setLetter(bit, letters[i]) {
			return PauliString{}, fmt.Errorf("unknown Pauli letter %q in %q (want X, Y or Z)", letters[i], letters)
		}
	}
	return p, nil
}

// setLetter puts letter c (X, Y or Z) on the qubit with mask bit and
// reports whether c was a Pauli letter.
func (p *PauliString) setLetter(bit uint64, c byte) bool {
	switch c {
	case 'X':
		p.X |= bit
	case 'Y':
		p.X |= bit
		p.Z |= bit
	case 'Z':
		p.Z |= bit
	default:
		return false
	}
	return true
}

// Support returns the mask of qubits on which p acts non-trivially.
func (p PauliString) Support() uint64 { return p.X | p.Z }

// Weight returns the number of qubits on which p acts non-trivially.
func (p PauliString) Weight() int { return bits.OnesCount64(p.X | p.Z) }

// NumY returns the number of Y letters.
func (p PauliString) NumY() int { return bits.OnesCount64(p.X & p.Z) }

// IsReal reports whether p has a real matrix in the computational basis
// (an even number of Y letters).
func (p PauliString) IsReal() bool { return p.NumY()%2 == 0 }

// Commutes reports whether p and q commute.
func (p PauliString) Commutes(q PauliString) bool {
	return (bits.OnesCount64(p.X&q.Z)+bits.OnesCount64(p.Z&q.X))%2 == 0
}

// Apply returns the basis state p maps |b> to and the phase of that
// matrix element: P|b> = phase |out>, with phase one of 1, i, -1, -i.
func (p PauliString) Apply(b uint64) (out uint64, phase complex128) {
	k := p.NumY() + 2*bits.OnesCount64(b&p.Z)
	return b ^ p.X, iPow(k)
}

// Sign returns the real matrix element <b^X|P|b> of a real Pauli string
// (IsReal must hold): +1 or -1.
func (p PauliString) Sign(b uint64) float64 {
	k := p.NumY()/2 + bits.OnesCount64(b&p.Z)
	if k%2 == 0 {
		return 1
	}
	return -1
}

// Letters returns the letters of p on the given qubits, in order.
func (p PauliString) Letters(qubits []int) string {
	out := make([]byte, len(qubits))
	for i, q := range qubits {
		bit := uint64(1) << uint(q)
		switch {
		case p.X&bit != 0 && p.Z&bit != 0:
			out[i] = 'Y'
		case p.X&bit != 0:
			out[i] = 'X'
		case p.Z&bit != 0:
			out[i] = 'Z'
		default:
			out[i] = 'I'
		}
	}
	return string(out)
}

func iPow(k int) complex128 {
	switch k & 3 {
	case 0:
		return 1
	case 1:
		return 1i
	case 2:
		return -1
	default:
		return -1i
	}
}
