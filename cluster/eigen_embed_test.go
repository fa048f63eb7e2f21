package cluster

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// embeddingSolve is the alternative Hermitian eigensolver kept for
// comparison: the real symmetric embedding [[A,-B],[B,A]] of dimension 2D
// is diagonalised by the real path; every eigenvalue appears twice, and within each
// group of (numerically) equal eigenvalues a pivoted complex Gram–Schmidt
// picks half as many orthonormal complex vectors a + ib from the real
// eigenvectors [a; b].
func embeddingSolve(h *Hamiltonian) (vals []float64, vecs [][]complex128, ok bool) {
	d := h.Dim()
	re, im := denseMatrix(h)
	n := 2 * d
	a := make([]float64, n*n)
	for r := 0; r < d; r++ {
		for c := 0; c < d; c++ {
			a[r*n+c] = re[r*d+c]
			a[(d+r)*n+d+c] = re[r*d+c]
			a[r*n+d+c] = -im[r*d+c]
			a[(d+r)*n+c] = im[r*d+c]
		}
	}
	// The same real symmetric solver as the real path, for a fair
	// comparison.
	var emb Spectrum
	w := make([]float64, n)
	if emb.solveReal(n, a, w) != nil {
		return nil, nil, false
	}
	scale := math.Max(math.Abs(w[0]), math.Abs(w[n-1]))
	tol := 1e-9 * math.Max(scale, 1)
	for g0 := 0; g0 < n; {
		g1 := g0 + 1
		for g1 < n && w[g1]-w[g1-1] <= tol {
			g1++
		}
		if (g1-g0)%2 != 0 {
			return nil, nil, false
		}
		cands := make([][]complex128, 0, g1-g0)
		for k := g0; k < g1; k++ {
			v := make([]complex128, d)
			for b := 0; b < d; b++ {
				v[b] = complex(a[b*n+k], a[(d+b)*n+k])
			}
			cands = append(cands, v)
		}
		var chosen [][]complex128
		for len(chosen) < (g1-g0)/2 {
			best, bestNorm := -1, 0.0
			for i, v := range cands {
				if nv := cnorm(v); nv > bestNorm {
					best, bestNorm = i, nv
				}
			}
			if bestNorm < 0.1 {
				return nil, nil, false
			}
			u := make([]complex128, d)
			for j := range u {
				u[j] = cands[best][j] / complex(bestNorm, 0)
			}
			chosen = append(chosen, u)
			for _, v := range cands {
				var dot complex128
				for j := range v {
					dot += cmplx.Conj(u[j]) * v[j]
				}
				for j := range v {
					v[j] -= dot * u[j]
				}
			}
		}
		for i, u := range chosen {
			vals = append(vals, w[g0+2*i])
			vecs = append(vecs, u)
		}
		g0 = g1
	}
	return vals, vecs, true
}

func cnorm(v []complex128) float64 {
	var s float64
	for _, x := range v {
		s += real(x)*real(x) + imag(x)*imag(x)
	}
	return math.Sqrt(s)
}

// TestEmbeddingAgrees checks the Householder path against the embedding
// solver: equal eigenvalues, and the same spectral projector onto the
// lowest eigenvectors (basis-independent within degenerate groups), also
// for the degenerate Heisenberg chain in a Y field.
func TestEmbeddingAgrees(t *testing.T) {
	rng := rand.New(rand.NewPCG(25, 26))
	for _, h := range []*Hamiltonian{randomHamiltonian(4, true, rng), heisenberg(4, 1, 0.3, "Y")} {
		s, err := Diagonalize(h)
		if err != nil {
			t.Fatal(err)
		}
		vals, vecs, ok := embeddingSolve(h)
		if !ok {
			t.Fatal("embedding solver failed")
		}
		for k, v := range s.Values() {
			if math.Abs(v-vals[k]) > 1e-12 {
				t.Fatalf("level %d: %v, embedding %v", k, v, vals[k])
			}
		}
		// Projector onto the first 3 states, cut between distinct levels.
		cut := 3
		for cut < len(vals) && vals[cut]-vals[cut-1] < 1e-6 {
			cut++
		}
		d := s.Dim()
		for r := 0; r < d; r++ {
			for c := 0; c < d; c++ {
				var p1, p2 complex128
				for k := 0; k < cut; k++ {
					v := s.Vector(k, nil)
					p1 += v[r] * cmplx.Conj(v[c])
					p2 += vecs[k][r] * cmplx.Conj(vecs[k][c])
				}
				if cmplx.Abs(p1-p2) > 1e-10 {
					t.Fatalf("projector element (%d,%d): %v, embedding %v", r, c, p1, p2)
				}
			}
		}
	}
}
