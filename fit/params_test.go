package fit

import (
	"math/rand/v2"
	"slices"
	"testing"

	"warmfit/lattice"
)

func TestNewParamsGroups(t *testing.T) {
	terms := []lattice.Term{
		{Pauli: "ZZ", Sites: []int{0, 1}, Group: "J"},
		{Pauli: "X", Sites: []int{0}},
		{Pauli: "ZZ", Sites: []int{1, 2}, Group: "J"},
		{Pauli: "X", Sites: []int{1}, Group: "h"},
		{Pauli: "X", Sites: []int{2}, Group: "h"},
		{Pauli: "Z", Sites: []int{2}},
	}
	p := NewParams(terms)
	// By hand: J = {0, 2}, "X 0" alone, h = {3, 4}, "Z 2" alone.
	wantOf := []int{0, 1, 0, 2, 2, 3}
	wantNames := []string{"J", "X 0", "h", "Z 2"}
	if !slices.Equal(p.Of, wantOf) || !slices.Equal(p.Names, wantNames) {
		t.Fatalf("Of %v names %v; want %v %v", p.Of, p.Names, wantOf, wantNames)
	}
	if !p.Tied() || p.NumParams() != 4 || p.NumTerms() != 6 {
		t.Errorf("Tied %v, %d params, %d terms; want true, 4, 6", p.Tied(), p.NumParams(), p.NumTerms())
	}
	theta := []float64{1, 2, 3, 4}
	lambda := make([]float64, 6)
	p.Expand(lambda, theta)
	if want := []float64{1, 2, 1, 3, 3, 4}; !slices.Equal(lambda, want) {
		t.Errorf("Expand = %v, want %v", lambda, want)
	}
	avg := make([]float64, 4)
	p.Average(avg, lambda)
	if !slices.Equal(avg, theta) {
		t.Errorf("Average(Expand(theta)) = %v, want %v", avg, theta)
	}
}

// Reduce must be the transpose of Expand: <A theta, v> = <theta, A^T v>
// for all theta and v (definition of the adjoint).
func TestParamsReduceIsTranspose(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	var terms []lattice.Term
	for k := 0; k < 40; k++ {
		g := ""
		if r := rng.IntN(4); r > 0 {
			g = string(rune('a' + r))
		}
		terms = append(terms, lattice.Term{Pauli: "Z", Sites: []int{k}, Group: g})
	}
	p := NewParams(terms)
	theta := make([]float64, p.NumParams())
	v := make([]float64, len(terms))
	for i := range theta {
		theta[i] = rng.NormFloat64()
	}
	for i := range v {
		v[i] = rng.NormFloat64()
	}
	at := make([]float64, len(terms))
	p.Expand(at, theta)
	atv := make([]float64, len(theta))
	p.Reduce(atv, v)
	if lhs, rhs := dot(at, v), dot(theta, atv); abs(lhs-rhs) > 1e-12*(abs(lhs)+1) {
		t.Errorf("<A theta, v> = %v but <theta, A^T v> = %v", lhs, rhs)
	}
}

// project must equal A^T M A formed densely (brute force).
func TestParamsProject(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	terms := make([]lattice.Term, 9)
	for k := range terms {
		terms[k] = lattice.Term{Pauli: "X", Sites: []int{k}, Group: []string{"", "a", "b"}[k%3]}
	}
	p := NewParams(terms)
	n := len(terms)
	m := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			if rng.IntN(2) == 0 {
				v := rng.NormFloat64()
				m[i*n+j], m[j*n+i] = v, v
			}
		}
	}
	got := p.project(denseTermMatrix{n, m}, -2)
	np := p.NumParams()
	for a := 0; a < np; a++ {
		for b := 0; b < np; b++ {
			var want float64
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					if p.Of[i] == a && p.Of[j] == b {
						want += -2 * m[i*n+j]
					}
				}
			}
			have := got.At(a, b)
			if abs(have-want) > 1e-12 {
				t.Errorf("(A^T M A)[%d,%d] = %v, want %v", a, b, have, want)
			}
		}
	}
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}
