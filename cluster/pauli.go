package cluster

import (
	"fmt"
	"math/bits"

	"warmfit/lattice"
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
// qubit qubits[i]. Letters and qubits are checked by lattice.Canonical
// (the one check of a term's form), and qubits must be below MaxQubits.
func ParsePauli(letters string, qubits []int) (PauliString, error) {
	if _, _, err := lattice.CanonicalWithin(MaxQubits, letters, qubits); err != nil {
		return PauliString{}, err
	}
	var p PauliString
	for i := 0; i < len(letters); i++ {
		p.setLetter(uint64(1)<<uint(qubits[i]), letters[i])
	}
	return p, nil
}

// TermPauli is the Pauli string of a term: the one conversion from
// lattice.Term to PauliString.
func TermPauli(t lattice.Term) (PauliString, error) {
	p, err := ParsePauli(t.Pauli, t.Sites)
	if err != nil {
		return PauliString{}, fmt.Errorf("term %s: %w", t.Key(), err)
	}
	return p, nil
}

// TermPaulis converts every term, naming the first that fails.
func TermPaulis(terms []lattice.Term) ([]PauliString, error) {
	ops := make([]PauliString, len(terms))
	for k, t := range terms {
		p, err := TermPauli(t)
		if err != nil {
			return nil, err
		}
		ops[k] = p
	}
	return ops, nil
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
