package cluster

import (
	"math"
	"math/bits"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
)

// The general path: a model that does not conserve S^z is diagonalised in
// the full Hilbert space at every field, with eigenvectors, because the
// magnetisation's response then needs the matrix elements of S^z between
// eigenstates (Kubo–Mori sums):
//
//	chi      = beta (sum_nm k_nm |S_nm|^2 - M^2),
//	dM/dv_p  = -beta (sum_nm k_nm Re(S_nm (H_p)_mn) - M <H_p>),
//	k_nm     = (w_n - w_m) / (beta (E_m - E_n))   (w_n when E_n = E_m),
//
// the form of Thermal.Response. The derivative of chi would need a third
// cumulant of operators that do not commute with H; it is not computed.

// generalWork is one worker's scratch space for the general path.
type generalWork struct {
	ham        Hamiltonian
	spec       Spectrum
	sr, si, sq []float64   // S^z in the eigenbasis and |S_nm|^2
	ur, ui     []float64   // H_p V
	hr, hi     []float64   // H_p in the eigenbasis
	cross      [][]float64 // Re(S_nm conj((H_p)_nm)) per coupling
	diag       [][]float64 // <n|H_p|n> per coupling
	mDiag      []float64
	w          []float64
}

// generalThermo fills the slot for a cluster of n sites from full
// diagonalisations of H0 - h S^z, one per field.
func (w *generalWork) generalThermo(n int, h0 []weightedOp, ops [][]weightedOp, temps, fields []float64, g gridShape, withD bool, slot []float64) error {
	for f, h := range fields {
		w.ham.NumQubits = n
		w.ham.Ops, w.ham.Coeffs = w.ham.Ops[:0], w.ham.Coeffs[:0]
		for _, o := range h0 {
			w.ham.Ops = append(w.ham.Ops, o.op)
			w.ham.Coeffs = append(w.ham.Coeffs, o.c)
		}
		if h != 0 {
			for q := 0; q < n; q++ {
				w.ham.Ops = append(w.ham.Ops, PauliString{Z: 1 << uint(q)})
				w.ham.Coeffs = append(w.ham.Coeffs, -h/2)
			}
		}
		// One dense block: the Kubo–Mori sums below need every pair of
		// levels, which a parity would split across sectors.
		if err := w.spec.FactorizeWith(&w.ham, NoSymmetry); err != nil {
			return err
		}
		w.magnetizationMatrix(n)
		if withD {
			w.couplingMatrices(ops)
		}
		for i, temp := range temps {
			w.gridPoint(n, 1/temp, g, f, i, withD, slot)
		}
	}
	return nil
}

// magnetizationMatrix sets S_nm = <n|S^z|m> (real and imaginary parts),
// |S_nm|^2 and the diagonal <n|S^z|n>.
func (w *generalWork) magnetizationMatrix(n int) {
	s := &w.spec
	d := s.dim
	w.sr, w.si, w.sq = grow(w.sr, d*d), grow(w.si, d*d), grow(w.sq, d*d)
	sz := make([]float64, d)
	for b := range sz {
		sz[b] = float64(n)/2 - float64(bits.OnesCount64(uint64(b)))
	}
	// U = diag(s) V, then S = V^† U.
	w.ur, w.ui = grow(w.ur, d*d), grow(w.ui, d*d)
	vr, vi := s.vecs[:d*d], []float64(nil)
	if !s.real {
		vi = s.vecs[d*d : 2*d*d]
	}
	for b := 0; b < d; b++ {
		for k := 0; k < d; k++ {
			w.ur[b*d+k] = sz[b] * vr[b*d+k]
		}
		if vi != nil {
			for k := 0; k < d; k++ {
				w.ui[b*d+k] = sz[b] * vi[b*d+k]
			}
		}
	}
	adjointProduct(d, vr, vi, w.ur, w.ui, w.sr, w.si)
	w.mDiag = grow(w.mDiag, d)
	for a := 0; a < d; a++ {
		w.mDiag[a] = w.sr[a*d+a]
	}
	for k := range w.sq {
		w.sq[k] = w.sr[k]*w.sr[k] + w.si[k]*w.si[k]
	}
}

// couplingMatrices sets, for every coupling, the diagonal <n|H_p|n> and
// the Kubo–Mori kernel Re(S_nm conj((H_p)_nm)).
func (w *generalWork) couplingMatrices(ops [][]weightedOp) {
	s := &w.spec
	d := s.dim
	vr, vi := s.vecs[:d*d], []float64(nil)
	if !s.real {
		vi = s.vecs[d*d : 2*d*d]
	}
	w.hr, w.hi = grow(w.hr, d*d), grow(w.hi, d*d)
	for len(w.cross) < len(ops) {
		w.cross = append(w.cross, nil)
		w.diag = append(w.diag, nil)
	}
	for p, list := range ops {
		// U = H_p V: P|b> = i^k |b^X>, so row b^X of U gains i^k c row b of V.
		clear(w.ur)
		clear(w.ui)
		for _, o := range list {
			for b := 0; b < d; b++ {
				t := b ^ int(o.op.X)
				rowR, rowI := w.ur[t*d:t*d+d], w.ui[t*d:t*d+d]
				src := vr[b*d : b*d+d]
				var srcI []float64
				if vi != nil {
					srcI = vi[b*d : b*d+d]
				}
				phaseAxpy(o.op.phaseExp(uint64(b)), o.c, src, srcI, rowR, rowI)
			}
		}
		adjointProduct(d, vr, vi, w.ur, w.ui, w.hr, w.hi)
		w.diag[p] = grow(w.diag[p], d)
		w.cross[p] = grow(w.cross[p], d*d)
		for a := 0; a < d; a++ {
			w.diag[p][a] = w.hr[a*d+a]
		}
		for k := range w.cross[p] {
			w.cross[p][k] = w.sr[k]*w.hr[k] + w.si[k]*w.hi[k]
		}
	}
}

// phaseAxpy adds i^k c (xr + i xi) to (yr + i yi); xi may be nil (zero).
func phaseAxpy(k int, c float64, xr, xi, yr, yi []float64) {
	z := iPow(k)
	re, im := c*real(z), c*imag(z)
	for j := range xr {
		yr[j] += re * xr[j]
		yi[j] += im * xr[j]
	}
	if xi == nil {
		return
	}
	for j := range xi {
		yr[j] -= im * xi[j]
		yi[j] += re * xi[j]
	}
}

// adjointProduct sets (cr + i ci) = (vr + i vi)^† (ur + i ui) for d×d
// row-major matrices; vi nil means a real V.
func adjointProduct(d int, vr, vi, ur, ui, cr, ci []float64) {
	bl := blas64.Implementation()
	bl.Dgemm(blas.Trans, blas.NoTrans, d, d, d, 1, vr, d, ur, d, 0, cr, d)
	bl.Dgemm(blas.Trans, blas.NoTrans, d, d, d, 1, vr, d, ui, d, 0, ci, d)
	if vi == nil {
		return
	}
	bl.Dgemm(blas.Trans, blas.NoTrans, d, d, d, 1, vi, d, ui, d, 1, cr, d)
	bl.Dgemm(blas.Trans, blas.NoTrans, d, d, d, -1, vi, d, ur, d, 1, ci, d)
}

// gridPoint fills one (field, temperature) point of the slot from the
// spectrum and matrices of the current field.
func (w *generalWork) gridPoint(n int, beta float64, g gridShape, f, i int, withD bool, slot []float64) {
	e := w.spec.values
	d := len(e)
	w.w = grow(w.w, d)
	var z float64
	for k := range e {
		w.w[k] = math.Exp(-beta * (e[k] - e[0]))
		z += w.w[k]
	}
	var eMean, mMean float64
	for k := range e {
		w.w[k] /= z
		eMean += w.w[k] * e[k]
		mMean += w.w[k] * w.mDiag[k]
	}
	var eVar float64
	for k := range e {
		de := e[k] - eMean
		eVar += w.w[k] * de * de
	}
	slot[g.at(0, classLogZ, f, i)] = -beta*e[0] + math.Log(z) - float64(n)*math.Ln2
	slot[g.at(0, classEnergy, f, i)] = eMean
	slot[g.at(0, classHeat, f, i)] = beta * beta * eVar
	slot[g.at(0, classMagnetization, f, i)] = mMean
	slot[g.at(0, classSusceptibility, f, i)] = beta * (w.kuboMoriSum(beta, w.sq) - mMean*mMean)
	if !withD {
		return
	}
	for p := 0; p < g.derivs; p++ {
		dMean := energyDerivatives(beta, w.w, e, w.diag[p], eMean, g, f, i, 1+p, slot)
		slot[g.at(1+p, classMagnetization, f, i)] = -beta * (w.kuboMoriSum(beta, w.cross[p]) - mMean*dMean)
		slot[g.at(1+p, classSusceptibility, f, i)] = 0
	}
}

// kuboMoriSum returns sum_nm k_nm x_nm for a symmetric d×d kernel x, with
// the weights of the current grid point. Levels are ascending, so the
// weight of the lower level of a pair is w_n for n < m; rows whose weight
// is negligible end the sum.
func (w *generalWork) kuboMoriSum(beta float64, x []float64) float64 {
	e := w.spec.values
	d := len(e)
	var sum float64
	for a := 0; a < d; a++ {
		wa := w.w[a]
		if wa < weightCut/float64(d) {
			break
		}
		row := x[a*d : a*d+d]
		s := 0.0
		for b := a + 1; b < d; b++ {
			s += kuboMoriFactor(beta*(e[b]-e[a])) * row[b]
		}
		sum += wa * (row[a] + 2*s)
	}
	return sum
}
