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
	vdiff []float64 // complex case: Re V - Im V of every sector, from vdOff
	vdOff []int
	m     []float64 // <n|P|m> on the block, real part then imaginary part
	y     []float64 // weighted matrix elements of the selected operators
	cov   []float64 // all operators
	part  []float64 // the selected operators of one sector pair
	mean  []float64
	odd   []bool
	ops   []PauliString // the operators in the symmetry's frame
	reach []uint64      // reach[a*sectors+s]: the sectors ops[a] maps sector s to
	sel   []int         // operators connecting the current pair of sectors
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
// The added operators need not have the symmetry of H: the sum runs over
// the pairs of sectors (s, s') that an operator connects, with only the
// operators connecting them, so the response between an operator that
// stays within the sectors and one that leaves them all is exactly zero.
//
// Cost without a symmetry: O(len(ops) · Dim² · active) for the matrix
// elements (BLAS Dgemm, only pairs n <= m with n among the thermally
// active states; three times that for complex eigenvectors) plus
// O(len(ops)² · Dim · active) for the covariances; with blocks, the same
// sums over connected pairs of sectors.
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
	bb := s.basis()
	ns := bb.numSectors()
	mean := r.grow(&r.mean, n)
	if cap(r.odd) < n {
		r.odd = make([]bool, n)
	}
	odd := r.odd[:n]
	if cap(r.reach) < n*ns {
		r.reach = make([]uint64, n*ns)
	}
	reach := r.reach[:n*ns]
	r.ops = r.ops[:0]
	for a, p := range ops {
		mean[a] = t.Expect(p)
		fp := s.sym.frameOp(p)
		r.ops = append(r.ops, fp)
		odd[a] = s.real && fp.NumY()&1 == 1
		for sec := 0; sec < ns; sec++ {
			reach[a*ns+sec] = bb.reach(fp, sec)
		}
	}
	if !s.real {
		t.fillVDiff()
	}
	cov := r.grow(&r.cov, n*n)
	clear(cov)
	for s1 := 0; s1 < ns; s1++ {
		for s2 := s1; s2 < ns; s2++ {
			// Within a sector the diagonal is centred, which involves
			// every operator with a non-zero mean.
			r.sel = r.sel[:0]
			for a := 0; a < n; a++ {
				if reach[a*ns+s1]>>uint(s2)&1 == 1 || (s1 == s2 && mean[a] != 0) {
					r.sel = append(r.sel, a)
				}
			}
			if len(r.sel) == 0 {
				continue
			}
			if s1 == s2 {
				t.addPairs(s1, s1, 0, true)
				continue
			}
			// Pairs with an active level in s1, then pairs of an active
			// level in s2 with the inactive levels of s1; pairs of two
			// inactive levels weigh less than the cut.
			t.addPairs(s1, s2, 0, false)
			t.addPairs(s2, s1, t.active[s1], false)
		}
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

// fillVDiff stores Re V - Im V of every sector.
func (t *Thermal) fillVDiff() {
	s, r := t.spec, &t.resp
	bb := s.basis()
	r.vdOff = r.vdOff[:0]
	total := 0
	for sec := 0; sec < bb.numSectors(); sec++ {
		r.vdOff = append(r.vdOff, total)
		total += bb.dim(sec) * bb.dim(sec)
	}
	vd := r.grow(&r.vdiff, total)
	for sec := 0; sec < bb.numSectors(); sec++ {
		d := bb.dim(sec)
		v := s.vecs[s.vecOff[sec] : s.vecOff[sec]+2*d*d]
		out := vd[r.vdOff[sec] : r.vdOff[sec]+d*d]
		for i := range out {
			out[i] = v[i] - v[d*d+i]
		}
	}
}

// addPairs adds to the covariance of the selected operators (r.sel) the
// pairs of the active levels n of sector rs with the levels m of sector
// cs from colLo on; with same (rs == cs) only the pairs m >= n, the
// pair (m, n) folded into (n, m). Levels are processed in blocks of rows
// so that the weighted matrix elements fit the budget.
func (t *Thermal) addPairs(rs, cs, colLo int, same bool) {
	r := &t.resp
	bb := t.spec.basis()
	nrows, dc := t.active[rs], bb.dim(cs)
	if nrows == 0 || colLo >= dc {
		return
	}
	parts := 1
	if !t.spec.real {
		parts = 2
	}
	np, n := len(r.sel), len(r.mean)
	c := min(nrows, max(1, responseBudget/(np*(dc-colLo)*parts)))
	bl := blas64.Implementation()
	for n0 := 0; n0 < nrows; n0 += c {
		rows := min(c, nrows-n0)
		m0 := colLo
		if same {
			m0 = n0
		}
		cols := dc - m0
		t.fillPairWeights(rs, n0, rows, cs, m0, cols, same)
		size := rows * cols
		rowLen := parts * size
		y := r.grow(&r.y, np*rowLen)
		for i, a := range r.sel {
			t.matrixElements(r.ops[a], rs, n0, rows, cs, m0, cols)
			ya := y[i*rowLen : (i+1)*rowLen]
			m := r.m
			if same {
				// Centre the diagonal so that no <A><B> is subtracted later.
				for j := 0; j < rows; j++ {
					m[j*cols+j] -= r.mean[a]
				}
			}
			for k, sk := range r.sk[:size] {
				ya[k] = sk * m[k]
			}
			if parts == 2 {
				mi := m[size:]
				for k, sk := range r.sk[:size] {
					ya[size+k] = sk * mi[k]
				}
			}
		}
		part := r.grow(&r.part, np*np)
		bl.Dsyrk(blas.Upper, blas.NoTrans, np, rowLen, 1, y, rowLen, 0, part, np)
		for i, a := range r.sel {
			for j := i; j < np; j++ {
				r.cov[a*n+r.sel[j]] += part[i*np+j]
			}
		}
	}
}

// fillPairWeights sets r.sk[j*cols+i] = sqrt(f k_nm) for level n = n0+j
// of sector rs and level m = m0+i of sector cs, with f = 2 for pairs
// that stand for (n, m) and (m, n) and f = 1 on the diagonal. With same,
// the block is the upper triangle of one sector (m0 = n0): zero below
// the diagonal.
func (t *Thermal) fillPairWeights(rs, n0, rows, cs, m0, cols int, same bool) {
	r := &t.resp
	bb := t.spec.basis()
	sk := r.grow(&r.sk, rows*cols)
	e, w := t.spec.values, t.weights
	rOff, cOff := bb.start[rs]+n0, bb.start[cs]+m0
	for j := 0; j < rows; j++ {
		nn := rOff + j
		row := sk[j*cols : (j+1)*cols]
		if same {
			clear(row[:j])
			row[j] = math.Sqrt(w[nn])
			for i := j + 1; i < cols; i++ {
				x := t.beta * (e[cOff+i] - e[nn])
				row[i] = math.Sqrt(2 * w[nn] * kuboMoriFactor(x))
			}
			continue
		}
		for i := range row {
			lo, gap := nn, e[cOff+i]-e[nn]
			if gap < 0 {
				lo, gap = cOff+i, -gap
			}
			row[i] = math.Sqrt(2 * w[lo] * kuboMoriFactor(t.beta*gap))
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

// matrixElements sets r.m to <n|P|m> for the levels n = n0..n0+rows-1 of
// sector rs and m = m0..m0+cols-1 of sector cs (row-major, rows×cols),
// followed in the complex case by the imaginary parts. P is in the
// symmetry's frame. In the real case an operator with an odd number of Y
// letters is represented by the real matrix of P/i.
func (t *Thermal) matrixElements(p PauliString, rs, n0, rows, cs, m0, cols int) {
	s := t.spec
	r := &t.resp
	bb := s.basis()
	dr, dc := bb.dim(rs), bb.dim(cs)
	vr, vc := s.vecs[s.vecOff[rs]:], s.vecs[s.vecOff[cs]:]
	states := bb.states[bb.start[rs]:bb.start[rs+1]]
	bl := blas64.Implementation()
	if s.real {
		// W = P V_rs[:, n0:n0+rows] on the basis of sector cs; the states
		// P maps to other sectors stay zero.
		w := r.grow(&r.w, dc*rows)
		clear(w)
		nyHalf := p.NumY() >> 1
		for i, b := range states {
			e := uint64(b) ^ p.X
			if int(bb.sector[e]) != cs {
				continue
			}
			src := vr[i*dr+n0 : i*dr+n0+rows]
			le := int(bb.local[e])
			out := w[le*rows : le*rows+rows]
			if (nyHalf+bits.OnesCount64(uint64(b)&p.Z))&1 == 0 {
				copy(out, src)
			} else {
				for k, v := range src {
					out[k] = -v
				}
			}
		}
		m := r.grow(&r.m, rows*cols)
		// <n|P|m> = (P v_n)^T v_m.
		bl.Dgemm(blas.Trans, blas.NoTrans, rows, cols, dc, 1, w, rows, vc[m0:], dc, 0, m, cols)
		return
	}
	// Complex: with W = P V_blk = Wr + i Wi and V = Vr + i Vi,
	// <n|P|m> = (W^† V)_nm has real part T1 + T2 and imaginary part
	// T1 - T2 - T3, where T1 = Wr^T Vr, T2 = Wi^T Vi and
	// T3 = (Wr + Wi)^T (Vr - Vi): three real products instead of four.
	w := r.grow(&r.w, 2*dc*rows)
	wsum := r.grow(&r.w2, dc*rows)
	clear(w)
	clear(wsum)
	vri := vr[dr*dr:]
	for i, b := range states {
		e := uint64(b) ^ p.X
		if int(bb.sector[e]) != cs {
			continue
		}
		srcR := vr[i*dr+n0 : i*dr+n0+rows]
		srcI := vri[i*dr+n0 : i*dr+n0+rows]
		le := int(bb.local[e])
		outR := w[le*rows : le*rows+rows]
		outI := w[(dc+le)*rows : (dc+le)*rows+rows]
		// Multiply by i^k: (x + iy) i = -y + ix.
		switch p.phaseExp(uint64(b)) {
		case 0:
			copy(outR, srcR)
			copy(outI, srcI)
		case 1:
			for k := range outR {
				outR[k], outI[k] = -srcI[k], srcR[k]
			}
		case 2:
			for k := range outR {
				outR[k], outI[k] = -srcR[k], -srcI[k]
			}
		case 3:
			for k := range outR {
				outR[k], outI[k] = srcI[k], -srcR[k]
			}
		}
		sum := wsum[le*rows : le*rows+rows]
		for k := range sum {
			sum[k] = outR[k] + outI[k]
		}
	}
	m := r.grow(&r.m, 2*rows*cols)
	mr, mi := m[:rows*cols], m[rows*cols:]
	bl.Dgemm(blas.Trans, blas.NoTrans, rows, cols, dc, 1, w[:dc*rows], rows, vc[m0:], dc, 0, mr, cols)
	bl.Dgemm(blas.Trans, blas.NoTrans, rows, cols, dc, 1, w[dc*rows:], rows, vc[dc*dc+m0:], dc, 0, mi, cols)
	for i, t1 := range mr {
		t2 := mi[i]
		mr[i], mi[i] = t1+t2, t1-t2
	}
	bl.Dgemm(blas.Trans, blas.NoTrans, rows, cols, dc, -1, wsum, rows, r.vdiff[r.vdOff[cs]+m0:], dc, 1, mi, cols)
}
