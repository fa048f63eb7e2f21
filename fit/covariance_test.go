package fit

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

func TestSparseSymAgainstDense(t *testing.T) {
	// A dense symmetric matrix kept alongside, updated by hand, is the
	// reference for every operation.
	const n = 9
	rng := rand.New(rand.NewPCG(5, 6))
	s := NewSparseSym(n)
	ref := make([][]float64, n)
	for i := range ref {
		ref[i] = make([]float64, n)
	}
	for range 60 {
		i, j := rng.IntN(n), rng.IntN(n)
		v := rng.NormFloat64()
		if rng.IntN(2) == 0 {
			s.Set(i, j, v)
			ref[i][j], ref[j][i] = v, v
		} else {
			s.Add(i, j, v)
			ref[i][j] += v
			if i != j {
				ref[j][i] += v
			}
		}
	}
	nnz := 0
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			if s.At(i, j) != ref[i][j] {
				t.Fatalf("At(%d,%d) = %v, want %v", i, j, s.At(i, j), ref[i][j])
			}
		}
		last := -1
		s.DoRow(i, func(j int, v float64) {
			if j <= last || v != ref[i][j] {
				t.Fatalf("DoRow(%d): column %d after %d, value %v", i, j, last, v)
			}
			last = j
		})
	}
	s.Do(func(i, j int, v float64) {
		if i > j || v != ref[i][j] {
			t.Fatalf("Do: (%d,%d) = %v", i, j, v)
		}
		nnz++
	})
	if nnz != s.NNZ() {
		t.Errorf("NNZ %d, Do visited %d", s.NNZ(), nnz)
	}

	x := make([]float64, n)
	for i := range x {
		x[i] = rng.NormFloat64()
	}
	got := make([]float64, n)
	s.MulVec(got, x)
	for i := range got {
		var want float64
		for j := range x {
			want += ref[i][j] * x[j]
		}
		if math.Abs(got[i]-want) > 1e-12 {
			t.Errorf("MulVec[%d] = %v, want %v", i, got[i], want)
		}
	}

	dense := toDense(s)
	a := mat.NewDense(3, n, nil)
	for i := range 3 {
		for j := range n {
			a.Set(i, j, rng.NormFloat64())
		}
	}
	var want mat.Dense
	want.Product(a, dense, a.T())
	sw := s.Sandwich(a)
	if !mat.EqualApprox(sw, &want, 1e-12) {
		t.Errorf("Sandwich:\n%v\nwant\n%v", mat.Formatted(sw), mat.Formatted(&want))
	}
}

func TestSparseSymPanics(t *testing.T) {
	s := NewSparseSym(2)
	defer func() {
		if recover() == nil {
			t.Error("out-of-range index did not panic")
		}
	}()
	s.At(0, 2)
}

// toDense returns S as a dense matrix (dimension at least 1: gonum
// cannot represent 0).
func toDense(s *SparseSym) *mat.SymDense {
	d := mat.NewSymDense(s.n, nil)
	s.Do(func(i, j int, v float64) { d.SetSym(i, j, v) })
	return d
}
