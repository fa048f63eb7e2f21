package fit

// Term-space matrices. The expansion's response and a data covariance
// (both *cluster.SparseSym) are read through termMatrix directly; the
// two types here complete it for the diagonal covariance of independent
// estimates and for dense references in tests.

// diagMatrix is a diagonal termMatrix.
type diagMatrix []float64

// Dim returns the dimension.
func (m diagMatrix) Dim() int { return len(m) }

// DoRow calls fn for the diagonal element of row i when it is not zero.
func (m diagMatrix) DoRow(i int, fn func(j int, v float64)) {
	if m[i] != 0 {
		fn(i, m[i])
	}
}

// denseTermMatrix is a dense symmetric termMatrix in row-major order
// (small systems, tests and exact references).
type denseTermMatrix struct {
	n int
	a []float64
}

// Dim returns the dimension.
func (m denseTermMatrix) Dim() int { return m.n }

// DoRow calls fn for the non-zero elements of row i.
func (m denseTermMatrix) DoRow(i int, fn func(j int, v float64)) {
	for j, v := range m.a[i*m.n : (i+1)*m.n] {
		if v != 0 {
			fn(j, v)
		}
	}
}
