package fit

import "warmfit/cluster"

// responseMatrix reads the expansion's response as a termMatrix.
type responseMatrix struct{ s *cluster.SparseSym }

func (m responseMatrix) dim() int { return m.s.N }

func (m responseMatrix) doRow(i int, fn func(j int, v float64)) {
	for p := m.s.RowPtr[i]; p < m.s.RowPtr[i+1]; p++ {
		fn(int(m.s.Col[p]), m.s.Val[p])
	}
}

// covMatrix reads a data covariance as a termMatrix.
type covMatrix struct{ s *SparseSym }

func (m covMatrix) dim() int { return m.s.Dim() }

func (m covMatrix) doRow(i int, fn func(j int, v float64)) { m.s.DoRow(i, fn) }

// diagMatrix is a diagonal termMatrix.
type diagMatrix []float64

func (m diagMatrix) dim() int { return len(m) }

func (m diagMatrix) doRow(i int, fn func(j int, v float64)) {
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

func (m denseTermMatrix) dim() int { return m.n }

func (m denseTermMatrix) doRow(i int, fn func(j int, v float64)) {
	for j, v := range m.a[i*m.n : (i+1)*m.n] {
		if v != 0 {
			fn(j, v)
		}
	}
}
