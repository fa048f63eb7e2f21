package fit

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"warmfit/cluster"
)

// randomSPD returns a sparse symmetric positive definite matrix: a random
// sparse symmetric matrix made diagonally dominant (Gershgorin's theorem
// then bounds every eigenvalue below by the margin).
func randomSPD(rng *rand.Rand, n, perRow int, margin float64) *cluster.SparseSym {
	dense := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for k := 0; k < perRow; k++ {
			j := rng.IntN(n)
			if j == i {
				continue
			}
			v := rng.NormFloat64()
			dense[i*n+j], dense[j*n+i] = v, v
		}
	}
	for i := 0; i < n; i++ {
		var s float64
		for j := 0; j < n; j++ {
			if j != i {
				s += math.Abs(dense[i*n+j])
			}
		}
		dense[i*n+i] = s + margin*(1+rng.Float64())
	}
	return denseToSparse(n, dense)
}

func denseToSparse(n int, dense []float64) *cluster.SparseSym {
	m := cluster.NewSparseSym(n)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			if v := dense[i*n+j]; v != 0 {
				m.Set(i, j, v)
			}
		}
	}
	return m
}

// Conjugate gradients against a dense LU solve (gonum).
func TestSolveCGMatchesDense(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, n := range []int{1, 7, 60, 200} {
		m := randomSPD(rng, n, 4, 0.5)
		b := make([]float64, n)
		for i := range b {
			b[i] = rng.NormFloat64()
		}
		x := make([]float64, n)
		if _, err := solveCG(m, m.Diag(), b, x, 1e-12, 10*n+50); err != nil {
			t.Fatalf("n=%d: %v", n, err)
		}
		want := denseSolve(t, m, b)
		for i := range x {
			if math.Abs(x[i]-want[i]) > 1e-9*(1+math.Abs(want[i])) {
				t.Fatalf("n=%d: x[%d] = %v, dense solve %v", n, i, x[i], want[i])
			}
		}
	}
}

func denseSolve(t *testing.T, m *cluster.SparseSym, b []float64) []float64 {
	t.Helper()
	n := m.Dim()
	a := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		m.DoRow(i, func(j int, v float64) { a.Set(i, j, v) })
	}
	var x mat.VecDense
	if err := x.SolveVec(a, mat.NewVecDense(n, append([]float64(nil), b...))); err != nil {
		t.Fatal(err)
	}
	return x.RawVector().Data
}

// An indefinite matrix must be reported, not solved: diag(1, -1) has the
// direction (0, 1) of negative curvature.
func TestSolveCGIndefinite(t *testing.T) {
	m := denseToSparse(2, []float64{1, 0, 0, -1})
	x := make([]float64, 2)
	_, err := solveCG(m, m.Diag(), []float64{1, 1}, x, 1e-12, 10)
	if !errors.Is(err, errNotPositive) {
		t.Errorf("err = %v, want errNotPositive", err)
	}
}

// The block solver must give the columns of the inverse, as the single
// solver does (same recurrences), for every column including a partial
// last block.
func TestSolveCGUnitBlockIsInverse(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	n := cgBlockWidth + 9
	m := randomSPD(rng, n, 5, 0.3)
	for first := 0; first < n; first += cgBlockWidth {
		x, _, err := solveCGUnitBlock(m, m.Diag(), first, 1e-12, 10*n)
		if err != nil {
			t.Fatal(err)
		}
		for c := 0; c < cgBlockWidth && first+c < n; c++ {
			u := make([]float64, n)
			u[first+c] = 1
			want := denseSolve(t, m, u)
			for i := 0; i < n; i++ {
				if math.Abs(x[i][c]-want[i]) > 1e-9 {
					t.Fatalf("column %d, row %d: %v, dense %v", first+c, i, x[i][c], want[i])
				}
			}
		}
	}
}

// Both ways of computing diag(P^-1 B P^-1) must agree with the dense
// product formed by gonum (the local solves here end with the whole
// matrix: a random sparse graph has a small diameter).
func TestParamVariancesDenseAndCG(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	n := 70
	p := randomSPD(rng, n, 4, 1)
	b := randomSPD(rng, n, 2, 0.1) // any PSD matrix
	inv := mat.NewDense(n, n, nil)
	for j := 0; j < n; j++ {
		u := make([]float64, n)
		u[j] = 1
		col := denseSolve(t, p, u)
		for i := range col {
			inv.Set(i, j, col[i])
		}
	}
	bd := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		b.DoRow(i, func(j int, v float64) { bd.Set(i, j, v) })
	}
	var tmp, cov mat.Dense
	tmp.Mul(inv, bd)
	cov.Mul(&tmp, inv)
	dense, err := denseVariances(p, b)
	if err != nil {
		t.Fatal(err)
	}
	for _, workers := range []int{1, 2} {
		cg, err := localVariances(p, b, workers, nil)
		if err != nil {
			t.Fatal(err)
		}
		for q := 0; q < n; q++ {
			want := cov.At(q, q)
			if math.Abs(dense[q]-want) > 1e-10*want || math.Abs(cg[q]-want) > 1e-5*want {
				t.Fatalf("var[%d]: dense %v, cg %v, gonum product %v", q, dense[q], cg[q], want)
			}
		}
	}
}

// On a banded matrix (a chain of couplings) the local solves stop long
// before the whole system, and the variances must still agree with the
// dense inverse to the promised accuracy; the radius they needed is
// logged.
func TestLocalVariancesBanded(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	const n = 600
	dense := make([]float64, n*n)
	for i := 0; i < n; i++ {
		dense[i*n+i] = 2 + rng.Float64()
		for d := 1; d <= 3 && i+d < n; d++ {
			v := 0.3 * rng.NormFloat64()
			dense[i*n+i+d], dense[(i+d)*n+i] = v, v
		}
	}
	p := denseToSparse(n, dense)
	bd := make([]float64, n*n)
	for i := 0; i < n; i++ {
		bd[i*n+i] = 0.5 + rng.Float64()
	}
	b := denseToSparse(n, bd)
	want, err := denseVariances(p, b)
	if err != nil {
		t.Fatal(err)
	}
	w := newLocalWork(n)
	vars := make([]float64, n)
	lmin, err := smallestEigenvalue(p)
	if err != nil {
		t.Fatal(err)
	}
	h, err := w.solve(p, b, blockOf(identity(n), 0), 1, lmin/2, vars)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("radius %d hops for the first block (%d parameters), lambda_min ~ %.3g", h, n, lmin)
	if h*3+cgBlockWidth >= n/2 {
		t.Errorf("radius %d: the local solve was not local", h)
	}
	got, err := localVariances(p, b, 2, nil)
	if err != nil {
		t.Fatal(err)
	}
	for q := range got {
		if math.Abs(got[q]-want[q]) > 1e-4*want[q] {
			t.Fatalf("var[%d]: local %v, dense %v", q, got[q], want[q])
		}
	}
}

func identity(n int) []int {
	out := make([]int, n)
	for i := range out {
		out[i] = i
	}
	return out
}
