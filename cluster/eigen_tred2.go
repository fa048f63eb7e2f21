package cluster

import "math"

// smallReductionDim is the dimension up to which real symmetric matrices
// are reduced to tridiagonal form by the plain loops of householderReduce
// rather than LAPACK Dsytrd/Dorgtr. The blocked LAPACK routines hand tiny
// blocks to a Dgemm that starts goroutines of its own; inside the
// expansion, which already runs one cluster per worker, that costs more
// than the arithmetic (measured: 32×32 went from about 1 ms to 0.1 ms).
const smallReductionDim = 128

// householderReduce reduces the symmetric n×n matrix v (row-major, both
// triangles set; only the lower one is read) to tridiagonal form
// A = Q T Q^T by Householder reflections, overwriting v with Q. On return
// d holds the diagonal of T and e[i] = T[i][i+1] for i < n-1.
//
// This is the Householder tridiagonalisation with accumulated
// transformations of Martin, Reinsch and Wilkinson (Numer. Math. 11, 181
// (1968), procedure tred2), in the loop order of the public-domain JAMA
// library's port. e needs length n (its last element is scratch).
func householderReduce(n int, v, d, e []float64) {
	at := func(i, j int) *float64 { return &v[i*n+j] }
	for j := 0; j < n; j++ {
		d[j] = *at(n-1, j)
	}
	for i := n - 1; i > 0; i-- {
		scale, h := 0.0, 0.0
		for k := 0; k < i; k++ {
			scale += math.Abs(d[k])
		}
		if scale == 0 {
			e[i] = d[i-1]
			for j := 0; j < i; j++ {
				d[j] = *at(i-1, j)
				*at(i, j) = 0
				*at(j, i) = 0
			}
		} else {
			for k := 0; k < i; k++ {
				d[k] /= scale
				h += d[k] * d[k]
			}
			f := d[i-1]
			g := math.Sqrt(h)
			if f > 0 {
				g = -g
			}
			e[i] = scale * g
			h -= f * g
			d[i-1] = f - g
			for j := 0; j < i; j++ {
				e[j] = 0
			}
			for j := 0; j < i; j++ {
				f = d[j]
				*at(j, i) = f
				g = e[j] + *at(j, j)*f
				for k := j + 1; k <= i-1; k++ {
					g += *at(k, j) * d[k]
					e[k] += *at(k, j) * f
				}
				e[j] = g
			}
			f = 0
			for j := 0; j < i; j++ {
				e[j] /= h
				f += e[j] * d[j]
			}
			hh := f / (h + h)
			for j := 0; j < i; j++ {
				e[j] -= hh * d[j]
			}
			for j := 0; j < i; j++ {
				f = d[j]
				g = e[j]
				for k := j; k <= i-1; k++ {
					*at(k, j) -= f*e[k] + g*d[k]
				}
				d[j] = *at(i-1, j)
				*at(i, j) = 0
			}
		}
		d[i] = h
	}
	// Accumulate the transformations into Q.
	for i := 0; i < n-1; i++ {
		*at(n-1, i) = *at(i, i)
		*at(i, i) = 1
		h := d[i+1]
		if h != 0 {
			for k := 0; k <= i; k++ {
				d[k] = *at(k, i+1) / h
			}
			for j := 0; j <= i; j++ {
				g := 0.0
				for k := 0; k <= i; k++ {
					g += *at(k, i+1) * *at(k, j)
				}
				for k := 0; k <= i; k++ {
					*at(k, j) -= g * d[k]
				}
			}
		}
		for k := 0; k <= i; k++ {
			*at(k, i+1) = 0
		}
	}
	for j := 0; j < n; j++ {
		d[j] = *at(n-1, j)
		*at(n-1, j) = 0
	}
	*at(n-1, n-1) = 1
	// e[i] held T[i][i-1]; shift to the T[i][i+1] convention.
	for i := 0; i < n-1; i++ {
		e[i] = e[i+1]
	}
	e[n-1] = 0
}
