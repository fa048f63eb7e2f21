package stationary

import (
	"slices"
)

// assembled is the weighted system X (see weighted.mulVec) stored as a
// sparse symmetric matrix in compressed rows: a product then costs the
// number of parameter pairs that share a row (about 200 per parameter on
// square lattices) instead of the sum over rows of their squared entry
// counts (16² per row), which is what makes Lanczos affordable at 10^4
// parameters. The pattern depends only on the system; values are
// refilled at every reweighting (fill).
type assembled struct {
	n      int
	start  []int   // per parameter: offset of its row in col and val
	col    []int32 // sorted within each row
	val    []float64
	diag   []float64
	source *weighted
	// penalty is the source's penalty weight at the last fill.
	penalty float64
}

// newAssembled builds the sparsity pattern of ws's X.
func newAssembled(ws *weighted) *assembled {
	n := ws.np
	nbrs := make([][]int32, n)
	for a := range ws.rows() {
		lo, hi, _ := ws.block(a)
		for e := lo; e < hi; e++ {
			p := ws.param[e]
			for f := lo; f < hi; f++ {
				nbrs[p] = append(nbrs[p], ws.param[f])
			}
		}
		// Keep the lists short while building: sort and compact every so often.
		if a%64 == 63 {
			for e := lo; e < hi; e++ {
				p := ws.param[e]
				if len(nbrs[p]) > 1024 {
					slices.Sort(nbrs[p])
					nbrs[p] = slices.Compact(nbrs[p])
				}
			}
		}
	}
	x := &assembled{n: n, start: make([]int, n+1), diag: make([]float64, n), source: ws}
	for p := range nbrs {
		slices.Sort(nbrs[p])
		nbrs[p] = slices.Compact(nbrs[p])
		x.start[p+1] = x.start[p] + len(nbrs[p])
	}
	x.col = make([]int32, 0, x.start[n])
	for p := range nbrs {
		x.col = append(x.col, nbrs[p]...)
		nbrs[p] = nil
	}
	x.val = make([]float64, len(x.col))
	return x
}

// at returns the index of entry (p, q) in val (the pattern contains it).
func (x *assembled) at(p, q int32) int {
	cols := x.col[x.start[p]:x.start[p+1]]
	i, _ := slices.BinarySearch(cols, q)
	return x.start[p] + i
}

// fill sets the values from ws's current weights, residuals and
// correction, and makes ws the source (ws must have the pattern's
// structure: the one it was built from, or a copy with other values such
// as noiseOnly). The penalty directions are applied apart, in mulVec.
func (x *assembled) fill(ws *weighted) {
	x.source = ws
	clear(x.val)
	for a := range ws.rows() {
		lo, hi, c := ws.block(a)
		k := hi - lo
		bias := ws.biasOf(a)
		wa := ws.w[a]
		for i := 0; i < k; i++ {
			p := ws.param[lo+i]
			row := x.col[x.start[p]:x.start[p+1]]
			vi := wa * ws.val[lo+i]
			for j := 0; j < k; j++ {
				q := ws.param[lo+j]
				idx, _ := slices.BinarySearch(row, q)
				x.val[x.start[p]+idx] += vi*ws.val[lo+j] - bias*c[i*k+j]
			}
		}
	}
	for p := range x.n {
		x.diag[p] = x.val[x.at(int32(p), int32(p))]
	}
	if len(ws.penalty) > 0 {
		x.penalty = ws.penaltyWeight()
	}
}

// mulVec sets dst = X v, the penalty directions included; dst and v must
// not share memory.
func (x *assembled) mulVec(dst, v []float64) {
	for p := range x.n {
		var s float64
		for i := x.start[p]; i < x.start[p+1]; i++ {
			s += x.val[i] * v[x.col[i]]
		}
		dst[p] = s
	}
	if ws := x.source; len(ws.penalty) > 0 {
		ws.addPenalty(dst, v, x.penalty)
	}
}
