package stationary

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"

	"golang.org/x/sync/errgroup"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"warmfit/fit"
)

// The sparse delta method: the same sandwich as errorBars,
//
//	Cov(theta) = A^-1 S A^-1,
//
// with A the plain normal matrix G restricted to the free parameters (or
// off the span the thermal match fixes) and S = U Cov(m) U^T the noise of
// the stationarity conditions, but never formed: only the diagonal is
// needed, and it is split in three with a deflation space W (K vectors):
//
//	A^-1 = L + R,  L = W E^-1 W^T,  E = W^T A W,  R = Pi^T A^-1 Pi,
//	Pi = I - A W E^-1 W^T
//
// (exact for any W; Nicolaides, SIAM J. Numer. Anal. 24, 355 (1987)).
// diag(L S L) is exact from K products with S, diag(L S R) from K solves
// with R, and diag(R S R) is probed: the parameters are coloured so that
// two of one colour are more than sparseColourDistance steps apart in
// the pattern of G, and for each colour c with random signs z_c,
// diag_p = z_p (R S R z_c)_p (probing, Tang and Saad, Numer. Linear
// Algebra Appl. 19, 485 (2012), with random signs as in Hutchinson's
// estimator). Probing needs R S R to decay with distance; A^-1 does not:
// with one calibrated coefficient every error bar shares the scale's, and
// correlations are 0.35 across a 6x6 lattice. The soft modes are slow
// local rescalings theta_p f(x_p) of the direction (a smooth f violates
// the local constraints only through its gradient): W holds the lowest
// eigenvectors of A, by Lanczos started from exactly those (theta times
// the lowest eigenvectors of the site graph's Laplacian) and the lowest
// eigenvectors Solve found. Solves with R are deflated conjugate
// gradients (Saad, Yeung, Erhel, Guyomarc'h, SIAM J. Sci. Comput. 21,
// 1909 (2000)) on Pi A with a Jacobi preconditioner; colours and the K
// solves run in parallel (errgroup), each writing its own slot, with the
// signs seeded by the colour: results do not depend on scheduling.

// The sparse delta method's settings (variables only so that tests can
// vary them). Measured against the dense sandwich on the benchmark's patch
// model with one calibrated coupling (TestSparseErrorBarsMatchDense on
// 6x6: 0.7% rms, 6% at most; one-off runs of the same comparison on 10x10,
// 739 free parameters: distance 1 (71 colours) 2.1% rms, 13% at most,
// distance 2 (204 colours) 0.9% rms, 7% at most; on 12x12, 1079 free
// parameters, distance 2: 1.1% rms, 5.3% at most).
var (
	// sparseDeflation is the number of lowest eigenvectors of A deflated
	// (Lanczos, started from the smooth modes below).
	sparseDeflation = 20
	// sparseColourDistance: parameters of one colour are more than this
	// many steps apart in the pattern of G.
	sparseColourDistance = 2
	// sparseSmoothModes is the number of Laplacian modes that start the
	// deflation's Lanczos run.
	sparseSmoothModes = 24
	// sparseProbeSigns is the number of random-sign draws per colour
	// (each costs two solves per colour).
	sparseProbeSigns = 1
)

// sparseCGTolerance is the relative residual of each solve: 1e-4 gives
// the same standard errors as 1e-7 to four digits on 6x6 (rms 0.0073
// from dense either way) at 30% less time.
var sparseCGTolerance = 1e-4

const sparseCGMaxIter = 5000

// sparseOperator is A of the sparse delta method with its deflation.
type sparseOperator struct {
	n    int
	g    *assembled
	mask []bool      // calibrated: true for free parameters (nil: all free)
	q    [][]float64 // match: orthonormal span removed (nil: none)
	big  float64     // what A gives the removed part
	w    [][]float64 // deflation vectors, orthonormal
	aw   [][]float64 // A w
	eInv *mat.SymDense
	diag []float64 // diag(A) for the Jacobi preconditioner
}

// restrict applies T (the mask or the projection off q) in place.
func (op *sparseOperator) restrict(v []float64) {
	if op.mask != nil {
		for i, free := range op.mask {
			if !free {
				v[i] = 0
			}
		}
	}
	for _, u := range op.q {
		floats.AddScaled(v, -floats.Dot(u, v), u)
	}
}

// apply sets dst = A v = T G T v + big (I - T) v; tmp is scratch.
func (op *sparseOperator) apply(dst, v, tmp []float64) {
	copy(tmp, v)
	op.restrict(tmp)
	op.g.mulVec(dst, tmp)
	op.restrict(dst)
	// (I - T) v = v - T v.
	for i := range dst {
		dst[i] += op.big * (v[i] - tmp[i])
	}
}

// solveR returns R b = Pi^T A^-1 Pi b by deflated, Jacobi-preconditioned
// conjugate gradients on the positive semi-definite Pi A.
func (op *sparseOperator) solveR(b []float64) ([]float64, error) {
	n, k := op.n, len(op.w)
	tmp := make([]float64, n)
	coef := make([]float64, k)
	// deflate: v -= A W E^-1 W^T v (Pi v); returns E^-1 W^T v in coef.
	pi := func(v []float64, basis [][]float64, other [][]float64) {
		wt := make([]float64, k)
		for i := range k {
			wt[i] = floats.Dot(basis[i], v)
		}
		for i := range k {
			coef[i] = 0
			for j := range k {
				coef[i] += op.eInv.At(i, j) * wt[j]
			}
		}
		for i := range k {
			floats.AddScaled(v, -coef[i], other[i])
		}
	}
	applyPiA := func(dst, v []float64) {
		op.apply(dst, v, tmp)
		pi(dst, op.w, op.aw)
	}
	r := append([]float64(nil), b...)
	pi(r, op.w, op.aw)
	x := make([]float64, n)
	norm0 := floats.Norm(r, 2)
	if norm0 == 0 {
		return x, nil
	}
	z := make([]float64, n)
	for i := range z {
		z[i] = r[i] / op.diag[i]
	}
	p := append([]float64(nil), z...)
	ap := make([]float64, n)
	rz := floats.Dot(r, z)
	converged := false
	for it := 0; it < sparseCGMaxIter; it++ {
		applyPiA(ap, p)
		pap := floats.Dot(p, ap)
		if pap <= 0 {
			break
		}
		alpha := rz / pap
		floats.AddScaled(x, alpha, p)
		floats.AddScaled(r, -alpha, ap)
		if floats.Norm(r, 2) < sparseCGTolerance*norm0 {
			converged = true
			break
		}
		for i := range z {
			z[i] = r[i] / op.diag[i]
		}
		next := floats.Dot(r, z)
		beta := next / rz
		rz = next
		for i := range p {
			p[i] = z[i] + beta*p[i]
		}
	}
	if !converged {
		return nil, fmt.Errorf("conjugate gradients did not reach relative residual %.0e in %d iterations", sparseCGTolerance, sparseCGMaxIter)
	}
	// x -> Pi^T x = x - W E^-1 (A W)^T x.
	pi(x, op.aw, op.w)
	return x, nil
}

// noiseOperator applies S~ = T U Cov(m) U^T T (see errorBars for U).
type noiseOperator struct {
	ws    *weighted
	theta []float64
	cov   interface{ MulVec(dst, x []float64) }
	nstr  int
	op    *sparseOperator
}

func (s *noiseOperator) apply(v []float64) []float64 {
	ws := s.ws
	in := append([]float64(nil), v...)
	s.op.restrict(in)
	y := make([]float64, s.nstr)
	for a := range ws.rows() {
		lo, hi, _ := ws.block(a)
		var t float64
		for f := lo; f < hi; f++ {
			t += ws.val[f] * in[ws.param[f]]
		}
		t *= ws.w[a]
		for e := lo; e < hi; e++ {
			y[ws.str[e]] += ws.coef[e] * s.theta[ws.param[e]] * t
		}
	}
	z := make([]float64, s.nstr)
	s.cov.MulVec(z, y)
	out := make([]float64, ws.np)
	for a := range ws.rows() {
		lo, hi, _ := ws.block(a)
		var t float64
		for e := lo; e < hi; e++ {
			t += ws.coef[e] * s.theta[ws.param[e]] * z[ws.str[e]]
		}
		t *= ws.w[a]
		for f := lo; f < hi; f++ {
			out[ws.param[f]] += t * ws.val[f]
		}
	}
	s.op.restrict(out)
	return out
}

// sparseVariances returns diag(A^-1 S A^-1) for the operator (mask or
// q set) by deflation and probing; lowVectors extend the deflation space.
func sparseVariances(sys *System, est *fit.Estimates, ws *weighted, g *assembled, theta []float64, mask []bool, q [][]float64, lowVectors [][]float64) ([]float64, error) {
	n := ws.np
	op := &sparseOperator{n: n, g: g, mask: mask, q: q}
	op.big = max(floats.Max(g.diag), 1)
	if err := op.deflate(sys, theta, lowVectors); err != nil {
		return nil, err
	}
	k := len(op.w)
	noise := &noiseOperator{ws: ws, theta: theta, cov: est.Cov, nstr: len(est.Values), op: op}
	// Y = W E^-1 (np×K), so that L = Y W^T.
	y := make([][]float64, k)
	for i := range k {
		y[i] = make([]float64, n)
		for j := range k {
			floats.AddScaled(y[i], op.eInv.At(i, j), op.w[j])
		}
	}
	colours := colourParams(g, mask)
	// Tasks: K cross-term solves, then one probe per colour and sign draw;
	// each writes its own slot.
	cross := make([][]float64, k) // R S~ w_i
	sw := make([][]float64, k)    // S~ w_i
	probes := make([][]float64, len(colours)*sparseProbeSigns)
	var eg errgroup.Group
	eg.SetLimit(runtime.GOMAXPROCS(0))
	for i := range k {
		eg.Go(func() error {
			sw[i] = noise.apply(op.w[i])
			r, err := op.solveR(sw[i])
			cross[i] = r
			return err
		})
	}
	for c, members := range colours {
		for s := range sparseProbeSigns {
			slot := c*sparseProbeSigns + s
			eg.Go(func() error {
				rng := rand.New(rand.NewPCG(uint64(c)+1, uint64(s)+0x5eed))
				z := make([]float64, n)
				for _, p := range members {
					z[p] = float64(2*rng.IntN(2) - 1)
				}
				r1, err := op.solveR(z)
				if err != nil {
					return err
				}
				r2, err := op.solveR(noise.apply(r1))
				if err != nil {
					return err
				}
				out := make([]float64, n)
				for _, p := range members {
					out[p] = z[p] * r2[p]
				}
				probes[slot] = out
				return nil
			})
		}
	}
	if err := eg.Wait(); err != nil {
		return nil, err
	}
	// W^T S~ W.
	wsw := mat.NewDense(k, k, nil)
	for i := range k {
		for j := range k {
			wsw.Set(i, j, floats.Dot(op.w[i], sw[j]))
		}
	}
	vars := make([]float64, n)
	for p := range n {
		var lsl, lsr float64
		for i := range k {
			lsr += y[i][p] * cross[i][p]
			for j := range k {
				lsl += y[i][p] * y[j][p] * wsw.At(i, j)
			}
		}
		var rsr float64
		for _, pr := range probes {
			rsr += pr[p]
		}
		rsr /= float64(sparseProbeSigns)
		vars[p] = lsl + 2*lsr + rsr
	}
	return vars, nil
}

// colourParams colours the free parameters greedily so that no two of a
// colour share a row of G (neighbours in its pattern), in index order:
// deterministic.
func colourParams(g *assembled, mask []bool) [][]int {
	colour := make([]int, g.n)
	var out [][]int
	used := map[int]bool{}
	for p := range g.n {
		colour[p] = -1
		if mask != nil && !mask[p] {
			continue
		}
		clear(used)
		for i := g.start[p]; i < g.start[p+1]; i++ {
			q := int(g.col[i])
			if q < p && colour[q] >= 0 {
				used[colour[q]] = true
			}
			if sparseColourDistance < 2 {
				continue
			}
			for j := g.start[q]; j < g.start[q+1]; j++ {
				if r := int(g.col[j]); r < p && colour[r] >= 0 {
					used[colour[r]] = true
				}
			}
		}
		c := 0
		for used[c] {
			c++
		}
		colour[p] = c
		if c == len(out) {
			out = append(out, nil)
		}
		out[c] = append(out[c], p)
	}
	return out
}

// smoothSiteModes returns the m lowest eigenvectors of the graph
// Laplacian of the sites (sites adjacent when they share a term), by
// Lanczos: the smoothest functions on the lattice, the first constant.
func smoothSiteModes(sys *System, m int) [][]float64 {
	n := sys.n
	adj := make([][]int, n)
	seen := map[[2]int]bool{}
	for _, t := range sys.terms {
		for i, s := range t.Sites {
			for _, u := range t.Sites[i+1:] {
				key := [2]int{min(s, u), max(s, u)}
				if !seen[key] {
					seen[key] = true
					adj[s] = append(adj[s], u)
					adj[u] = append(adj[u], s)
				}
			}
		}
	}
	lap := func(dst, v []float64) {
		for s := range n {
			x := float64(len(adj[s])) * v[s]
			for _, u := range adj[s] {
				x -= v[u]
			}
			dst[s] = x
		}
	}
	m = min(m, n)
	low, err := lanczosLowest(lap, n, m, nil, 1e-8, 20*n+2000)
	if err != nil && len(low.vectors) < m {
		// Not converged: the Ritz vectors are still smooth; use what there is.
		return low.vectors
	}
	return low.vectors
}

// sparseErrorBars is errorBars for systems beyond Options.DenseLimit:
// the same sandwich (calibrations: the free block; thermal match: off the
// span of the matched directions, plus the match covariance), with the
// diagonal by sparseVariances. The direction's noise is not propagated
// through the thermal match (directionNoise needs the dense covariance):
// a warning says so.
func (res *Result) sparseErrorBars(sys *System, est *fit.Estimates, calRows []int, basis, null [][]float64) error {
	d := res.Direction
	ws := d.ws
	np := ws.np
	theta := res.Theta
	ws.reweight(theta)
	if ws.haveFull {
		// Only systems of at most fullRowLimit rows are weighted with
		// the rows' full covariance, and they rarely pass the dense limit.
		res.Warnings = append(res.Warnings, "the sparse error bars use per-row weights while the solve weighted the rows with their full covariance: they are approximate (raise Options.DenseLimit for the exact sandwich)")
	}
	// G, not the noise-corrected X, as in errorBars.
	saved := append([]float64(nil), ws.r...)
	clear(ws.r)
	g := d.asm
	if g == nil {
		g = newAssembled(ws)
	}
	g.fill(ws)
	copy(ws.r, saved)
	calibrated := make([]bool, np)
	for _, q := range calRows {
		calibrated[q] = true
	}
	if res.Match == nil {
		mask := make([]bool, np)
		for p := range mask {
			mask[p] = !calibrated[p]
		}
		vars, err := sparseVariances(sys, est, ws, g, theta, mask, nil, d.low.vectors)
		if err != nil {
			return err
		}
		for p, v := range vars {
			res.StdErr[p] = math.Sqrt(max(v, 0))
			if calibrated[p] {
				res.StdErr[p] = 0
			}
		}
		return nil
	}
	q := make([][]float64, len(basis))
	for i, b := range basis {
		q[i] = append([]float64(nil), b...)
	}
	orthonormalise(q)
	vars, err := sparseVariances(sys, est, ws, g, theta, nil, q, d.low.vectors)
	if err != nil {
		return err
	}
	m := res.Match
	dirs := matchedDirections(null, basis, np)
	for p := range np {
		v := vars[p]
		v += matchedVariance(dirs, m.tCov, p)
		res.StdErr[p] = math.Sqrt(max(v, 0))
		if calibrated[p] {
			res.StdErr[p] = 0
		}
	}
	res.Warnings = append(res.Warnings, fmt.Sprintf("sparse error bars (%d parameters, beyond the dense limit): the learned direction's noise is not propagated through the thermal match (that needs the dense covariance), so the consistency chi2 counts shot noise only and the error bars leave out the correlation of the matched scale with the direction's own errors", np))
	return nil
}

// deflate builds the deflation space W (theta times smooth site
// functions, and Solve's lowest eigenvectors, restricted and
// orthonormalised), A W, E^-1 and the Jacobi diagonal.
func (op *sparseOperator) deflate(sys *System, theta []float64, lowVectors [][]float64) error {
	n := op.n
	// Deflation space: theta times smooth site functions, and Solve's
	// lowest eigenvectors, restricted and orthonormalised.
	var cand [][]float64
	for _, f := range smoothSiteModes(sys, sparseSmoothModes) {
		v := make([]float64, n)
		for p, members := range sys.params.Members {
			var s float64
			cnt := 0
			for _, k := range members {
				for _, site := range sys.terms[k].Sites {
					s += f[site]
					cnt++
				}
			}
			v[p] = theta[p] * s / float64(max(cnt, 1))
		}
		cand = append(cand, v)
	}
	for _, v := range lowVectors {
		cand = append(cand, append([]float64(nil), v...))
	}
	for _, v := range cand {
		op.restrict(v)
		for _, u := range op.w {
			floats.AddScaled(v, -floats.Dot(u, v), u)
		}
		for _, u := range op.w { // twice is enough (Giraud et al. 2005)
			floats.AddScaled(v, -floats.Dot(u, v), u)
		}
		if nv := floats.Norm(v, 2); nv > 1e-6 {
			floats.Scale(1/nv, v)
			op.w = append(op.w, v)
		}
	}
	// The candidates start a Lanczos run for the lowest eigenvectors of
	// A, which deflate best (probing error 3% of the variance rms with 20
	// of them on 6x6, against 25% with the candidates themselves).
	tmp := make([]float64, n)
	if want := min(sparseDeflation, n-1); want > 0 {
		low, err := lanczosLowest(func(dst, v []float64) { op.apply(dst, v, make([]float64, n)) }, n, want, op.w, 1e-9, 200*want+4000)
		// The splitting A^-1 = L + R is exact for any W: unconverged Ritz
		// vectors (40x40: not converged in 8001 products) only make R
		// less local, so they are kept.
		if err != nil && len(low.vectors) == 0 {
			return fmt.Errorf("lowest modes for the deflation: %w", err)
		}
		op.w = low.vectors
		for _, v := range op.w {
			op.restrict(v)
			if nv := floats.Norm(v, 2); nv > 0 {
				floats.Scale(1/nv, v)
			}
		}
	}
	k := len(op.w)
	g := op.g
	mask := op.mask
	op.diag = make([]float64, n)
	for i := range n {
		op.diag[i] = g.diag[i]
		if (mask != nil && !mask[i]) || op.diag[i] <= 0 {
			op.diag[i] = op.big
		}
	}
	e := mat.NewSymDense(k, nil)
	for i, w := range op.w {
		aw := make([]float64, n)
		op.apply(aw, w, tmp)
		op.aw = append(op.aw, aw)
		for j := 0; j <= i; j++ {
			e.SetSym(j, i, floats.Dot(op.w[j], aw))
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(e) {
		return errors.New("the deflation space is singular for the constraints")
	}
	op.eInv = mat.NewSymDense(k, nil)
	return ch.InverseTo(op.eInv)
}
