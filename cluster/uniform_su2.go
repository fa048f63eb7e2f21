package cluster

import (
	"errors"
	"fmt"
	"math"
	"math/bits"
	"slices"
	"strings"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"

	"warmfit/lattice"
)

// Block diagonalisation of one cluster of an isotropic (SU(2)-invariant)
// exchange model, every coupling a sum of w (XX + YY + ZZ) over bonds.
// Since sigma_i.sigma_j = 2 P_ij - 1 with P_ij the swap of the two spins,
// the cluster Hamiltonian is a combination of transpositions, an element
// of the group algebra of the symmetric group S_n. By Schur–Weyl duality
// the n spins decompose as sum_S V_S (x) Y_S, with V_S the spin-S
// multiplet and Y_S the irreducible representation of S_n of the
// two-row shape (n/2 + S, n/2 - S); the Hamiltonian acts on Y_S alone.
// So each total spin S is one block, of the dimension of Y_S,
// C(n, n/2-S) - C(n, n/2-S-1), and each of its eigenvalues is a multiplet
// of 2S+1 levels with S^z = -S..S. For n = 16 the largest block has 3640
// states where the largest S^z block (with spin-flip parity) has 11440.
//
// Y_S is written in Young's orthogonal form (Young 1931; e.g. James and
// Kerber, The Representation Theory of the Symmetric Group, 1981,
// section 3.4; from memory): its basis is the standard tableaux T of the
// shape, and the adjacent transposition s_k = (k k+1) acts by
//
//	s_k T = (1/rho) T + sqrt(1 - 1/rho^2) T',
//
// rho the axial distance content(k+1) - content(k) (content = column -
// row) and T' the tableau with k and k+1 exchanged (rho = +1: same row,
// s_k T = T; rho = -1: same column, s_k T = -T). A transposition (i j) of
// sites further apart is s_{j-1}...s_{i+1} s_i s_{i+1}...s_{j-1}; the
// sites are first numbered breadth-first so that bonds join close labels.
// The spectra are checked against the S^z blocks in the tests.

// exchangeBond is w (XX + YY + ZZ) = w (2 P_ij - 1) on sites i < j of the
// relabelled cluster.
type exchangeBond struct {
	i, j int
	w    float64
}

// su2Exchange returns the model's couplings as isotropic exchange on the
// bonds of a class, sites relabelled breadth-first, or ok false when some
// coupling is not of that form.
func su2Exchange(cl *lattice.ClusterClass, ops [][]weightedOp) (bonds [][]exchangeBond, ok bool) {
	label := breadthFirstLabels(cl)
	bonds = make([][]exchangeBond, len(ops))
	for p, list := range ops {
		type pair struct{ i, j int }
		at := map[pair]int{}
		var ws [][3]float64
		var pairs []pair
		for _, o := range list {
			if o.op.Weight() != 2 {
				return nil, false
			}
			s := o.op.Support()
			a := bits.TrailingZeros64(s)
			b := 63 - bits.LeadingZeros64(s)
			letters := o.op.Letters([]int{a, b})
			if letters[0] != letters[1] {
				return nil, false
			}
			k := strings.IndexByte("XYZ", letters[0])
			i, j := label[a], label[b]
			if i > j {
				i, j = j, i
			}
			key := pair{i, j}
			n, seen := at[key]
			if !seen {
				n = len(ws)
				at[key] = n
				ws = append(ws, [3]float64{})
				pairs = append(pairs, key)
			}
			ws[n][k] += o.c
		}
		for n, w := range ws {
			if w[0] != w[1] || w[1] != w[2] {
				return nil, false
			}
			bonds[p] = append(bonds[p], exchangeBond{pairs[n].i, pairs[n].j, w[0]})
		}
	}
	return bonds, true
}

// breadthFirstLabels numbers the sites of a class breadth-first from a
// site of least degree, neighbours in ascending canonical order: a
// deterministic labelling under which a path is numbered along itself.
func breadthFirstLabels(cl *lattice.ClusterClass) []int {
	n := cl.Size
	adj := make([][]int, n)
	for _, b := range cl.Bonds {
		adj[b.I] = append(adj[b.I], b.J)
		adj[b.J] = append(adj[b.J], b.I)
	}
	start := 0
	for v := range adj {
		slices.Sort(adj[v])
		if len(adj[v]) < len(adj[start]) {
			start = v
		}
	}
	label := make([]int, n)
	for v := range label {
		label[v] = -1
	}
	queue := []int{start}
	label[start] = 0
	next := 1
	for len(queue) > 0 {
		v := queue[0]
		queue = queue[1:]
		for _, u := range adj[v] {
			if label[u] < 0 {
				label[u] = next
				next++
				queue = append(queue, u)
			}
		}
	}
	for v := range label { // a disconnected class cannot occur; be total anyway
		if label[v] < 0 {
			label[v] = next
			next++
		}
	}
	return label
}

// su2Block is the irreducible representation of total spin S = n/2 - low
// on n sites: low is the length of the tableaux' second row.
type su2Block struct{ n, low int }

func (b su2Block) spin() float64 { return float64(b.n)/2 - float64(b.low) }

// su2Dim is the dimension of the block: the number of standard tableaux,
// C(n, low) - C(n, low-1).
func su2Dim(b su2Block) int {
	d := binomial(b.n, b.low)
	if b.low > 0 {
		d -= binomial(b.n, b.low-1)
	}
	return d
}

// su2Blocks lists the blocks of a cluster of n sites, S = n/2 down to 0 or
// 1/2.
func su2Blocks(n int) []su2Block {
	var out []su2Block
	for low := 0; 2*low <= n; low++ {
		out = append(out, su2Block{n, low})
	}
	return out
}

// su2Basis fills w.states with the standard tableaux of the block as
// bit masks of the second row (bit k set: k is in the second row), in
// ascending order, and w.idx with their positions.
func (w *sectorWork) su2Basis(b su2Block) int {
	return w.fillBasis(b.n, b.low, func(s uint64) bool { return ballot(s, b.n) })
}

// ballot reports that every prefix of the n entries has no more in the
// second row than in the first: the mask is a standard tableau.
func ballot(s uint64, n int) bool {
	low := 0
	for k := 0; k < n; k++ {
		low += int(s >> uint(k) & 1)
		if 2*low > k+1 {
			return false
		}
	}
	return true
}

// adjacentSwap applies s_k = (k k+1) to the rows of the d×d matrix m
// (row-major): row T becomes (1/rho) row T + sqrt(1-1/rho^2) row T'.
func (w *sectorWork) adjacentSwap(k, d int, m, tmp []float64) {
	for t, s := range w.states {
		lowK, lowK1 := s>>uint(k)&1, s>>uint(k+1)&1
		switch {
		case lowK == lowK1: // same row
			continue
		case lowK == 0:
			// k in the first row at column a, k+1 in the second at b.
			b := bits.OnesCount64(s & (uint64(1)<<uint(k) - 1))
			a := k - b
			if a == b { // same column
				row := m[t*d : t*d+d]
				for i := range row {
					row[i] = -row[i]
				}
				continue
			}
			rho := float64(b - 1 - a)
			u := int(w.idx[s^(3<<uint(k))])
			rt, ru := m[t*d:t*d+d], m[u*d:u*d+d]
			c, sn := 1/rho, math.Sqrt(1-1/(rho*rho))
			// The pair (t, u) is handled once, from t; u has -rho.
			copy(tmp, rt)
			for i := range rt {
				rt[i] = c*rt[i] + sn*ru[i]
				ru[i] = sn*tmp[i] - c*ru[i]
			}
		}
	}
}

// su2Matrix adds sum_b w_b scale (2 P_b - 1) over the bonds into the d×d
// matrix h of the current block, with m and tmp as scratch.
func (w *sectorWork) su2Matrix(b su2Block, d int, bonds []exchangeBond, scale float64, h []float64) {
	for _, e := range bonds {
		x := e.w * scale
		if x == 0 {
			continue
		}
		for t := 0; t < d; t++ {
			h[t*d+t] -= x
		}
		if e.j == e.i+1 {
			w.addAdjacent(e.i, d, 2*x, h)
			continue
		}
		// P_ij = A s_i A^{-1}, A = s_{j-1}...s_{i+1}: the factors are
		// applied to the identity from the right end of the product.
		w.span = grow(w.span, d*d)
		span := w.span[:d*d]
		clear(span)
		for t := 0; t < d; t++ {
			span[t*d+t] = 1
		}
		w.tmp = grow(w.tmp, d)
		for k := e.j - 1; k > e.i; k-- {
			w.adjacentSwap(k, d, span, w.tmp)
		}
		w.adjacentSwap(e.i, d, span, w.tmp)
		for k := e.i + 1; k < e.j; k++ {
			w.adjacentSwap(k, d, span, w.tmp)
		}
		for t := range span {
			h[t] += 2 * x * span[t]
		}
	}
}

// addAdjacent adds x s_k to h.
func (w *sectorWork) addAdjacent(k, d int, x float64, h []float64) {
	for t, s := range w.states {
		lowK, lowK1 := s>>uint(k)&1, s>>uint(k+1)&1
		if lowK == lowK1 {
			h[t*d+t] += x
			continue
		}
		var bLow, a int
		if lowK == 0 {
			bLow = bits.OnesCount64(s & (uint64(1)<<uint(k) - 1))
			a = k - bLow
		} else {
			// k in the second row: the partner has k in the first row.
			p := s ^ (3 << uint(k))
			bLow = bits.OnesCount64(p & (uint64(1)<<uint(k) - 1))
			a = k - bLow
		}
		if a == bLow {
			h[t*d+t] -= x
			continue
		}
		rho := float64(bLow - 1 - a) // of the tableau with k in the first row
		if lowK != 0 {
			rho = -rho
		}
		u := int(w.idx[s^(3<<uint(k))])
		h[t*d+t] += x / rho
		h[t*d+u] += x * math.Sqrt(1-1/(rho*rho))
	}
}

// appendMultiplets lists each eigenvalue of block b 2S+1 times.
func appendMultiplets(ls *levelSet, b su2Block, vals []float64, dks [][]float64) {
	spin := b.spin()
	for mult := 0; float64(mult) <= 2*spin; mult++ {
		m := spin - float64(mult)
		for _, e := range vals {
			ls.e0 = append(ls.e0, e)
			ls.m = append(ls.m, m)
		}
		for p, dk := range dks {
			ls.d[p] = append(ls.d[p], dk...)
		}
	}
}

// su2Block returns the eigenvalues of block b (ascending) and, with
// withD, the elements <k|H_p|k> of its eigenvectors. The slices are the
// worker's: copy before the next call.
func (w *sectorWork) su2Block(b su2Block, bonds [][]exchangeBond, values []float64, withD bool) ([]float64, [][]float64, error) {
	d := w.su2Basis(b)
	scaled := withD && len(bonds) == 1 && values[0] != 0
	vectors := withD && !scaled
	w.values = grow(w.values, d)
	w.vecs = grow(w.vecs, d*d)
	clear(w.vecs[:d*d])
	for p, list := range bonds {
		w.su2Matrix(b, d, list, values[p], w.vecs)
	}
	var err error
	if vectors {
		err = w.spec.solveReal(d, w.vecs, w.values)
	} else {
		err = w.eig.realValues(d, w.vecs, w.values)
	}
	if err != nil {
		return nil, nil, fmt.Errorf("block of %d states (S = %g): %v", d, b.spin(), err)
	}
	for _, v := range w.values[:d] {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, nil, errors.New("eigenvalue is not finite")
		}
	}
	vals := w.values[:d]
	if !withD {
		return vals, nil, nil
	}
	for len(w.dks) < len(bonds) {
		w.dks = append(w.dks, nil)
	}
	dks := w.dks[:len(bonds)]
	for p := range bonds {
		dks[p] = grow(dks[p], d)
		dk := dks[p][:d]
		if scaled {
			for k, e := range vals {
				dk[k] = e / values[p]
			}
			continue
		}
		// <k|H_p|k> = sum_i V_ik (H_p V)_ik.
		w.hp = grow(w.hp, d*d)
		w.hv = grow(w.hv, d*d)
		clear(w.hp[:d*d])
		w.su2Matrix(b, d, bonds[p], 1, w.hp)
		blas64.Gemm(blas.NoTrans, blas.NoTrans, 1,
			blas64.General{Rows: d, Cols: d, Stride: d, Data: w.hp},
			blas64.General{Rows: d, Cols: d, Stride: d, Data: w.vecs},
			0, blas64.General{Rows: d, Cols: d, Stride: d, Data: w.hv})
		clear(dk)
		for i := 0; i < d; i++ {
			vi, hi := w.vecs[i*d:i*d+d], w.hv[i*d:i*d+d]
			for k := range dk {
				dk[k] += vi[k] * hi[k]
			}
		}
		dks[p] = dk
	}
	return vals, dks, nil
}
