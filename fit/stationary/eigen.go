package stationary

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// lowEigen holds the lowest eigenpairs of the weighted system, ascending.
type lowEigen struct {
	values  []float64
	vectors [][]float64
	method  string
	matvecs int
}

// denseLowest returns the k lowest eigenpairs of the dense symmetric
// row-major n×n matrix x (gonum's EigenSym).
func denseLowest(x []float64, n, k int) (lowEigen, error) {
	sym := mat.NewSymDense(n, nil)
	for i := range n {
		for j := i; j < n; j++ {
			sym.SetSym(i, j, (x[i*n+j]+x[j*n+i])/2)
		}
	}
	var es mat.EigenSym
	if !es.Factorize(sym, true) {
		return lowEigen{}, errors.New("stationary: dense eigendecomposition failed")
	}
	vals := es.Values(nil)
	var vecs mat.Dense
	es.VectorsTo(&vecs)
	k = min(k, n)
	out := lowEigen{method: "dense", values: vals[:k]}
	for j := range k {
		out.vectors = append(out.vectors, mat.Col(nil, j, &vecs))
	}
	return out, nil
}

// lanczosLowest returns the k lowest eigenpairs of the symmetric operator
// apply on R^n by a thick-restarted Lanczos process with full
// reorthogonalisation (Wu and Simon, SIAM J. Matrix Anal. Appl. 22, 602
// (2000)): the subspace grows by X v of its newest vector to at most
// maxBasis vectors, then restarts from the lowest Ritz vectors. Start
// vectors (may be nil) seed the subspace; a seeded random vector fills
// in. Converged when every wanted Ritz residual is below tol times the
// largest Ritz value in magnitude.
func lanczosLowest(apply func(dst, v []float64), n, k int, start [][]float64, tol float64, maxMatvecs int) (lowEigen, error) {
	maxBasis := min(n, max(4*k+40, 120))
	keep := min(maxBasis/2, 2*k+10)
	rng := rand.New(rand.NewPCG(1, 2))
	var V, W [][]float64
	var T [][]float64 // T[i][j] = V_i . W_j, kept symmetric
	matvecs := 0
	addVector := func(v []float64) bool {
		for pass := 0; pass < 2; pass++ {
			for _, u := range V {
				floats.AddScaled(v, -floats.Dot(u, v), u)
			}
		}
		nv := floats.Norm(v, 2)
		if nv < 1e-10 {
			return false
		}
		floats.Scale(1/nv, v)
		w := make([]float64, n)
		apply(w, v)
		matvecs++
		V, W = append(V, v), append(W, w)
		m := len(V)
		for i := range T {
			T[i] = append(T[i], floats.Dot(V[i], w))
		}
		row := make([]float64, m)
		for j := range m {
			row[j] = floats.Dot(v, W[j])
		}
		T = append(T, row)
		for i := range m - 1 {
			s := (T[i][m-1] + T[m-1][i]) / 2
			T[i][m-1], T[m-1][i] = s, s
		}
		return true
	}
	randomVector := func() []float64 {
		v := make([]float64, n)
		for i := range v {
			v[i] = rng.NormFloat64()
		}
		return v
	}
	for _, s := range start {
		addVector(append([]float64(nil), s...))
	}
	for len(V) == 0 {
		addVector(randomVector())
	}
	for {
		// Grow the subspace by X v of its newest vector.
		for grown := 0; grown < 20 && len(V) < maxBasis; grown++ {
			next := append([]float64(nil), W[len(W)-1]...)
			if !addVector(next) && !addVector(randomVector()) {
				break
			}
		}
		m := len(V)
		t := mat.NewSymDense(m, nil)
		for i := range m {
			for j := i; j < m; j++ {
				t.SetSym(i, j, T[i][j])
			}
		}
		var es mat.EigenSym
		if !es.Factorize(t, true) {
			return lowEigen{}, errors.New("stationary: Lanczos projected eigenproblem failed")
		}
		theta := es.Values(nil)
		var s mat.Dense
		es.VectorsTo(&s)
		scale := math.Max(math.Abs(theta[0]), math.Abs(theta[m-1]))
		want := min(k, m)
		ritz := func(j int) (y, xy []float64) {
			y, xy = make([]float64, n), make([]float64, n)
			for i := range m {
				c := s.At(i, j)
				floats.AddScaled(y, c, V[i])
				floats.AddScaled(xy, c, W[i])
			}
			return y, xy
		}
		converged := m == n
		var firstOpen []float64
		if !converged {
			converged = true
			for j := range want {
				y, xy := ritz(j)
				floats.AddScaled(xy, -theta[j], y)
				if floats.Norm(xy, 2) > tol*scale {
					converged = false
					firstOpen = xy
					break
				}
			}
		}
		if converged || matvecs >= maxMatvecs {
			out := lowEigen{method: "lanczos", values: theta[:want], matvecs: matvecs}
			for j := range want {
				y, _ := ritz(j)
				out.vectors = append(out.vectors, y)
			}
			if !converged {
				return out, fmt.Errorf("stationary: Lanczos not converged after %d products", matvecs)
			}
			return out, nil
		}
		if m >= maxBasis {
			// Thick restart: keep the lowest Ritz vectors, continue from
			// the residual of the first unconverged one.
			nk := min(keep, m)
			nv, nw := make([][]float64, nk), make([][]float64, nk)
			for j := range nk {
				nv[j], nw[j] = ritz(j)
			}
			V, W = nv, nw
			T = make([][]float64, nk)
			for i := range nk {
				T[i] = make([]float64, nk)
				T[i][i] = theta[i]
			}
			if !addVector(firstOpen) {
				addVector(randomVector())
			}
		}
	}
}
