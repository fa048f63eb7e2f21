package cluster

import (
	"fmt"
	"math"
	"math/bits"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
)

// responseBudget bounds the number of float64 values held for the
// weighted matrix elements of all operators at once (8 MB). A variable so
// that tests can force many blocks.
var responseBudget = 1 << 20

// responseWork is the reusable workspace of Response.
type responseWork struct {
	sk    []float64 // sqrt(f_nm k_nm) on the current block of eigenstate pairs
	w     []float64 // P V on the block's columns; stacked real over imaginary
	w2    []float64 // complex case: Re + Im of P V on the block's columns
	vdiff []float64 // complex case: Re V - Im V
	m     []float64 // <n|P|m> on the block, real part then imaginary part
	y     []float64 // weighted matrix elements of every operator, one row each
	cov   []float64
	mean  []float64
	odd   []bool
}

func (r *responseWork) grow(p *[]float64, n int) []float64 {
	*p = grow(*p, n)
	return *p
}

// Response stores in dst[a*len(ops)+b] the derivative d<ops[a]>/dc_b,
// where c_b is the coefficient of ops[b] added to the Hamiltonian:
//
//	d<A>/dc_B = -beta (<A;B> - <A><B>),
//	<A;B>     = sum_{n,m} k_nm Re(<n|A|m> <m|B|n>),
//	k_nm      = (1/beta) ∫_0^beta ds e^{-(beta-s) E_m} e^{-s E_n} / Z
//	          = (w_n - w_m) / (beta (E_m - E_n)),
//
// with w the normalised Boltzmann weights: -beta times the Kubo–Mori
// (Bogoliubov) covariance. It is evaluated as k_nm = w_n (1 - e^{-x})/x,
// x = beta (E_m - E_n) >= 0 with n the lower level, using expm1, so exact
// and near degeneracies (x -> 0, k_nm -> w_n) are as accurate as distinct
// levels and nothing overflows at large beta. The result is symmetric and
// its diagonal is non-positive. dst must have at least len(ops)^2
// elements; every operator must act within the qubits of the Hamiltonian.
//
// Cost: O(len(ops) · Dim² · active) for the matrix elements (BLAS Dgemm,
// only pairs n <= m with n among the thermally active states; three times
// that for complex eigenvectors) plus O(len(ops)² · Dim · active) for the
// covariances.
func (t *Thermal) Response(ops []PauliString, dst []float64) {
	n := len(ops)
	if len(dst) < n*n {
		panic(fmt.Sprintf("cluster: Response needs %d destination slots, have %d", n*n, len(dst)))
	}
	s := t.spec
	for _, p := range ops {
		if !p.within(s.nq) {
			panic(fmt.Sprintf("cluster: Pauli string acts outside qubits 0..%d", s.nq-1))
		}
	}
	dst = dst[:n*n]
	clear(dst)
	if n == 0 || t.beta == 0 {
		// At infinite temperature the state does not depend on H.
		return
	}
	r := &t.resp
	d, na := s.dim, t.active
	parts := 1
	if !s.real {
		parts = 2
	}
	mean := r.grow(&r.mean, n)
	if cap(r.odd) < n {
		r.odd = make([]bool, n)
	}
	odd := r.odd[:n]
	for a, p := range ops {
		mean[a] = t.Expect(p)
		odd[a] = s.real && p.NumY()&1 == 1
	}

	if !s.real {
		vd := r.grow(&r.vdiff, d*d)
		for i := range vd {
			vd[i] = s.vecs[i] - s.vecs[d*d+i]
		}
	}
	// Eigenstate rows are processed in blocks of c so that the weighted
	// matrix elements of all operators fit the budget.
	c := min(na, max(1, responseBudget/(n*d*parts)))
	cov := r.grow(&r.cov, n*n)
	clear(cov)
	bl := blas64.Implementation()
	for n0 := 0; n0 < na; n0 += c {
		rows := min(c, na-n0)
		cols := d - n0 // pairs (n, m) with m >= n0
		t.fillPairWeights(n0, rows, cols)
		rowLen := parts * rows * cols
		y := r.grow(&r.y, n*rowLen)
		for a, p := range ops {
			t.matrixElements(p, n0, rows, cols)
			ya := y[a*rowLen : (a+1)*rowLen]
			m := r.m
			// Centre the diagonal so that no <A><B> is subtracted later.
			for j := 0; j < rows; j++ {
				m[j*cols+j] -= mean[a]
			}
			for i, sk := range r.sk[:rows*cols] {
				ya[i] = sk * m[i]
			}
			if parts == 2 {
				mi := m[rows*cols:]
				for i, sk := range r.sk[:rows*cols] {
					ya[rows*cols+i] = sk * mi[i]
				}
			}
		}
		bl.Dsyrk(blas.Upper, blas.NoTrans, n, rowLen, 1, y, rowLen, 1, cov, n)
	}
	for a := 0; a < n; a++ {
		for b := a; b < n; b++ {
			v := 0.0
			if odd[a] == odd[b] {
				v = -t.beta * cov[a*n+b]
			}
			dst[a*n+b] = v
			dst[b*n+a] = v
		}
	}
}

// fillPairWeights sets r.sk[j*cols+i] = sqrt(f k_nm) for n = n0+j and
// m = n0+i, with f = 2 for m > n (the pair (m, n) is folded in), 1 on the
// diagonal and 0 below it.
func (t *Thermal) fillPairWeights(n0, rows, cols int) {
	r := &t.resp
	sk := r.grow(&r.sk, rows*cols)
	e := t.spec.values
	for j := 0; j < rows; j++ {
		nn := n0 + j
		row := sk[j*cols : (j+1)*cols]
		clear(row[:j])
		wn := t.weights[nn]
		row[j] = math.Sqrt(wn)
		for i := j + 1; i < cols; i++ {
			x := t.beta * (e[n0+i] - e[nn])
			row[i] = math.Sqrt(2 * wn * kuboMoriFactor(x))
		}
	}
}

// kuboMoriFactor returns (1 - exp(-x))/x for x >= 0, which is 1 at x = 0.
func kuboMoriFactor(x float64) float64 {
	if x == 0 {
		return 1
	}
	return -math.Expm1(-x) / x
}

// matrixElements sets r.m to <n|P|m> for n = n0..n0+rows-1 and
// m = n0..n0+cols-1 (row-major, rows×cols), followed in the complex case
// by the imaginary parts. In the real case an operator with an odd number
// of Y letters is represented by the real matrix of P/i.
func (t *Thermal) matrixElements(p PauliString, n0, rows, cols int) {
	s := t.spec
	r := &t.resp
	d := s.dim
	bl := blas64.Implementation()
	if s.real {
		w := r.grow(&r.w, d*rows)
		nyHalf := p.NumY() >> 1
		for b := 0; b < d; b++ {
			src := s.vecs[b*d+n0 : b*d+n0+rows]
			out := w[int(uint64(b)^p.X)*rows : int(uint64(b)^p.X)*rows+rows]
			if (nyHalf+bits.OnesCount64(uint64(b)&p.Z))&1 == 0 {
				copy(out, src)
			} else {
				for i, v := range src {
					out[i] = -v
				}
			}
		}
		m := r.grow(&r.m, rows*cols)
		// <n|P|m> = (P v_n)^T v_m.
		bl.Dgemm(blas.Trans, blas.NoTrans, rows, cols, d, 1, w, rows, s.vecs[n0:], d, 0, m, cols)
		return
	}
	// Complex: with W = P V_blk = Wr + i Wi and V = Vr + i Vi,
	// <n|P|m> = (W^† V)_nm has real part T1 + T2 and imaginary part
	// T1 - T2 - T3, where T1 = Wr^T Vr, T2 = Wi^T Vi and
	// T3 = (Wr + Wi)^T (Vr - Vi): three real products instead of four.
	w := r.grow(&r.w, 2*d*rows)
	wsum := r.grow(&r.w2, d*rows)
	vi := s.vecs[d*d:]
	for b := 0; b < d; b++ {
		srcR := s.vecs[b*d+n0 : b*d+n0+rows]
		srcI := vi[b*d+n0 : b*d+n0+rows]
		e := int(uint64(b) ^ p.X)
		outR := w[e*rows : e*rows+rows]
		outI := w[(d+e)*rows : (d+e)*rows+rows]
		// Multiply by i^k: (x + iy) i = -y + ix.
		switch p.phaseExp(uint64(b)) {
		case 0:
			copy(outR, srcR)
			copy(outI, srcI)
		case 1:
			for i := range outR {
				outR[i], outI[i] = -srcI[i], srcR[i]
			}
		case 2:
			for i := range outR {
				outR[i], outI[i] = -srcR[i], -srcI[i]
			}
		case 3:
			for i := range outR {
				outR[i], outI[i] = srcI[i], -srcR[i]
			}
		}
		sum := wsum[e*rows : e*rows+rows]
		for i := range sum {
			sum[i] = outR[i] + outI[i]
		}
	}
	m := r.grow(&r.m, 2*rows*cols)
	mr, mi := m[:rows*cols], m[rows*cols:]
	bl.Dgemm(blas.Trans, blas.NoTrans, rows, cols, d, 1, w[:d*rows], rows, s.vecs[n0:], d, 0, mr, cols)
	bl.Dgemm(blas.Trans, blas.NoTrans, rows, cols, d, 1, w[d*rows:], rows, vi[n0:], d, 0, mi, cols)
	for i, t1 := range mr {
		t2 := mi[i]
		mr[i], mi[i] = t1+t2, t1-t2
	}
	bl.Dgemm(blas.Trans, blas.NoTrans, rows, cols, d, -1, wsum, rows, r.vdiff[n0:], d, 1, mi, cols)
}
