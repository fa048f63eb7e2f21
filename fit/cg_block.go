package fit

import (
	"fmt"
	"math"

	"warmfit/cluster"
)

// cgBlockWidth is the number of right-hand sides solved together: wide
// enough that the sparse product streams each matrix entry once for many
// vectors, narrow enough that a block of vectors stays in cache.
const cgBlockWidth = 32

// block holds one entry of each of the cgBlockWidth vectors solved
// together; a fixed-size array lets the compiler drop bounds checks.
type block [cgBlockWidth]float64

// solveCGUnitBlock solves M x_c = u_{first+c} for the unit vectors of
// columns first..first+cgBlockWidth-1 (columns past the matrix size get a
// zero right-hand side); see solveCGUnitColumns.
func solveCGUnitBlock(m *cluster.SparseSym, diag []float64, first int, tol float64, maxIter int) ([]block, int, error) {
	cols := make([]int, 0, cgBlockWidth)
	for c := first; c < first+cgBlockWidth && c < m.Dim(); c++ {
		cols = append(cols, c)
	}
	return solveCGUnitColumns(m, diag, cols, tol, maxIter)
}

// solveCGUnitColumns solves M x_c = u_{cols[c]} for up to cgBlockWidth
// unit vectors by Jacobi-preconditioned conjugate gradients, one
// independent iteration per column (the recurrences of solveCG) sharing
// the sparse matrix–block products. x[i][c] is entry i of solution c;
// unused columns of the block are zero. Each column stops when its
// residual falls to tol (its right-hand side has norm 1). It also returns
// the number of iterations.
func solveCGUnitColumns(m *cluster.SparseSym, diag []float64, cols []int, tol float64, maxIter int) ([]block, int, error) {
	const w = cgBlockWidth
	n := m.Dim()
	x := make([]block, n)
	r := make([]block, n)
	z := make([]block, n)
	p := make([]block, n)
	q := make([]block, n)
	inv := make([]float64, n)
	for i, d := range diag {
		inv[i] = 1
		if d > 0 {
			inv[i] = 1 / d
		}
	}
	var rz, pq, rr, alpha, beta block
	var done [w]bool
	left, it := 0, 0
	if len(cols) > w {
		panic(fmt.Sprintf("fit: %d columns for a block of %d", len(cols), w))
	}
	for c := 0; c < w; c++ {
		if c < len(cols) {
			r[cols[c]][c] = 1
			left++
		} else {
			done[c] = true
		}
	}
	for i := range r {
		for c := range r[i] {
			z[i][c] = inv[i] * r[i][c]
			rz[c] += r[i][c] * z[i][c]
		}
	}
	copy(p, z)
	for it = 1; it <= maxIter && left > 0; it++ {
		// q = M p for the whole block.
		for i := 0; i < n; i++ {
			var acc block
			cols, vals := m.Row(i)
			for e, j := range cols {
				v := vals[e]
				pj := &p[j]
				for c := range acc {
					acc[c] += v * pj[c]
				}
			}
			q[i] = acc
		}
		pq = block{}
		for i := range p {
			for c := range pq {
				pq[c] += p[i][c] * q[i][c]
			}
		}
		for c := range alpha {
			alpha[c] = 0
			if done[c] {
				continue
			}
			if !(pq[c] > 0) {
				return nil, it, fmt.Errorf("column %d: %w", cols[c], errNotPositive)
			}
			alpha[c] = rz[c] / pq[c]
		}
		rr = block{}
		for i := range x {
			xi, ri, pi, qi := &x[i], &r[i], &p[i], &q[i]
			for c := range rr {
				xi[c] += alpha[c] * pi[c]
				ri[c] -= alpha[c] * qi[c]
				rr[c] += ri[c] * ri[c]
			}
		}
		for c := range rr {
			if !done[c] && math.Sqrt(rr[c]) <= tol {
				done[c] = true
				left--
			}
		}
		var rzNew block
		for i := range z {
			zi, ri := &z[i], &r[i]
			for c := range rzNew {
				zi[c] = inv[i] * ri[c]
				rzNew[c] += ri[c] * zi[c]
			}
		}
		for c := range beta {
			beta[c] = 0
			if !done[c] {
				beta[c] = rzNew[c] / rz[c]
				rz[c] = rzNew[c]
			}
		}
		var keep block // 1 for running columns, 0 for finished ones
		for c := range keep {
			if !done[c] {
				keep[c] = 1
			}
		}
		for i := range p {
			pi, zi := &p[i], &z[i]
			for c := range pi {
				pi[c] = keep[c] * (zi[c] + beta[c]*pi[c])
			}
		}
	}
	if left > 0 {
		return nil, it, fmt.Errorf("conjugate gradients did not converge for %d columns in %d iterations", left, maxIter)
	}
	return x, it - 1, nil
}
