package cluster

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// SparseSym is the one sparse symmetric matrix of the module: the
// response d<E_k>/d lambda_j of the expansion (only term pairs that share
// a cluster are stored), the covariance of term estimates in package fit
// (only pairs that share shots), and the fitter's parameter-space
// Hessians and data covariances (projections A^T M A, their conjugate-
// gradient products, the neighbourhood sub-blocks of the local error bars
// and, for small problems, the dense copy a Cholesky factorises). It
// lives here because the expansion produces the first of them and data
// flow from cluster to fit.
//
// Both triangles are stored, row by row, with the columns of each row
// increasing; so every product and every iteration visits the entries in
// a fixed order and gives bit-identical results from run to run. Entries
// never set read as zero. Set and Add on (i, j) change (j, i) too, which
// keeps the matrix symmetric; NewSparseSymCSR takes a matrix whose
// symmetry the caller guarantees. Rows are expected to be short (tens of
// entries): lookups are binary searches and an insertion shifts one row.
//
// Methods that take indices panic when they are out of range. A
// SparseSym may be read from several goroutines at once; Set and Add need
// exclusive access.
type SparseSym struct {
	n    int
	cols [][]int32   // cols[i]: stored columns of row i, increasing
	vals [][]float64 // vals[i][p]: entry (i, cols[i][p])
}

// NewSparseSym returns an n×n symmetric matrix with no stored entries.
// Columns are stored as int32, so it panics for n > math.MaxInt32 (and
// for n < 0).
func NewSparseSym(n int) *SparseSym {
	if n < 0 || n > math.MaxInt32 {
		panic(fmt.Sprintf("cluster: SparseSym dimension %d out of range", n))
	}
	return &SparseSym{n: n, cols: make([][]int32, n), vals: make([][]float64, n)}
}

// NewSparseSymCSR returns the n×n matrix whose row i holds the columns
// col[rowPtr[i]:rowPtr[i+1]] (increasing) with values
// val[rowPtr[i]:rowPtr[i+1]]: compressed-row form with both triangles.
// The matrix must be symmetric; that is not checked. The new matrix
// uses col and val as its storage (the caller must not change them
// afterwards). It panics when rowPtr does not have length n+1 and
// increase from 0 to len(col) = len(val), or when a row's columns are
// not increasing within 0..n-1.
func NewSparseSymCSR(n int, rowPtr []int, col []int32, val []float64) *SparseSym {
	s := NewSparseSym(n)
	if len(rowPtr) != n+1 || rowPtr[0] != 0 || rowPtr[n] != len(col) || len(col) != len(val) {
		panic(fmt.Sprintf("cluster: NewSparseSymCSR: %d row pointers for dimension %d and %d, %d entries",
			len(rowPtr), n, len(col), len(val)))
	}
	for i := 0; i < n; i++ {
		a, b := rowPtr[i], rowPtr[i+1]
		if b < a {
			panic(fmt.Sprintf("cluster: NewSparseSymCSR: row pointers decrease at row %d", i))
		}
		for p := a; p < b; p++ {
			if c := col[p]; c < 0 || int(c) >= n || (p > a && c <= col[p-1]) {
				panic(fmt.Sprintf("cluster: NewSparseSymCSR: row %d: column %d out of order or range", i, c))
			}
		}
		// Full slice expressions: an insertion into one row reallocates
		// that row instead of overwriting the next.
		s.cols[i], s.vals[i] = col[a:b:b], val[a:b:b]
	}
	return s
}

// Dim returns the number of rows (and columns).
func (s *SparseSym) Dim() int { return s.n }

func (s *SparseSym) check(i, j int) {
	if i < 0 || i >= s.n || j < 0 || j >= s.n {
		panic(fmt.Sprintf("cluster: SparseSym index (%d,%d) out of range for dimension %d", i, j, s.n))
	}
}

// find returns the position of column j in row i and whether it is stored.
func (s *SparseSym) find(i, j int) (int, bool) {
	return slices.BinarySearch(s.cols[i], int32(j))
}

// At returns entry (i, j); zero when it is not stored.
func (s *SparseSym) At(i, j int) float64 {
	s.check(i, j)
	if p, ok := s.find(i, j); ok {
		return s.vals[i][p]
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
			s.vals[i][p] += v
		} else {
			s.vals[i][p] = v
		}
		return
	}
	s.cols[i] = slices.Insert(s.cols[i], p, int32(j))
	s.vals[i] = slices.Insert(s.vals[i], p, v)
}

// Row returns the stored columns of row i, increasing, and their values.
// The slices are the matrix's storage: read them, do not change or
// append to them, and do not keep them across a Set or Add.
func (s *SparseSym) Row(i int) (cols []int32, vals []float64) {
	s.check(i, i)
	return s.cols[i], s.vals[i]
}

// DoRow calls fn for every stored entry of row i, by increasing column.
func (s *SparseSym) DoRow(i int, fn func(j int, v float64)) {
	s.check(i, i)
	for p, c := range s.cols[i] {
		fn(int(c), s.vals[i][p])
	}
}

// Do calls fn once for every stored entry of the upper triangle (i <= j),
// row by row and by increasing column.
func (s *SparseSym) Do(fn func(i, j int, v float64)) {
	for i, cols := range s.cols {
		for p, c := range cols {
			if int(c) >= i {
				fn(i, int(c), s.vals[i][p])
			}
		}
	}
}

// NNZ returns the number of stored entries of the upper triangle,
// diagonal included.
func (s *SparseSym) NNZ() int {
	c := 0
	for i, cols := range s.cols {
		p, _ := slices.BinarySearch(cols, int32(i))
		c += len(cols) - p
	}
	return c
}

// MulVec sets dst = S x. dst and x must have length Dim and must not
// share memory.
func (s *SparseSym) MulVec(dst, x []float64) {
	if len(dst) != s.n || len(x) != s.n {
		panic(fmt.Sprintf("cluster: SparseSym.MulVec lengths %d, %d for dimension %d", len(dst), len(x), s.n))
	}
	for i, cols := range s.cols {
		vals := s.vals[i]
		var sum float64
		for p, c := range cols {
			sum += vals[p] * x[c]
		}
		dst[i] = sum
	}
}

// Diag returns a new slice with the diagonal.
func (s *SparseSym) Diag() []float64 {
	d := make([]float64, s.n)
	for i, cols := range s.cols {
		if p, ok := slices.BinarySearch(cols, int32(i)); ok {
			d[i] = s.vals[i][p]
		}
	}
	return d
}

// SymDense returns a new dense copy, for the dense factorisations of
// small problems.
func (s *SparseSym) SymDense() *mat.SymDense {
	d := mat.NewSymDense(s.n, nil)
	s.Do(func(i, j int, v float64) { d.SetSym(i, j, v) })
	return d
}

// Sandwich returns A S Aᵀ for an r×Dim matrix A: the covariance of
// linear functions A x of a vector x with covariance S (error
// propagation). Cost is r×(stored entries) + r²×Dim.
func (s *SparseSym) Sandwich(a mat.Matrix) *mat.SymDense {
	r, c := a.Dims()
	if c != s.n {
		panic(fmt.Sprintf("cluster: SparseSym.Sandwich: A has %d columns, want %d", c, s.n))
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
