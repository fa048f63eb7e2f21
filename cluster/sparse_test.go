package cluster

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

	dense := s.SymDense()
	diag := s.Diag()
	for i := range n {
		if diag[i] != ref[i][i] {
			t.Errorf("Diag[%d] = %v, want %v", i, diag[i], ref[i][i])
		}
		for j := range n {
			if dense.At(i, j) != ref[i][j] {
				t.Fatalf("SymDense (%d,%d) = %v, want %v", i, j, dense.At(i, j), ref[i][j])
			}
		}
	}
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

func TestNewSparseSymCSR(t *testing.T) {
	// The 3×3 matrix [[2 1 0] [1 3 4] [0 4 5]] in compressed rows;
	// inserting into row 0 must not overwrite row 1, which shares the
	// arrays.
	s := NewSparseSymCSR(3, []int{0, 2, 5, 7}, []int32{0, 1, 0, 1, 2, 1, 2}, []float64{2, 1, 1, 3, 4, 4, 5})
	want := [3][3]float64{{2, 1, 0}, {1, 3, 4}, {0, 4, 5}}
	s.Set(0, 2, 7)
	want[0][2], want[2][0] = 7, 7
	for i := range 3 {
		for j := range 3 {
			if s.At(i, j) != want[i][j] {
				t.Errorf("At(%d,%d) = %v, want %v", i, j, s.At(i, j), want[i][j])
			}
		}
	}
	if s.NNZ() != 6 {
		t.Errorf("NNZ = %d, want 6", s.NNZ())
	}
	for _, bad := range []struct {
		rowPtr []int
		col    []int32
	}{
		{[]int{0, 2, 1, 2}, []int32{0, 1}},
		{[]int{0, 2, 2, 2}, []int32{1, 0}},
		{[]int{0, 1, 1, 1}, []int32{3}},
		{[]int{0, 1}, []int32{0}},
	} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("NewSparseSymCSR(%v, %v) did not panic", bad.rowPtr, bad.col)
				}
			}()
			NewSparseSymCSR(3, bad.rowPtr, bad.col, make([]float64, len(bad.col)))
		}()
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
