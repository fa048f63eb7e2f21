package fit

import (
	"fmt"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// SparseSym is a symmetric matrix that stores only the entries that were
// set: the covariance of term estimates, where only pairs of terms that
// share shots and lie close together carry a non-zero entry.
//
// Each row keeps its stored columns sorted, so every iteration and every
// product visits entries in a fixed order and gives bit-identical results
// from run to run. Entries never set read as zero. Setting (i, j) sets
// (j, i) too. Rows are expected to be short (tens of entries): lookups
// are binary searches and insertions shift the row.
type SparseSym struct {
	n    int
	rows [][]sparseEntry
}

type sparseEntry struct {
	col int
	val float64
}

// NewSparseSym returns an n×n symmetric matrix with no stored entries.
func NewSparseSym(n int) *SparseSym {
	if n < 0 {
		panic(fmt.Sprintf("fit: negative SparseSym dimension %d", n))
	}
	return &SparseSym{n: n, rows: make([][]sparseEntry, n)}
}

// Dim returns the number of rows (and columns).
func (s *SparseSym) Dim() int { return s.n }

func (s *SparseSym) check(i, j int) {
	if i < 0 || i >= s.n || j < 0 || j >= s.n {
		panic(fmt.Sprintf("fit: SparseSym index (%d,%d) out of range for dimension %d", i, j, s.n))
	}
}

// find returns the position of column j in row i and whether it is stored.
func (s *SparseSym) find(i, j int) (int, bool) {
	row := s.rows[i]
	p := sort.Search(len(row), func(k int) bool { return row[k].col >= j })
	return p, p < len(row) && row[p].col == j
}

// At returns entry (i, j); zero when it was never set.
func (s *SparseSym) At(i, j int) float64 {
	s.check(i, j)
	if p, ok := s.find(i, j); ok {
		return s.rows[i][p].val
	}
	return 0
}

// Set stores v at (i, j) and (j, i).
func (s *SparseSym) Set(i, j int, v float64) {
	s.check(i, j)
	s.put(i, j, v, false)
	if i != j {
		s.put(j, i, v, false)
	}
}

// Add adds v to entry (i, j) and (j, i), storing it if it was absent.
func (s *SparseSym) Add(i, j int, v float64) {
	s.check(i, j)
	s.put(i, j, v, true)
	if i != j {
		s.put(j, i, v, true)
	}
}

func (s *SparseSym) put(i, j int, v float64, add bool) {
	p, ok := s.find(i, j)
	if ok {
		if add {
			s.rows[i][p].val += v
		} else {
			s.rows[i][p].val = v
		}
		return
	}
	row := append(s.rows[i], sparseEntry{})
	copy(row[p+1:], row[p:])
	row[p] = sparseEntry{col: j, val: v}
	s.rows[i] = row
}

// DoRow calls fn for every stored entry of row i, by increasing column.
func (s *SparseSym) DoRow(i int, fn func(j int, v float64)) {
	s.check(i, i)
	for _, e := range s.rows[i] {
		fn(e.col, e.val)
	}
}

// Do calls fn once for every stored entry of the upper triangle (i <= j),
// row by row and by increasing column.
func (s *SparseSym) Do(fn func(i, j int, v float64)) {
	for i, row := range s.rows {
		for _, e := range row {
			if e.col >= i {
				fn(i, e.col, e.val)
			}
		}
	}
}

// NNZ returns the number of stored entries of the upper triangle,
// diagonal included.
func (s *SparseSym) NNZ() int {
	c := 0
	s.Do(func(int, int, float64) { c++ })
	return c
}

// MulVec sets dst = S x. dst and x must have length Dim and must not
// share memory.
func (s *SparseSym) MulVec(dst, x []float64) {
	if len(dst) != s.n || len(x) != s.n {
		panic(fmt.Sprintf("fit: SparseSym.MulVec lengths %d, %d for dimension %d", len(dst), len(x), s.n))
	}
	for i, row := range s.rows {
		var sum float64
		for _, e := range row {
			sum += e.val * x[e.col]
		}
		dst[i] = sum
	}
}

// Sandwich returns A S Aᵀ for an r×Dim matrix A: the covariance of
// linear functions A x of a vector x with covariance S (error
// propagation). Cost is r×(stored entries) + r²×Dim.
func (s *SparseSym) Sandwich(a mat.Matrix) *mat.SymDense {
	r, c := a.Dims()
	if c != s.n {
		panic(fmt.Sprintf("fit: SparseSym.Sandwich: A has %d columns, want %d", c, s.n))
	}
	arows := make([][]float64, r)
	brows := make([][]float64, r)
	for p := range arows {
		arows[p] = mat.Row(nil, p, a)
		// (A S)[p,:] = S A[p,:]ᵀ because S is symmetric.
		brows[p] = make([]float64, s.n)
		s.MulVec(brows[p], arows[p])
	}
	out := mat.NewSymDense(r, nil)
	for p := 0; p < r; p++ {
		for q := p; q < r; q++ {
			var sum float64
			for j, v := range brows[p] {
				sum += v * arows[q][j]
			}
			out.SetSym(p, q, sum)
		}
	}
	return out
}
