package cluster

import (
	"math"
	"slices"
)

// The response of the expansion is a sum over clusters of their
// multiplied Kubo–Mori matrices, nt^2 entries per cluster of nt terms:
// tens of millions of additions into a matrix with a few dozen entries
// per row. A hash map per block made that assembly cost more than the
// Kubo–Mori sums themselves. Instead each worker adds into a dense
// matrix over the terms its current block of anchors has met so far
// (local indices in order of first appearance), and hands the block
// its distinct entries once, sorted; the blocks are then merged row by
// row in block order. Every entry is summed in exactly the order of the
// clusters within its block and of the blocks, as before: results stay
// bit-identical for any number of workers.

// maxLocalTerms bounds the terms of one dense local matrix (8 MB of
// float64); past it the matrix is handed over and restarted.
const maxLocalTerms = 1024

// respEntry is one upper-triangle entry keyed by the term positions,
// (position a) << 32 | (position b), a <= b.
type respEntry struct {
	key uint64
	v   float64
}

// localResponse is a worker's dense accumulator.
type localResponse struct {
	local   []int32 // term position -> local index, -1 when not met
	posOf   []int32 // local index -> term position
	side    int     // the dense matrix is side x side
	dense   []float64
	mark    []bool  // cell holds a contribution
	touched []int32 // cells with a contribution, in order of first touch
	idx     []int32 // the current cluster's local indices
}

func newLocalResponse(numTerms int) *localResponse {
	l := &localResponse{local: make([]int32, numTerms)}
	for i := range l.local {
		l.local[i] = -1
	}
	return l
}

// add adds m times the cluster response resp (nt x nt, row-major, over
// the terms at positions pos) to the local matrix, handing the entries
// to out first when the cluster's terms would not fit.
func (l *localResponse) add(pos []int32, resp []float64, m float64, out *[]respEntry) {
	nt := len(pos)
	fresh := 0
	for _, p := range pos {
		if l.local[p] < 0 {
			fresh++
		}
	}
	if len(l.posOf)+fresh > maxLocalTerms {
		l.flush(out)
	}
	l.idx = l.idx[:0]
	for _, p := range pos {
		if l.local[p] < 0 {
			l.local[p] = int32(len(l.posOf))
			l.posOf = append(l.posOf, p)
		}
		l.idx = append(l.idx, l.local[p])
	}
	if len(l.posOf) > l.side {
		l.grow(max(64, 2*l.side, len(l.posOf)))
	}
	side := l.side
	for a := 0; a < nt; a++ {
		ia, pa := l.idx[a], pos[a]
		row := resp[a*nt : (a+1)*nt]
		for b := a; b < nt; b++ {
			i, j := ia, l.idx[b]
			if pa > pos[b] {
				i, j = j, i
			}
			c := int(i)*side + int(j)
			if !l.mark[c] {
				l.mark[c] = true
				l.touched = append(l.touched, int32(c))
			}
			l.dense[c] += m * row[b]
		}
	}
}

// grow enlarges the dense matrix to side n, keeping its contents.
func (l *localResponse) grow(n int) {
	dense := make([]float64, n*n)
	mark := make([]bool, n*n)
	for t, c := range l.touched {
		i, j := int(c)/l.side, int(c)%l.side
		nc := i*n + j
		dense[nc], mark[nc] = l.dense[c], true
		l.touched[t] = int32(nc)
	}
	l.dense, l.mark, l.side = dense, mark, n
}

// flush appends the accumulated entries to out, sorted by key, and
// clears the matrix.
func (l *localResponse) flush(out *[]respEntry) {
	start := len(*out)
	for _, c := range l.touched {
		i, j := int(c)/l.side, int(c)%l.side
		*out = append(*out, respEntry{uint64(l.posOf[i])<<32 | uint64(l.posOf[j]), l.dense[c]})
		l.dense[c], l.mark[c] = 0, false
	}
	slices.SortFunc((*out)[start:], func(a, b respEntry) int {
		switch {
		case a.key < b.key:
			return -1
		case a.key > b.key:
			return 1
		}
		return 0
	})
	for _, p := range l.posOf {
		l.local[p] = -1
	}
	l.posOf, l.touched = l.posOf[:0], l.touched[:0]
}

// mergeResponse builds the symmetric matrix, indexed by the caller's term
// numbers (sorted maps a position to it), from the blocks' entries,
// summing each entry over the blocks in block order.
func mergeResponse(n int, blocks [][]respEntry, sorted []int32) *SparseSym {
	count := make([]int, n+1)
	for _, es := range blocks {
		for _, e := range es {
			i, j := sorted[e.key>>32], sorted[e.key&math.MaxUint32]
			count[i+1]++
			if i != j {
				count[j+1]++
			}
		}
	}
	for i := 0; i < n; i++ {
		count[i+1] += count[i]
	}
	// Rows with duplicates, in block order.
	cols := make([]int32, count[n])
	vals := make([]float64, count[n])
	fill := slices.Clone(count[:n])
	for _, es := range blocks {
		for _, e := range es {
			i, j := sorted[e.key>>32], sorted[e.key&math.MaxUint32]
			cols[fill[i]], vals[fill[i]] = j, e.v
			fill[i]++
			if i != j {
				cols[fill[j]], vals[fill[j]] = i, e.v
				fill[j]++
			}
		}
	}
	// Sum duplicates in their order and sort each row by column.
	rowPtr := make([]int, n+1)
	var outCol []int32
	var outVal []float64
	slot := make([]int32, n)
	for i := range slot {
		slot[i] = -1
	}
	type colVal struct {
		c int32
		v float64
	}
	var row []colVal
	for i := 0; i < n; i++ {
		row = row[:0]
		for p := count[i]; p < count[i+1]; p++ {
			c := cols[p]
			if k := slot[c]; k >= 0 {
				row[k].v += vals[p]
				continue
			}
			slot[c] = int32(len(row))
			row = append(row, colVal{c, vals[p]})
		}
		for _, cv := range row {
			slot[cv.c] = -1
		}
		slices.SortFunc(row, func(a, b colVal) int { return int(a.c) - int(b.c) })
		for _, cv := range row {
			outCol = append(outCol, cv.c)
			outVal = append(outVal, cv.v)
		}
		rowPtr[i+1] = len(outCol)
	}
	return NewSparseSymCSR(n, rowPtr, outCol, outVal)
}
