package fit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"

	"golang.org/x/sync/errgroup"
	"gonum.org/v1/gonum/mat"

	"warmfit/cluster"
)

// Local error-bar solves for large lattices.
//
// A column x = P^{-1} u_q of the inverse Hessian decays exponentially away
// from parameter q wherever the expansion converges (the Hessian is the
// Kubo–Mori covariance of local terms, short-ranged at high temperature).
// So the columns of a block of parameters are solved on the neighbourhood
// S of the block only: all parameters within h hops in the sparsity graph
// of P. Extended by zero, the local solution y has the residual
// r = u - P y, which lives on the first shell outside S (plus the CG
// tolerance inside), and the error obeys ||P^{-1} u - y|| <= ||r|| /
// lambda_min(P). The radius h grows until that bound is below
// localRelTol ||y|| for every column of the block. The cost is then
// O(n) for n parameters instead of the O(n^2) of full solves.

// localRelTol is the relative accuracy demanded of every local column
// solution; a variance x^T B x is then accurate to about 2 cond(B) x 1e-4
// relative, 1e-3 for data whose standard errors vary by a factor of 2
// (measured: 4e-8 on a 20x20 lattice, the bound being far from tight):
// below the precision any standard error is quoted to, or known to (the
// data's own variances are estimates, uncertain by 1/sqrt(2 N) relative
// with N shots).
const localRelTol = 1e-4

// localCGTol is the residual tolerance of the CG solves on the
// neighbourhoods, small enough to stay below localRelTol.
const localCGTol = 1e-7

// localVariances returns diag(P^{-1} B P^{-1}) by local solves; see the
// comment above. Blocks are consecutive runs of order (a permutation of
// the parameters, nil for the identity), which should put neighbours
// together. Results do not depend on the number of workers.
func localVariances(p, b *cluster.SparseSym, workers int, order []int) ([]float64, error) {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	n := p.Dim()
	if order == nil {
		order = make([]int, n)
		for i := range order {
			order[i] = i
		}
	}
	lmin, err := smallestEigenvalue(p)
	if err != nil {
		return nil, err
	}
	// Lanczos approaches lambda_min from above; halving it is a heuristic
	// margin, not a proof, so the accuracy of the local solves is an
	// estimate (stated as such in the report's method word).
	lbound := lmin / 2
	vars := make([]float64, n)

	// The radius for all blocks is the one the first block needs, so that
	// each block's work (and result) does not depend on scheduling.
	w0 := newLocalWork(n)
	h0, err := w0.solve(p, b, blockOf(order, 0), 1, lbound, vars)
	if err != nil {
		return nil, err
	}
	var g errgroup.Group
	g.SetLimit(workers)
	works := make(chan *localWork, workers)
	for range workers {
		works <- newLocalWork(n)
	}
	for first := cgBlockWidth; first < n; first += cgBlockWidth {
		g.Go(func() error {
			w := <-works
			defer func() { works <- w }()
			_, err := w.solve(p, b, blockOf(order, first), h0, lbound, vars)
			return err
		})
	}
	if err := g.Wait(); err != nil {
		return nil, err
	}
	return checkVariances(vars)
}

// localWork is one worker's scratch space.
type localWork struct {
	loc   []int32 // global -> local index in the neighbourhood, -1 outside
	hop   []int32 // BFS depth + 1, 0 unvisited
	out   []block // residual on the outer shell, by global index
	outAt []int32 // global indices with a residual
}

func newLocalWork(n int) *localWork {
	w := &localWork{loc: make([]int32, n), hop: make([]int32, n), out: make([]block, n)}
	for i := range w.loc {
		w.loc[i] = -1
	}
	return w
}

// blockOf returns the block of parameters starting at position first of
// order.
func blockOf(order []int, first int) []int {
	return order[first:min(first+cgBlockWidth, len(order))]
}

// solve fills vars for a block of at most cgBlockWidth parameters,
// starting from radius h and growing it until the error bound holds. It
// returns the radius used.
func (w *localWork) solve(p, b *cluster.SparseSym, members []int, h int, lbound float64, vars []float64) (int, error) {
	for ; ; h++ {
		set, whole := w.neighbourhood(p, members, h)
		sub, diag := w.subMatrix(p, set)
		cols := make([]int, len(members))
		for c, q := range members {
			cols[c] = int(w.loc[q])
		}
		x, _, err := solveCGUnitColumns(sub, diag, cols, localCGTol, 10*len(set)+100)
		if err != nil {
			w.reset(set)
			return h, fmt.Errorf("error bars of parameter %d and its block: %v (the Hessian at the solution is not positive definite or badly conditioned)", members[0], err)
		}
		ok := whole || w.boundOK(p, set, x, len(members), lbound)
		if ok {
			// var_c = x_c^T B x_c over the neighbourhood (x is zero
			// outside it).
			var acc block
			for i, g := range set {
				xi := &x[i]
				bcols, bvals := b.Row(g)
				for e, k := range bcols {
					j := w.loc[k]
					if j < 0 {
						continue
					}
					v := bvals[e]
					xj := &x[j]
					for c := range acc {
						acc[c] += xi[c] * v * xj[c]
					}
				}
			}
			for c, q := range members {
				vars[q] = acc[c]
			}
		}
		w.reset(set)
		if ok {
			return h, nil
		}
	}
}

// neighbourhood returns, sorted, the parameters within h hops of members
// in the sparsity graph of p, setting w.loc for them; whole reports that
// it is every parameter.
func (w *localWork) neighbourhood(p *cluster.SparseSym, members []int, h int) (set []int, whole bool) {
	frontier := make([]int, 0, len(members))
	for _, q := range members {
		w.hop[q] = 1
		frontier = append(frontier, q)
		set = append(set, q)
	}
	for d := 1; d <= h && len(frontier) > 0; d++ {
		var next []int
		for _, i := range frontier {
			cols, _ := p.Row(i)
			for _, j32 := range cols {
				j := int(j32)
				if w.hop[j] == 0 {
					w.hop[j] = int32(d + 1)
					next = append(next, j)
					set = append(set, j)
				}
			}
		}
		frontier = next
	}
	slices.Sort(set)
	for i, g := range set {
		w.loc[g] = int32(i)
	}
	return set, len(set) == p.Dim()
}

// subMatrix returns the principal submatrix of p on set (w.loc set) and
// its diagonal.
func (w *localWork) subMatrix(p *cluster.SparseSym, set []int) (*cluster.SparseSym, []float64) {
	rowPtr := make([]int, len(set)+1)
	var subCol []int32
	var subVal []float64
	diag := make([]float64, len(set))
	for i, g := range set {
		cols, vals := p.Row(g)
		for e, k := range cols {
			if j := w.loc[k]; j >= 0 {
				subCol = append(subCol, j)
				subVal = append(subVal, vals[e])
				if int(j) == i {
					diag[i] = vals[e]
				}
			}
		}
		rowPtr[i+1] = len(subCol)
	}
	// set is sorted, so the local columns keep increasing.
	return cluster.NewSparseSymCSR(len(set), rowPtr, subCol, subVal), diag
}

// boundOK reports whether ||r_c|| / lbound <= localRelTol ||x_c|| for
// every column, with r_c the residual of the zero-extended solution
// outside the neighbourhood plus the CG tolerance inside.
func (w *localWork) boundOK(p *cluster.SparseSym, set []int, x []block, ncols int, lbound float64) bool {
	// P is symmetric: (P y)_j for j outside = sum over i in set of P_ij y_i.
	for i, g := range set {
		xi := &x[i]
		cols, vals := p.Row(g)
		for e, j := range cols {
			if w.loc[j] >= 0 {
				continue
			}
			if w.out[j] == (block{}) {
				w.outAt = append(w.outAt, j)
			}
			v := vals[e]
			oj := &w.out[j]
			for c := range oj {
				oj[c] += v * xi[c]
			}
		}
	}
	var rr, xx block
	for _, j := range w.outAt {
		oj := &w.out[j]
		for c := range rr {
			rr[c] += oj[c] * oj[c]
		}
		*oj = block{}
	}
	w.outAt = w.outAt[:0]
	for i := range set {
		for c := range xx {
			xx[c] += x[i][c] * x[i][c]
		}
	}
	for c := 0; c < ncols; c++ {
		bound := (math.Sqrt(rr[c]) + localCGTol) / lbound
		if !(bound <= localRelTol*math.Sqrt(xx[c])) {
			return false
		}
	}
	return true
}

func (w *localWork) reset(set []int) {
	for _, g := range set {
		w.loc[g] = -1
		w.hop[g] = 0
	}
}

// smallestEigenvalue estimates lambda_min(p) by the Lanczos method with
// full reorthogonalisation (Golub and Van Loan, Matrix Computations,
// section 10.1) from a fixed pseudo-random start: the smallest Ritz value
// after up to 80 steps, an upper bound that converges to lambda_min. It
// reports a matrix that is not positive definite.
func smallestEigenvalue(p *cluster.SparseSym) (float64, error) {
	n := p.Dim()
	k := min(n, 80)
	rng := rand.New(rand.NewPCG(0x1a2b, 0x3c4d))
	v := make([]float64, n)
	for i := range v {
		v[i] = rng.NormFloat64()
	}
	scale(v, 1/norm2(v))
	basis := [][]float64{v}
	alpha := make([]float64, 0, k)
	beta := make([]float64, 0, k)
	w := make([]float64, n)
	for j := 0; j < k; j++ {
		p.MulVec(w, basis[j])
		a := dot(w, basis[j])
		alpha = append(alpha, a)
		// Full reorthogonalisation, twice for safety.
		for range 2 {
			for _, u := range basis {
				axpy(w, -dot(w, u), u)
			}
		}
		bnorm := norm2(w)
		if j == k-1 || bnorm <= 1e-12*math.Abs(a) {
			break
		}
		beta = append(beta, bnorm)
		next := make([]float64, n)
		copy(next, w)
		scale(next, 1/bnorm)
		basis = append(basis, next)
	}
	m := len(alpha)
	t := mat.NewSymDense(m, nil)
	for i := 0; i < m; i++ {
		t.SetSym(i, i, alpha[i])
		if i+1 < m {
			t.SetSym(i, i+1, beta[i])
		}
	}
	var eig mat.EigenSym
	if !eig.Factorize(t, false) {
		return 0, fmt.Errorf("eigenvalues of the Lanczos matrix did not converge")
	}
	lmin := eig.Values(nil)[0]
	if !(lmin > 0) {
		return 0, fmt.Errorf("the Hessian of the dual at the solution is not positive definite (Lanczos estimate of its smallest eigenvalue %.3g)", lmin)
	}
	return lmin, nil
}

func scale(v []float64, s float64) {
	for i := range v {
		v[i] *= s
	}
}

func axpy(y []float64, a float64, x []float64) {
	for i, v := range x {
		y[i] += a * v
	}
}
