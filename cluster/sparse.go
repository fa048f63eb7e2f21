package cluster

import "sort"

// SparseSym is a symmetric sparse matrix in compressed-row form holding
// both triangles, used for the response d<E_k>/d lambda_j of the expansion:
// only term pairs that share a cluster are stored.
type SparseSym struct {
	N      int
	RowPtr []int   // row i occupies RowPtr[i]..RowPtr[i+1]
	Col    []int32 // column indices, increasing within a row
	Val    []float64
}

// At returns element (i, j), zero when it is not stored.
func (s *SparseSym) At(i, j int) float64 {
	cols := s.Col[s.RowPtr[i]:s.RowPtr[i+1]]
	k := sort.Search(len(cols), func(k int) bool { return int(cols[k]) >= j })
	if k < len(cols) && int(cols[k]) == j {
		return s.Val[s.RowPtr[i]+k]
	}
	return 0
}

// MulVec sets dst = S x.
func (s *SparseSym) MulVec(dst, x []float64) {
	for i := 0; i < s.N; i++ {
		var sum float64
		for p := s.RowPtr[i]; p < s.RowPtr[i+1]; p++ {
			sum += s.Val[p] * x[s.Col[p]]
		}
		dst[i] = sum
	}
}

// Diag returns the diagonal.
func (s *SparseSym) Diag() []float64 {
	d := make([]float64, s.N)
	for i := range d {
		d[i] = s.At(i, i)
	}
	return d
}

// Dim returns the number of rows (and columns).
func (s *SparseSym) Dim() int { return s.N }

// DoRow calls fn for every stored element of row i, in increasing column
// order.
func (s *SparseSym) DoRow(i int, fn func(j int, v float64)) {
	for p := s.RowPtr[i]; p < s.RowPtr[i+1]; p++ {
		fn(int(s.Col[p]), s.Val[p])
	}
}

// NNZ returns the number of stored elements.
func (s *SparseSym) NNZ() int { return len(s.Val) }
