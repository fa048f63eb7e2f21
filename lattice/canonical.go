package lattice

import "bytes"

// Canonical labelling of small coloured graphs, the test of whether two
// clusters are the same graph with the same bond and site kinds.
//
// The method is individualisation–refinement (McKay, "Practical graph
// isomorphism", Congressus Numerantium 30, 45 (1981)), without pruning by
// automorphisms: the vertex colours are refined to the coarsest equitable
// ordered partition (colour refinement: a vertex's new colour is the rank
// of its old colour together with the sorted multiset of (edge label,
// neighbour colour) pairs), and while some cell holds several vertices,
// each vertex of the first smallest such cell is in turn given a colour of
// its own and the refinement repeated. Every leaf of this search tree is a
// numbering of the vertices; the canonical form is the lexicographically
// smallest encoding of the graph under a leaf numbering. The tree is built
// from colours alone, so isomorphic graphs have identical trees up to
// relabelling and identical canonical forms; and two graphs with equal
// forms are isomorphic because the form encodes the whole labelled graph.
// The automorphisms of the graph map the tree onto itself and act freely
// on its leaves, so the number of leaves with the smallest encoding is the
// order of the automorphism group.
//
// Lattice clusters are sparse and have few automorphisms; the refinement
// alone usually separates every vertex, and the search visits a handful
// of leaves. A graph with a huge automorphism group (a large complete
// graph) would make the search slow: the leaves number at least the
// group order.

// colouredGraph is a graph on vertices 0..n-1 with a colour per vertex and
// a label per edge end, in compressed adjacency form: the neighbours of v
// are nbr[start[v]:start[v+1]], and label[k] is the label of the edge to
// nbr[k] as seen from v (for a directed edge the two ends see different
// labels). Colours and labels must be below 0xFF.
type colouredGraph struct {
	colour []uint8
	start  []int32
	nbr    []int32
	label  []uint8
}

func (g *colouredGraph) numVertices() int { return len(g.colour) }

// canonizer holds the scratch space of canonical labelling; it is not
// safe for concurrent use.
type canonizer struct {
	g *colouredGraph
	n int

	cols  [][]int32 // colouring at each search depth
	sig   []uint64  // per edge end: label<<32 | neighbour colour, sorted per vertex
	idx   []int32   // vertices sorted by signature
	rank  []int32   // refined colours before they replace the old ones
	size  []int32   // vertices per cell
	order []int32   // vertex at each position of the current leaf

	cur, best []byte
	bestOrder []int32
	autos     int64
}

// canonicalForm returns the canonical encoding of g, the canonical
// position of every vertex (pos[v]) and the order of the automorphism
// group of g. The returned slices are scratch space of the canonizer,
// valid until its next use.
func (c *canonizer) canonicalForm(g *colouredGraph) (form []byte, pos []int32, automorphisms int64) {
	c.g, c.n = g, g.numVertices()
	n := c.n
	c.best = c.best[:0]
	c.autos = 0
	if cap(c.sig) < len(g.nbr) {
		c.sig = make([]uint64, len(g.nbr))
	}
	c.sig = c.sig[:len(g.nbr)]
	c.idx = growInt32(c.idx, n)
	c.rank = growInt32(c.rank, n)
	c.size = growInt32(c.size, n)
	c.order = growInt32(c.order, n)
	c.bestOrder = growInt32(c.bestOrder, n)
	col := c.colouring(0)
	for v := 0; v < n; v++ {
		col[v] = int32(g.colour[v])
	}
	c.search(0)
	// bestOrder[p] is the vertex at position p; invert it in place of
	// order, which the search no longer needs.
	for p, v := range c.bestOrder {
		c.order[v] = int32(p)
	}
	return c.best, c.order, c.autos
}

func growInt32(s []int32, n int) []int32 {
	if cap(s) < n {
		return make([]int32, n)
	}
	return s[:n]
}

// colouring returns the colour buffer of search depth d.
func (c *canonizer) colouring(d int) []int32 {
	for len(c.cols) <= d {
		c.cols = append(c.cols, nil)
	}
	c.cols[d] = growInt32(c.cols[d], c.n)
	return c.cols[d]
}

// search refines the colouring of depth d and explores its children.
func (c *canonizer) search(d int) {
	col := c.cols[d]
	cells := c.refine(col)
	if cells == c.n {
		c.leaf(col)
		return
	}
	target := c.targetCell(col, cells)
	for v := 0; v < c.n; v++ {
		if col[v] != target {
			continue
		}
		next := c.colouring(d + 1)
		col = c.cols[d] // colouring may have moved the outer slice
		for u := 0; u < c.n; u++ {
			next[u] = 2 * col[u]
			if col[u] == target && u != v {
				next[u]++
			}
		}
		c.search(d + 1)
	}
}

// targetCell returns the colour of the first smallest cell with more than
// one vertex; cells is the number of colours, 0..cells-1.
func (c *canonizer) targetCell(col []int32, cells int) int32 {
	size := c.size[:cells]
	clear(size)
	for _, k := range col {
		size[k]++
	}
	best := int32(-1)
	for k, s := range size {
		if s > 1 && (best < 0 || s < size[best]) {
			best = int32(k)
		}
	}
	return best
}

// refine replaces col by the coarsest equitable refinement of the ordered
// partition it describes, with colours numbered 0..cells-1 in the order
// of the partition, and returns the number of cells.
func (c *canonizer) refine(col []int32) int {
	g, n := c.g, c.n
	cells := -1
	for {
		for v := 0; v < n; v++ {
			lo, hi := g.start[v], g.start[v+1]
			s := c.sig[lo:hi]
			for k := lo; k < hi; k++ {
				s[k-lo] = uint64(g.label[k])<<32 | uint64(col[g.nbr[k]])
			}
			insertionSortUint64(s)
		}
		idx := c.idx
		for v := range idx {
			idx[v] = int32(v)
		}
		// Insertion sort by signature: n is small.
		for i := 1; i < n; i++ {
			v := idx[i]
			j := i
			for j > 0 && c.compareVertices(col, idx[j-1], v) > 0 {
				idx[j] = idx[j-1]
				j--
			}
			idx[j] = v
		}
		// New colours are ranks of distinct signatures; write them after
		// all comparisons, which read the old colours.
		rank := c.rank
		r := int32(0)
		for i := 0; i < n; i++ {
			if i > 0 && c.compareVertices(col, idx[i-1], idx[i]) != 0 {
				r++
			}
			rank[idx[i]] = r
		}
		copy(col, rank)
		if int(r)+1 == cells {
			return cells
		}
		cells = int(r) + 1
	}
}

// compareVertices orders vertices by colour, then by their sorted
// neighbour signatures.
func (c *canonizer) compareVertices(col []int32, a, b int32) int {
	if col[a] != col[b] {
		if col[a] < col[b] {
			return -1
		}
		return 1
	}
	g := c.g
	sa := c.sig[g.start[a]:g.start[a+1]]
	sb := c.sig[g.start[b]:g.start[b+1]]
	for k := 0; k < len(sa) && k < len(sb); k++ {
		if sa[k] != sb[k] {
			if sa[k] < sb[k] {
				return -1
			}
			return 1
		}
	}
	return len(sa) - len(sb)
}

func insertionSortUint64(s []uint64) {
	for i := 1; i < len(s); i++ {
		x := s[i]
		j := i
		for j > 0 && s[j-1] > x {
			s[j] = s[j-1]
			j--
		}
		s[j] = x
	}
}

// leaf encodes the graph under the discrete colouring col (vertex v at
// position col[v]) and keeps the smallest encoding. The encoding is the
// number of vertices, the vertex colours by position, and for each
// position the (later position, label) pairs of its edges in increasing
// position, closed by 0xFF; positions and labels are below 0xFF, so the
// encoding determines the labelled graph.
func (c *canonizer) leaf(col []int32) {
	g, n := c.g, c.n
	for v := 0; v < n; v++ {
		c.order[col[v]] = int32(v)
	}
	buf := append(c.cur[:0], byte(n))
	for p := 0; p < n; p++ {
		buf = append(buf, g.colour[c.order[p]])
	}
	for p := 0; p < n; p++ {
		v := c.order[p]
		first := len(buf)
		for k := g.start[v]; k < g.start[v+1]; k++ {
			if q := col[g.nbr[k]]; int(q) > p {
				buf = append(buf, byte(q), g.label[k])
			}
		}
		sortPairs(buf[first:])
		buf = append(buf, 0xFF)
	}
	c.cur = buf
	switch cmp := bytes.Compare(buf, c.best); {
	case len(c.best) == 0 || cmp < 0:
		c.best = append(c.best[:0], buf...)
		copy(c.bestOrder, c.order)
		c.autos = 1
	case cmp == 0:
		c.autos++
	}
}

// sortPairs sorts the byte pairs of b by their first byte (distinct).
func sortPairs(b []byte) {
	for i := 2; i < len(b); i += 2 {
		p0, p1 := b[i], b[i+1]
		j := i
		for j > 0 && b[j-2] > p0 {
			b[j], b[j+1] = b[j-2], b[j-1]
			j -= 2
		}
		b[j], b[j+1] = p0, p1
	}
}
